import type { APIRoute } from "astro";
import { nextCalibrationDue, offsetFromCheck, MAX_TEMP_OFFSET_C } from "@/domain/calibration";
import { calibrationCreateBody } from "@/lib/schemas/calibrations";
import { writeAudit } from "@/lib/server/db/queries/audit";
import {
  listCalibrations,
  recordCalibration,
  type CalibrationRow,
} from "@/lib/server/db/queries/calibrations";
import { getSensorWithArea } from "@/lib/server/db/queries/sensors";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseBody } from "@/lib/server/http/parse";
import { badRequest, json, notFound } from "@/lib/server/http/responses";

/** A check may be dated at most this far ahead of the server's clock (clock drift of a phone). */
const FUTURE_SLACK_MS = 10 * 60_000;

const iso = (ms: number | null) => (ms === null ? null : new Date(ms).toISOString());

function presentCalibration(c: CalibrationRow, checkedByName: string | null) {
  return {
    id: c.id,
    sensor: c.sensorId,
    checked_at: iso(c.checkedAt),
    checked_by: c.checkedBy,
    checked_by_name: checkedByName,
    reference_temp_c: c.referenceTempC,
    sensor_temp_c: c.sensorTempC,
    temp_offset_c: c.tempOffsetC,
    rh_offset_pct: c.rhOffsetPct,
    next_due_at: iso(c.nextDueAt),
    note: c.note,
    recorded_at: iso(c.createdAt),
  };
}

/** A sensor's calibration checks, newest first, with the offsets it applies now. */
export const GET: APIRoute = endpoint(async ({ locals, params }) => {
  requireAction(locals, "plant.read");
  const sensor = getSensorWithArea(params.id ?? "");
  if (!sensor) return notFound("sensor");
  return json({
    sensor: sensor.id,
    temp_offset_c: sensor.tempOffsetC,
    rh_offset_pct: sensor.rhOffsetPct,
    calibrations: listCalibrations(sensor.id).map((c) => presentCalibration(c, c.checkedByName)),
  });
});

/**
 * QC records a check against a reference thermometer. The check's offsets become the
 * sensor's (when it is the newest check) and are added to readings received from then on;
 * readings already stored keep their values.
 */
export const POST: APIRoute = endpoint(async (ctx) => {
  const caller = requireAction(ctx.locals, "quality.manage");
  const sensor = getSensorWithArea(ctx.params.id ?? "");
  if (!sensor) return notFound("sensor");
  const parsed = await parseBody(ctx.request, calibrationCreateBody);
  if (!parsed.ok) return parsed.response;
  const body = parsed.data;
  const nowMs = Date.now();
  const checkedAtMs = body.checked_at ?? nowMs;
  if (checkedAtMs > nowMs + FUTURE_SLACK_MS) {
    return badRequest("The check cannot be in the future.", [
      { field: "checked_at", error: "is in the future" },
    ]);
  }
  const nextDueAtMs = body.next_due_at ?? nextCalibrationDue(checkedAtMs);
  if (nextDueAtMs <= checkedAtMs) {
    return badRequest("The next check must come after this one.", [
      { field: "next_due_at", error: "is not after checked_at" },
    ]);
  }
  const tempOffsetC =
    body.temp_offset_c ?? offsetFromCheck(body.reference_temp_c, body.sensor_temp_c);
  if (Math.abs(tempOffsetC) > MAX_TEMP_OFFSET_C) {
    return badRequest(
      `The sensor reads ${Math.abs(tempOffsetC).toFixed(1)} °C away from the reference; past ${MAX_TEMP_OFFSET_C} °C, replace it rather than correct it.`,
      [{ field: "sensor_temp_c", error: `more than ${MAX_TEMP_OFFSET_C} °C from the reference` }],
    );
  }
  const rhOffsetPct = body.rh_offset_pct ?? 0;
  const checker = caller.kind === "user" ? caller.user : null;
  const { calibration, applied } = recordCalibration({
    sensorId: sensor.id,
    checkedAtMs,
    checkedBy: checker?.id ?? null,
    referenceTempC: body.reference_temp_c,
    sensorTempC: body.sensor_temp_c,
    tempOffsetC,
    rhOffsetPct,
    nextDueAtMs,
    note: body.note || null,
  });
  writeAudit(auditActor(ctx), {
    action: "sensor.calibration_recorded",
    entityType: "sensor",
    entityId: sensor.id,
    detail: {
      calibration_id: calibration.id,
      checked_at: iso(checkedAtMs),
      reference_temp_c: body.reference_temp_c,
      sensor_temp_c: body.sensor_temp_c,
      temp_offset_c: tempOffsetC,
      rh_offset_pct: rhOffsetPct,
      applied,
      previous: { temp_offset_c: sensor.tempOffsetC, rh_offset_pct: sensor.rhOffsetPct },
    },
  });
  return json({ ...presentCalibration(calibration, checker?.name ?? null), applied }, 201);
});
