/**
 * When a history's temperature-time factor first reached a target: the time of the crossing,
 * found by walking the same intervals as the accumulator (ASTM C1074 Eq. 1, trapezoid mean,
 * below-datum and over-2-hour gap intervals add nothing) and, inside the interval where the
 * target falls, assuming the factor grows evenly through it. Pure.
 */
import { advanceMaturity, initialMaturity, type MaturityParams } from "./accumulator";
import { normalizeReadings, type Reading } from "./readings";

/** Epoch ms when the factor reached `targetTtfCH` (°C·h), or null if it has not. */
export function ttfReachedAt(
  readings: readonly Reading[],
  castAtMs: number,
  params: MaturityParams,
  targetTtfCH: number,
): number | null {
  let state = initialMaturity(castAtMs);
  if (targetTtfCH <= 0) {
    const first = normalizeReadings(readings).find((r) => r.tsMs >= castAtMs);
    return first ? first.tsMs : null;
  }
  for (const r of normalizeReadings(readings)) {
    const before = state;
    state = advanceMaturity(state, r, params).state;
    if (state.ttfCH >= targetTtfCH && before.lastTsMs !== null) {
      const gained = state.ttfCH - before.ttfCH;
      const share = gained > 0 ? (targetTtfCH - before.ttfCH) / gained : 1;
      return Math.round(before.lastTsMs + share * (r.tsMs - before.lastTsMs));
    }
  }
  return null;
}
