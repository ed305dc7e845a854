/**
 * What makes a reading acceptable, from the readings contract: a sensor id, a time (ISO 8601
 * with an offset, or epoch milliseconds) no more than 10 minutes in the future, a temperature
 * in °C or °F within −40 °C to 120 °C, and optionally a relative humidity of 0 to 100 %.
 * Pure: time is passed in.
 */
import { fToC } from "./units";

export const MAX_FUTURE_MS = 10 * 60_000;
export const MIN_TEMP_C = -40;
export const MAX_TEMP_C = 120;
/** Sensor ids: letters, digits and . _ : - , starting with a letter or digit, up to 64. */
export const SENSOR_ID_PATTERN = /^[A-Za-z0-9][A-Za-z0-9._:-]{0,63}$/;
/** ISO 8601 date-time with an explicit offset (Z or ±hh:mm). */
const ISO_WITH_OFFSET = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2}(\.\d{1,9})?)?(Z|[+-]\d{2}:?\d{2})$/;

export interface CleanReading {
  sensorId: string;
  tsMs: number;
  tempC: number;
  rhPct: number | null;
  batteryPct: number | null;
}

export type ReadingCheck = { ok: true; reading: CleanReading } | { ok: false; error: string };

const isObject = (v: unknown): v is Record<string, unknown> =>
  typeof v === "object" && v !== null && !Array.isArray(v);

const isFiniteNumber = (v: unknown): v is number => typeof v === "number" && Number.isFinite(v);

/** Parses `ts`: ISO 8601 with an offset, or epoch milliseconds. Null when it is neither. */
export function parseTimestamp(ts: unknown): number | null {
  if (isFiniteNumber(ts)) return Number.isInteger(ts) && ts >= 0 && ts < 8.64e15 ? ts : null;
  if (typeof ts === "string" && ISO_WITH_OFFSET.test(ts)) {
    const ms = Date.parse(ts);
    return Number.isFinite(ms) ? ms : null;
  }
  return null;
}

/**
 * Checks one reading. `sensorFromTopic` supplies the id when the reading came on a
 * per-sensor MQTT topic (then a `sensor` field, if present, must agree).
 */
export function checkReading(raw: unknown, nowMs: number, sensorFromTopic?: string): ReadingCheck {
  if (!isObject(raw)) return { ok: false, error: "a reading must be a JSON object" };
  const sensor = raw.sensor ?? sensorFromTopic;
  if (typeof sensor !== "string" || sensor.length === 0)
    return { ok: false, error: "sensor is missing or not a string" };
  if (!SENSOR_ID_PATTERN.test(sensor)) {
    return {
      ok: false,
      error: "sensor must be 1 to 64 letters, digits or . _ : - (starting with a letter or digit)",
    };
  }
  if (sensorFromTopic !== undefined && sensor !== sensorFromTopic) {
    return { ok: false, error: "sensor differs from the topic's sensor id" };
  }
  if (raw.ts === undefined) return { ok: false, error: "ts is missing" };
  const tsMs = parseTimestamp(raw.ts);
  if (tsMs === null)
    return {
      ok: false,
      error: "ts must be ISO 8601 with an offset (e.g. 2026-03-02T04:10:00Z) or epoch milliseconds",
    };
  if (tsMs > nowMs + MAX_FUTURE_MS)
    return { ok: false, error: "ts is more than 10 minutes in the future" };

  const hasC = raw.temp_c !== undefined;
  const hasF = raw.temp_f !== undefined;
  if (hasC && hasF) return { ok: false, error: "send temp_c or temp_f, not both" };
  if (!hasC && !hasF) return { ok: false, error: "temp_c (or temp_f) is missing" };
  const t = hasC ? raw.temp_c : raw.temp_f;
  if (!isFiniteNumber(t))
    return { ok: false, error: `${hasC ? "temp_c" : "temp_f"} must be a finite number` };
  const tempC = hasC ? t : fToC(t);
  if (tempC < MIN_TEMP_C || tempC > MAX_TEMP_C)
    return { ok: false, error: "temperature is outside −40 °C to 120 °C" };

  let rhPct: number | null = null;
  if (raw.rh !== undefined && raw.rh !== null) {
    if (!isFiniteNumber(raw.rh)) return { ok: false, error: "rh must be a finite number" };
    if (raw.rh < 0 || raw.rh > 100) return { ok: false, error: "rh is outside 0 to 100 %" };
    rhPct = raw.rh;
  }
  let batteryPct: number | null = null;
  if (raw.battery !== undefined && raw.battery !== null) {
    if (!isFiniteNumber(raw.battery) || raw.battery < 0 || raw.battery > 100) {
      return { ok: false, error: "battery must be a number from 0 to 100 (%)" };
    }
    batteryPct = raw.battery;
  }
  return { ok: true, reading: { sensorId: sensor, tsMs, tempC, rhPct, batteryPct } };
}

/** A sensor's calibration offsets applied to a reading; humidity stays within 0 to 100 %. */
export function applyOffsets(
  r: CleanReading,
  tempOffsetC: number,
  rhOffsetPct: number,
): CleanReading {
  // Written out rather than spread: this runs for every reading stored.
  return {
    sensorId: r.sensorId,
    tsMs: r.tsMs,
    tempC: r.tempC + tempOffsetC,
    rhPct: r.rhPct === null ? null : Math.min(100, Math.max(0, r.rhPct + rhOffsetPct)),
    batteryPct: r.batteryPct,
  };
}
