import type { APIRoute } from "astro";
import { planAssignments } from "@/domain/assignments";
import { MAX_FUTURE_MS } from "@/domain/readings";
import { pourCreateBody, pourListQuery } from "@/lib/schemas/pours";
import { writeAudit } from "@/lib/server/db/queries/audit";
import {
  assignmentsOf,
  findPourByCode,
  getMix,
  insertPour,
  joinCylinderIds,
  knownSensors,
  listPours,
} from "@/lib/server/db/queries/pours";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { fieldErrors, parseBody } from "@/lib/server/http/parse";
import { badRequest, conflict, json } from "@/lib/server/http/responses";
import { presentPour, presentPourListItem } from "@/lib/server/pours/present";
import { assignmentProblem } from "@/lib/server/pours/respond";
import { rebuildPour } from "@/lib/server/strength/maturity";

/** Pours, newest cast first: filter by `status` (or "open"), `mix_id`, and `q` (code, bed, mix, product or sensor). */
export const GET: APIRoute = endpoint(async ({ locals, url }) => {
  requireAction(locals, "plant.read");
  const query = pourListQuery.safeParse(Object.fromEntries(url.searchParams));
  if (!query.success) return badRequest("Some filters are not valid.", fieldErrors(query.error));
  const { status, mix_id, q, limit } = query.data;
  const now = Date.now();
  const items = listPours({
    ...(status && { status }),
    ...(mix_id && { mixId: mix_id }),
    ...(q && { q }),
    limit,
  });
  return json({ pours: items.map((i) => presentPourListItem(i, now)) });
});

/**
 * An operator records a pour (contract: POST /api/v1/pours): its mix, cast time (now or in the
 * past, at most 10 minutes ahead), products, fresh tests and the sensors that watch it. A pour
 * recorded after the fact has its maturity rebuilt from the stored readings at once.
 */
export const POST: APIRoute = endpoint(async (ctx) => {
  const who = requireAction(ctx.locals, "floor.operate");
  const parsed = await parseBody(ctx.request, pourCreateBody);
  if (!parsed.ok) return parsed.response;
  const b = parsed.data;
  const now = Date.now();

  if (b.cast_at > now + MAX_FUTURE_MS)
    return badRequest("The cast time is in the future.", [
      { field: "cast_at", error: "At most 10 minutes from now" },
    ]);
  const fromMs = b.sensors_from ?? b.cast_at;
  if (fromMs > now + MAX_FUTURE_MS)
    return badRequest("The sensors' start is in the future.", [
      { field: "sensors_from", error: "At most 10 minutes from now" },
    ]);
  const mix = getMix(b.mix_id);
  if (!mix) return badRequest("No such mix.", [{ field: "mix_id", error: "No mix has this id" }]);
  if (!mix.active)
    return badRequest(`${mix.name} is no longer in use.`, [
      { field: "mix_id", error: "Pick a mix in use" },
    ]);
  const taken = findPourByCode(b.code);
  if (taken) return conflict(`A pour with the code ${taken.code} already exists.`);

  const ids = [...new Set(b.sensors)];
  const plan = planAssignments({
    pourId: -1,
    requested: ids.map((sensorId) => ({ sensorId, fromMs })),
    known: knownSensors(ids),
    existing: assignmentsOf(ids),
    move: b.move ?? false,
  });
  if (!plan.ok) return assignmentProblem(plan.refusal, (s) => `sensors.${b.sensors.indexOf(s)}`);

  const userId = who.kind === "user" ? who.user.id : null;
  const pour = insertPour(
    {
      code: b.code,
      mixId: mix.id,
      castAtMs: b.cast_at,
      bed: b.bed || null,
      notes: b.notes || null,
      dischargeTempC: b.discharge_temp_c ?? null,
      slumpMm: b.slump_mm ?? null,
      spreadMm: b.spread_mm ?? null,
      airPct: b.air_pct ?? null,
      unitWeightKgM3: b.unit_weight_kg_m3 ?? null,
      cylinderIds: joinCylinderIds(b.cylinder_ids ?? null),
      products: (b.products ?? []).map((p) => ({
        product: p.product,
        pieceCount: p.piece_count,
        marks: p.marks || null,
      })),
      assignments: ids.map((sensorId) => ({ sensorId, fromMs, location: null })),
      moves: plan.moves.map((m) => ({ assignmentId: m.assignmentId, endMs: m.endMs })),
      createdBy: userId,
    },
    now,
  );

  // The insert has committed: count the stored readings since cast (a pour recorded late).
  rebuildPour(pour.id, now);
  for (const otherId of new Set(plan.moves.map((m) => m.pourId))) rebuildPour(otherId, now);

  const actor = auditActor(ctx);
  for (const m of plan.moves) {
    writeAudit(
      actor,
      {
        action: "pour.sensors_changed",
        entityType: "pour",
        entityId: m.pourId,
        pourId: m.pourId,
        detail: {
          ended: [{ sensor: m.sensorId, at: new Date(m.endMs).toISOString() }],
          moved_to: pour.code,
        },
      },
      now,
    );
  }
  writeAudit(
    actor,
    {
      action: "pour.created",
      entityType: "pour",
      entityId: pour.id,
      pourId: pour.id,
      detail: {
        code: pour.code,
        mix: mix.name,
        cast_at: new Date(pour.castAt).toISOString(),
        sensors: ids,
        sensors_from: new Date(fromMs).toISOString(),
        moved_from: plan.moves.map((m) => ({ sensor: m.sensorId, pour: m.pourCode })),
        products: b.products ?? [],
        discharge_temp_c: pour.dischargeTempC,
      },
    },
    now,
  );
  return json(presentPour(pour.id, now), 201, { location: `/api/v1/pours/${pour.id}` });
});
