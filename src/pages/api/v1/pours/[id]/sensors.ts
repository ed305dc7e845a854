import type { APIRoute } from "astro";
import { planAssignments, planEnds } from "@/domain/assignments";
import { isOpenStatus, statusLabels, type PourStatus } from "@/domain/pourLifecycle";
import { MAX_FUTURE_MS } from "@/domain/readings";
import { pourSensorsBody } from "@/lib/schemas/pours";
import { writeAudit } from "@/lib/server/db/queries/audit";
import {
  assignmentsOf,
  changeAssignments,
  getPour,
  knownSensors,
  listAssignments,
} from "@/lib/server/db/queries/pours";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseBody, parseId } from "@/lib/server/http/parse";
import { badRequest, conflict, json, notFound } from "@/lib/server/http/responses";
import { presentAssignment } from "@/lib/server/pours/present";
import { assignmentProblem } from "@/lib/server/pours/respond";
import { rebuildPour } from "@/lib/server/strength/maturity";

const iso = (ms: number) => new Date(ms).toISOString();

/** The pour's sensor assignments with their time windows, those still on first. */
export const GET: APIRoute = endpoint(async ({ locals, params }) => {
  requireAction(locals, "plant.read");
  const id = parseId(params.id);
  const pour = id === null ? undefined : getPour(id);
  if (!pour) return notFound("pour");
  return json({ pour_id: pour.id, assignments: listAssignments(pour.id).map(presentAssignment) });
});

/**
 * Edits which sensors watch the pour: `end` takes sensors off (at a time, default now), then
 * `add` puts sensors on (from a time, default now, with where on the pour). A sensor on another
 * open pour is refused (409) unless `move` is true. The pour's maturity is rebuilt after.
 */
export const POST: APIRoute = endpoint(async (ctx) => {
  const who = requireAction(ctx.locals, "floor.operate");
  const id = parseId(ctx.params.id);
  const pour = id === null ? undefined : getPour(id);
  if (!pour) return notFound("pour");
  const parsed = await parseBody(ctx.request, pourSensorsBody);
  if (!parsed.ok) return parsed.response;
  const b = parsed.data;
  if (b.add.length === 0 && b.end.length === 0)
    return badRequest("Nothing to change: list sensors to add or to end.");
  const status = pour.status as PourStatus;
  if (!isOpenStatus(status))
    return conflict(
      `The pour is ${statusLabels[status].toLowerCase()}: its sensors can no longer change.`,
    );
  const now = Date.now();
  const late = [
    ...b.add.flatMap((a, i) =>
      a.from !== undefined && a.from > now + MAX_FUTURE_MS ? [{ field: `add.${i}.from` }] : [],
    ),
    ...b.end.flatMap((e, i) =>
      e.at !== undefined && e.at > now + MAX_FUTURE_MS ? [{ field: `end.${i}.at` }] : [],
    ),
  ];
  if (late.length > 0)
    return badRequest(
      "A time is in the future.",
      late.map((l) => ({ ...l, error: "At most 10 minutes from now" })),
    );

  const addIds = [...new Set(b.add.map((a) => a.sensor))];
  const endIds = [...new Set(b.end.map((e) => e.sensor))];
  const existing = assignmentsOf([...addIds, ...endIds], pour.id);

  const ends = planEnds({
    pourId: pour.id,
    requested: b.end.map((e) => ({ sensorId: e.sensor, atMs: e.at ?? now })),
    existing,
  });
  if (!ends.ok) return conflict(ends.message);
  // Adds are planned as if the ends had happened, so a sensor may be ended and put back on.
  const afterEnds = existing.map((e) => {
    const end = ends.ends.find((x) => x.assignmentId === e.assignmentId);
    return end ? { ...e, toMs: end.endMs } : e;
  });
  const adds = addIds.map((sensorId) => {
    const a = b.add.find((x) => x.sensor === sensorId)!;
    return { sensorId, fromMs: a.from ?? now, location: a.location || null };
  });
  const plan = planAssignments({
    pourId: pour.id,
    requested: adds,
    known: knownSensors(addIds),
    existing: afterEnds,
    move: b.move ?? false,
  });
  if (!plan.ok)
    return assignmentProblem(
      plan.refusal,
      (s) => `add.${b.add.findIndex((a) => a.sensor === s)}.sensor`,
    );

  changeAssignments(
    pour.id,
    {
      ends: ends.ends.map((e) => ({ assignmentId: e.assignmentId, endMs: e.endMs })),
      adds,
      moves: plan.moves.map((m) => ({ assignmentId: m.assignmentId, endMs: m.endMs })),
      byUserId: who.kind === "user" ? who.user.id : null,
    },
    now,
  );
  rebuildPour(pour.id, now);
  for (const otherId of new Set(plan.moves.map((m) => m.pourId))) rebuildPour(otherId, now);

  const actor = auditActor(ctx);
  for (const m of plan.moves)
    writeAudit(
      actor,
      {
        action: "pour.sensors_changed",
        entityType: "pour",
        entityId: m.pourId,
        pourId: m.pourId,
        detail: { ended: [{ sensor: m.sensorId, at: iso(m.endMs) }], moved_to: pour.code },
      },
      now,
    );
  writeAudit(
    actor,
    {
      action: "pour.sensors_changed",
      entityType: "pour",
      entityId: pour.id,
      pourId: pour.id,
      detail: {
        code: pour.code,
        added: adds.map((a) => ({ sensor: a.sensorId, from: iso(a.fromMs), location: a.location })),
        ended: ends.ends.map((e) => ({ sensor: e.sensorId, at: iso(e.endMs) })),
        moved_from: plan.moves.map((m) => ({ sensor: m.sensorId, pour: m.pourCode })),
      },
    },
    now,
  );
  return json({ pour_id: pour.id, assignments: listAssignments(pour.id).map(presentAssignment) });
});
