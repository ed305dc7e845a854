/**
 * Rate of temperature change, °C per hour, for the rate-of-rise and rate-of-fall rules.
 * Measured over about an hour, not between two neighbouring readings, so a sensor's
 * one-reading jitter (±0.5 °C at one reading a minute would be ±30 °C/h) is not taken
 * for a ramp. Precast limits are stated per hour (PCI MNL-116: rise at most 22 °C/h).
 */

export interface TempPoint {
  tsMs: number;
  tempC: number;
}

const MIN_MS = 60_000;
const HOUR_MS = 3_600_000;

export interface RateWindow {
  /** The span aimed at: the earlier point is the one nearest this long before the newest. */
  spanMs: number;
  /** Shortest and longest span accepted; outside them there is no rate. */
  minSpanMs: number;
  maxSpanMs: number;
}

export const defaultRateWindow: RateWindow = {
  spanMs: HOUR_MS,
  minSpanMs: 30 * MIN_MS,
  maxSpanMs: 90 * MIN_MS,
};

/**
 * The rate at the newest point (the last of `points`, which are oldest first): the slope
 * from the earlier point nearest `spanMs` before it, in °C/h; positive when warming. Null
 * when no earlier point lies between `minSpanMs` and `maxSpanMs` before it.
 */
export function rateCPerH(
  points: readonly TempPoint[],
  window: RateWindow = defaultRateWindow,
): number | null {
  const last = points[points.length - 1];
  if (!last) return null;
  let best: TempPoint | null = null;
  let bestMiss = Infinity;
  for (let i = points.length - 2; i >= 0; i--) {
    const p = points[i]!;
    const span = last.tsMs - p.tsMs;
    if (span < window.minSpanMs) continue;
    if (span > window.maxSpanMs) break;
    const miss = Math.abs(span - window.spanMs);
    if (miss < bestMiss) {
      best = p;
      bestMiss = miss;
    }
  }
  if (!best) return null;
  return (last.tempC - best.tempC) / ((last.tsMs - best.tsMs) / HOUR_MS);
}

/** Drops points older than `keepMs` before the newest, keeping the buffer short. */
export function trimPoints(points: TempPoint[], keepMs: number): void {
  const last = points[points.length - 1];
  if (!last) return;
  let drop = 0;
  while (drop < points.length && last.tsMs - points[drop]!.tsMs > keepMs) drop++;
  if (drop > 0) points.splice(0, drop);
}
