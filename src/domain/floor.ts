/**
 * The state a tile on the live floor shows, read at a glance from across the room.
 * Pure; time passed in. Alert rules (with hold times and per-area limits) are separate;
 * these are the plain limits a crew checks by eye.
 */
import { MOIST_CURE_MIN_RH_PCT, SILENT_AFTER_MS } from "./sensorState";
import { displayTemp, type UnitSystem } from "./units";

/** Keep curing concrete above 10 °C (50 °F) (ACI 318 26.5.3, from memory; also UFGS next to forms). */
export const CURE_MIN_TEMP_C = 10;
/** Concrete above 70 °C risks delayed ettringite formation (PCI MNL-116 practice, from memory). */
export const CURE_MAX_TEMP_C = 70;

export type TileState = "ok" | "dry" | "cold" | "hot" | "silent" | "waiting";

export interface TileInput {
  kind: "bag" | "embedded" | "bin" | "ambient" | null;
  tempC: number | null;
  rhPct: number | null;
  lastSeenAtMs: number | null;
  /** True when the sensor is on a pour now (a bag off any pour reads room air). */
  onPour: boolean;
}

/** The worst of a tile's conditions, in this order: silent, cold, hot, dry, ok. */
export function tileState(t: TileInput, nowMs: number): TileState {
  if (t.lastSeenAtMs === null || t.tempC === null) return "waiting";
  if (nowMs - t.lastSeenAtMs > SILENT_AFTER_MS) return "silent";
  const watched = t.onPour && (t.kind === "bag" || t.kind === "embedded");
  if (watched && t.tempC < CURE_MIN_TEMP_C) return "cold";
  if (watched && t.tempC > CURE_MAX_TEMP_C) return "hot";
  if (t.onPour && t.kind === "bag" && t.rhPct !== null && t.rhPct < MOIST_CURE_MIN_RH_PCT)
    return "dry";
  return "ok";
}

export const tileLabels: Record<TileState, string> = {
  ok: "OK",
  dry: "Drying",
  cold: "Cold",
  hot: "Hot",
  silent: "Silent",
  waiting: "No reading yet",
};

/** How the tile's state sounds in one short line, for the operator, in their units. */
export function tileAdvice(state: TileState, units: UnitSystem = "si"): string {
  const t = (c: number) => `${displayTemp(c, units, 0).value} ${displayTemp(c, units, 0).unit}`;
  switch (state) {
    case "dry":
      return `Below ${MOIST_CURE_MIN_RH_PCT} % RH: re-wet the pads`;
    case "cold":
      return `Below ${t(CURE_MIN_TEMP_C)}: check the heat and the cover`;
    case "hot":
      return `Above ${t(CURE_MAX_TEMP_C)}: check the heat`;
    case "silent":
      return "No reading for 15 min: check the sensor and gateway";
    case "waiting":
      return "Waiting for a first reading";
    default:
      return "Within limits";
  }
}
