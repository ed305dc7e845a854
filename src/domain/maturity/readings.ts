/**
 * Temperature readings as the maturity math sees them, and the rules every maturity sum shares:
 * the order and de-duplication of a history, and the 2-hour gap rule.
 */

/** One temperature reading of one sensor: epoch milliseconds and °C. */
export interface Reading {
  tsMs: number;
  tempC: number;
}

/** Milliseconds in one hour. */
export const MS_PER_H = 3_600_000;

/**
 * Longest interval between two consecutive readings that still adds to a maturity sum, in hours.
 * A longer interval adds nothing and makes the record incomplete, so the estimate errs low, never
 * high (Plinth contract, GET /api/v1/pours/{id}/strength).
 */
export const MAX_GAP_H = 2;

/** True when an interval of `hours` is a gap that adds nothing (longer than {@link MAX_GAP_H}). */
export const isGap = (hours: number): boolean => hours > MAX_GAP_H;

/**
 * Throws a RangeError unless the reading has a finite timestamp and temperature. Ingest rejects
 * such readings before they are stored; the domain refuses them rather than guess.
 */
export function assertReading(reading: Reading): void {
  if (!Number.isFinite(reading.tsMs) || !Number.isFinite(reading.tempC)) {
    throw new RangeError(
      `reading needs a finite tsMs and tempC, got ${reading.tsMs} / ${reading.tempC}`,
    );
  }
}

/**
 * A history in time order with one reading per timestamp. Of readings sharing a timestamp the
 * first in input order stands, as at ingest ("the first stored value stands"). The input is not
 * changed. Throws a RangeError on a non-finite reading.
 */
export function normalizeReadings(readings: readonly Reading[]): Reading[] {
  readings.forEach(assertReading);
  // Array.prototype.sort is stable, so equal timestamps keep their input order.
  const sorted = [...readings].sort((x, y) => x.tsMs - y.tsMs);
  return sorted.filter((r, i) => i === 0 || r.tsMs !== sorted[i - 1]?.tsMs);
}

/**
 * Time-weighted mean temperature (°C) over the `hours` before `endMs`, from the trapezoid of each
 * interval between consecutive readings (the interval mean used for maturity, ASTM C1074 Eq. 1).
 * An interval that straddles the window start is cut there, its temperature interpolated linearly;
 * readings after `endMs` are not used; gaps longer than {@link MAX_GAP_H} add no time. Returns null
 * when no interval lies in the window (fewer than two readings there). Plinth's forecast uses it
 * with `hours` = 6 (contract: "if the last 6 hours' mean temperature held").
 */
export function meanTempOverWindowC(
  readings: readonly Reading[],
  endMs: number,
  hours: number,
): number | null {
  const startMs = endMs - hours * MS_PER_H;
  const history = normalizeReadings(readings).filter((r) => r.tsMs <= endMs);
  let weightedC = 0;
  let coveredMs = 0;
  for (let i = 1; i < history.length; i++) {
    const a = history[i - 1];
    const b = history[i];
    if (!a || !b || b.tsMs <= startMs || isGap((b.tsMs - a.tsMs) / MS_PER_H)) continue;
    const fromMs = Math.max(a.tsMs, startMs);
    const fromC = a.tempC + ((b.tempC - a.tempC) * (fromMs - a.tsMs)) / (b.tsMs - a.tsMs);
    weightedC += ((fromC + b.tempC) / 2) * (b.tsMs - fromMs);
    coveredMs += b.tsMs - fromMs;
  }
  return coveredMs > 0 ? weightedC / coveredMs : null;
}

/**
 * Folds `step` over each interval of a history (put in time order and de-duplicated first by
 * {@link normalizeReadings}). The step itself applies the gap rule; the fold reports `complete`:
 * false when any interval is a gap longer than {@link MAX_GAP_H}.
 */
export function foldIntervals(
  readings: readonly Reading[],
  step: (total: number, a: Reading, b: Reading, hours: number) => number,
): { total: number; complete: boolean } {
  const history = normalizeReadings(readings);
  let total = 0;
  let complete = true;
  for (let i = 1; i < history.length; i++) {
    const a = history[i - 1];
    const b = history[i];
    if (!a || !b) continue;
    const hours = (b.tsMs - a.tsMs) / MS_PER_H;
    if (isGap(hours)) complete = false;
    total = step(total, a, b, hours);
  }
  return { total, complete };
}

/** Throws a RangeError unless `hours` is a finite, non-negative interval length. */
export function assertHours(hours: number): void {
  if (!Number.isFinite(hours) || hours < 0)
    throw new RangeError(`interval hours must be finite and >= 0, got ${hours}`);
}
