/**
 * A sensor's state as the floor shows it, from its last reading. Pure; time passed in.
 */

/** Silent after this long without a reading (common practice: a few missed one-minute reports). */
export const SILENT_AFTER_MS = 15 * 60_000;

/** Moist curing asks for RH of 95 % or more (ASTM C511, moist cabinets and rooms). */
export const MOIST_CURE_MIN_RH_PCT = 95;

export type SensorState = "reporting" | "silent" | "never";

export function sensorState(
  lastSeenAtMs: number | null,
  nowMs: number,
  silentAfterMs = SILENT_AFTER_MS,
): SensorState {
  if (lastSeenAtMs === null) return "never";
  return nowMs - lastSeenAtMs > silentAfterMs ? "silent" : "reporting";
}

/** True when a cure bag's humidity is below the moist-curing level. */
export function bagBelowMoistLevel(rhPct: number | null): boolean {
  return rhPct !== null && rhPct < MOIST_CURE_MIN_RH_PCT;
}

/** Age of a pour in hours since casting (never negative). */
export function ageHours(castAtMs: number, nowMs: number): number {
  return Math.max(0, (nowMs - castAtMs) / 3_600_000);
}

/** "3 h 20 min", "2 d 5 h": a short human duration. */
export function formatDuration(ms: number): string {
  const min = Math.max(0, Math.round(ms / 60_000));
  if (min < 60) return `${min} min`;
  const h = Math.floor(min / 60);
  if (h < 48) return `${h} h${min % 60 ? ` ${min % 60} min` : ""}`;
  return `${Math.floor(h / 24)} d${h % 24 ? ` ${h % 24} h` : ""}`;
}
