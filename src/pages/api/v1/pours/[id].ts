import type { APIRoute } from "astro";
import { checkTransition, isOpenStatus, type PourStatus } from "@/domain/pourLifecycle";
import { pourPatchBody } from "@/lib/schemas/pours";
import { writeAudit } from "@/lib/server/db/queries/audit";
import {
  getPour,
  joinCylinderIds,
  listProducts,
  releaseFlags,
  updatePour,
  type PourFieldsPatch,
  type ProductInput,
} from "@/lib/server/db/queries/pours";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseBody, parseId } from "@/lib/server/http/parse";
import { badRequest, conflict, json, notFound } from "@/lib/server/http/responses";
import { presentPour } from "@/lib/server/pours/present";
import { forgetAssignments } from "@/lib/server/strength/maturity";

/** The whole pour: mix, products, sensors with their windows, fresh tests with the discharge flag, breaks, status. */
export const GET: APIRoute = endpoint(async ({ locals, params }) => {
  requireAction(locals, "plant.read");
  const id = parseId(params.id);
  const pour = id === null ? undefined : presentPour(id);
  return pour ? json(pour) : notFound("pour");
});

/** Fields a PATCH may set, body name → column. */
const fieldMap = {
  bed: "bed",
  notes: "notes",
  discharge_temp_c: "dischargeTempC",
  slump_mm: "slumpMm",
  spread_mm: "spreadMm",
  air_pct: "airPct",
  unit_weight_kg_m3: "unitWeightKgM3",
} as const;

/**
 * Changes a pour: fresh tests, notes, bed, products, and its status along the lifecycle
 * (src/domain/pourLifecycle.ts). Shipped needs a ship release by QC; void needs a reason.
 * A pour that ships or is voided lets its sensors go at that moment.
 */
export const PATCH: APIRoute = endpoint(async (ctx) => {
  requireAction(ctx.locals, "floor.operate");
  const id = parseId(ctx.params.id);
  const before = id === null ? undefined : getPour(id);
  if (!before) return notFound("pour");
  const parsed = await parseBody(ctx.request, pourPatchBody);
  if (!parsed.ok) return parsed.response;
  const b = parsed.data;
  const now = Date.now();

  const patch: PourFieldsPatch = {};
  const changed: Record<string, { from: unknown; to: unknown }> = {};
  const set = <K extends keyof PourFieldsPatch>(
    key: K,
    name: string,
    value: PourFieldsPatch[K],
  ) => {
    if (before[key] === value) return;
    patch[key] = value;
    changed[name] = { from: before[key], to: value };
  };
  for (const [name, key] of Object.entries(fieldMap) as [
    keyof typeof fieldMap,
    (typeof fieldMap)[keyof typeof fieldMap],
  ][]) {
    const v = b[name];
    if (v === undefined) continue;
    set(key, name, typeof v === "string" ? v || null : v);
  }
  // A consistency test is a slump or a spread: recording one clears the other.
  if (typeof b.spread_mm === "number" && b.slump_mm === undefined) set("slumpMm", "slump_mm", null);
  if (typeof b.slump_mm === "number" && b.spread_mm === undefined)
    set("spreadMm", "spread_mm", null);
  if (b.cylinder_ids !== undefined)
    set("cylinderIds", "cylinder_ids", joinCylinderIds(b.cylinder_ids));

  let products: ProductInput[] | undefined;
  if (b.products) {
    const old = listProducts(before.id).map((p) => ({
      product: p.product,
      piece_count: p.pieceCount,
      marks: p.marks,
    }));
    products = b.products.map((p) => ({
      product: p.product,
      pieceCount: p.piece_count,
      marks: p.marks || null,
    }));
    const next = products.map((p) => ({
      product: p.product,
      piece_count: p.pieceCount,
      marks: p.marks,
    }));
    if (JSON.stringify(old) !== JSON.stringify(next)) changed.products = { from: old, to: next };
    else products = undefined;
  }

  const from = before.status as PourStatus;
  const to = b.status;
  const moving = to !== undefined && to !== from;
  if (moving) {
    const check = checkTransition(from, to, releaseFlags(before.id), b.reason);
    if (!check.ok)
      return check.refusal === "needs_reason"
        ? badRequest(check.message, [{ field: "reason", error: "Say why the pour is void" }])
        : conflict(check.message);
    patch.status = to;
    if (to === "stripped" && before.strippedAt === null) patch.strippedAt = now;
    if (to === "shipped") patch.shippedAt = now;
  }
  if (!moving && Object.keys(changed).length > 0 && from === "void")
    return conflict("A void pour's record is closed: it cannot change.");
  if (!moving && Object.keys(changed).length === 0)
    return Object.keys(b).length === 0
      ? badRequest("Nothing to change: send the fields to change.")
      : json(presentPour(before.id, now));

  const letSensorsGo = moving && !isOpenStatus(to);
  updatePour(before.id, patch, products, letSensorsGo ? now : null, now);
  if (letSensorsGo) forgetAssignments(before.id);

  const actor = auditActor(ctx);
  if (Object.keys(changed).length > 0)
    writeAudit(
      actor,
      {
        action: "pour.updated",
        entityType: "pour",
        entityId: before.id,
        pourId: before.id,
        detail: { code: before.code, changed },
      },
      now,
    );
  if (moving)
    writeAudit(
      actor,
      {
        action: "pour.status_changed",
        entityType: "pour",
        entityId: before.id,
        pourId: before.id,
        detail: {
          code: before.code,
          from,
          to,
          ...(b.reason && { reason: b.reason }),
          ...(letSensorsGo && { sensors_released_at: new Date(now).toISOString() }),
        },
      },
      now,
    );
  return json(presentPour(before.id, now));
});
