/**
 * Nurse-Saul temperature-time factor (ASTM C1074 Eq. 1): M = Σ (Ta − T0)·Δt, in °C·h.
 */
import { assertHours, foldIntervals, isGap, type Reading } from "./readings";

/**
 * The temperature-time factor after one more interval between two consecutive readings.
 *
 * - Units: `prevTtfCH` and the result in °C·h; `tempAC`, `tempBC` (the readings at the two ends)
 *   and `datumC` in °C; `hours` ≥ 0.
 * - Interval mean: Ta = (tempAC + tempBC)/2, the trapezoid (domain.md §1.5 N-3; Plinth contract).
 * - Clip: the interval adds max(Ta − datumC, 0)·hours. The clip applies to the interval mean, not
 *   to each reading, so an interval whose mean is at or below the datum adds nothing
 *   (domain.md §1.3, checks N-5 and N-6; contract: "an interval whose mean temperature is below the
 *   datum adds nothing").
 * - Gap: an interval longer than 2 h adds nothing (contract; see `MAX_GAP_H`). The caller marks
 *   the record incomplete.
 * - Invariant: the result is never below `prevTtfCH`.
 * - The sum is linear in temperature, so °F readings with the matching °F datum give °F·h =
 *   1.8·°C·h (domain.md §8.4). Plinth passes °C.
 *
 * Source: ASTM C1074 Eq. 1 (Nurse-Saul function). Throws a RangeError on a negative or non-finite
 * `hours`.
 */
export function nurseSaulStep(
  prevTtfCH: number,
  tempAC: number,
  tempBC: number,
  hours: number,
  datumC: number,
): number {
  assertHours(hours);
  if (isGap(hours)) return prevTtfCH;
  return prevTtfCH + Math.max((tempAC + tempBC) / 2 - datumC, 0) * hours;
}

/**
 * The temperature-time factor (°C·h) of a whole history of readings, in any order: readings are
 * sorted, one per timestamp (first stands), and each interval between consecutive readings adds
 * per {@link nurseSaulStep}. `complete` is false when any interval is longer than 2 h (it then
 * adds nothing and the estimate errs low). The history starts at its first reading; cast-time
 * rules live in `maturityFromHistory` (accumulator.ts).
 *
 * Source: ASTM C1074 Eq. 1; interval, clip and gap policy per the Plinth contract.
 */
export function nurseSaulFromReadings(
  readings: readonly Reading[],
  datumC: number,
): { ttfCH: number; complete: boolean } {
  const { total, complete } = foldIntervals(readings, (ttfCH, a, b, hours) =>
    nurseSaulStep(ttfCH, a.tempC, b.tempC, hours, datumC),
  );
  return { ttfCH: total, complete };
}
