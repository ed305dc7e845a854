import type { APIRoute } from "astro";
import { sensorPatchBody } from "@/lib/schemas/plant";
import { writeAudit } from "@/lib/server/db/queries/audit";
import {
  findAreaByName,
  getSensorWithArea,
  updateSensor,
  type SensorPatch,
} from "@/lib/server/db/queries/sensors";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseBody } from "@/lib/server/http/parse";
import { badRequest, json, notFound } from "@/lib/server/http/responses";
import { presentSensor } from "@/lib/server/present/sensors";
import { bus } from "@/lib/server/live/bus";

export const GET: APIRoute = endpoint(async ({ locals, params }) => {
  requireAction(locals, "plant.read");
  const s = getSensorWithArea(params.id ?? "");
  return s ? json(presentSensor(s)) : notFound("sensor");
});

/** A manager names, places or retires a sensor. Naming and placing a new sensor puts it in service. */
export const PATCH: APIRoute = endpoint(async (ctx) => {
  requireAction(ctx.locals, "plant.admin");
  const id = ctx.params.id ?? "";
  const before = getSensorWithArea(id);
  if (!before) return notFound("sensor");
  const parsed = await parseBody(ctx.request, sensorPatchBody);
  if (!parsed.ok) return parsed.response;
  const body = parsed.data;
  const patch: SensorPatch = {};
  if (body.label !== undefined) patch.label = body.label;
  if (body.kind !== undefined) patch.kind = body.kind;
  if (body.area !== undefined) {
    if (body.area === null) patch.areaId = null;
    else {
      const area = findAreaByName(body.area);
      if (!area)
        return badRequest("No such area.", [
          { field: "area", error: `no area is named "${body.area}"` },
        ]);
      patch.areaId = area.id;
    }
  }
  if (body.status === "retired") Object.assign(patch, { status: "retired", retiredAt: Date.now() });
  else if (
    body.status === "active" ||
    (before.status === "new" && (body.label || body.kind || body.area))
  ) {
    Object.assign(patch, { status: "active", retiredAt: null });
  }
  if (Object.keys(patch).length > 0) updateSensor(id, patch);
  const after = getSensorWithArea(id)!;
  writeAudit(auditActor(ctx), {
    action: "sensor.updated",
    entityType: "sensor",
    entityId: id,
    detail: {
      changed: body,
      from: {
        label: before.label,
        kind: before.kind,
        area: before.areaName,
        status: before.status,
      },
    },
  });
  bus().emit("sensor", {
    sensorId: id,
    change: after.status === "retired" ? "retired" : "updated",
  });
  return json(presentSensor(after));
});
