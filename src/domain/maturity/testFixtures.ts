/**
 * Test-only helpers: reference temperature histories shared by the maturity and strength tests,
 * and a tolerance assertion. Not imported by product code.
 */
import { expect } from "vitest";
import { MS_PER_H, type Reading } from "./readings";

/** A fixed cast time for test histories: 2026-03-02T00:00:00Z. */
export const CAST_AT_MS = Date.UTC(2026, 2, 2);

/** Readings at `CAST_AT_MS + hours[i]` with temperatures `tempsC[i]`. */
export function readingsAt(hours: readonly number[], tempsC: readonly number[]): Reading[] {
  return hours.map((h, i) => ({ tsMs: CAST_AT_MS + h * MS_PER_H, tempC: tempsC[i] ?? Number.NaN }));
}

/**
 * The reference precast cycle of domain.md §7.6, as ½-h readings from 0 to 15 h: 20 °C preset to
 * 3 h, linear ramp to 60 °C at 5 h, hold to 13 h, linear cooling to 20 °C at 15 h.
 */
export function precastCycleReadings(): Reading[] {
  const tempAt = (h: number): number => {
    if (h <= 3) return 20;
    if (h <= 5) return 20 + 20 * (h - 3);
    if (h <= 13) return 60;
    return 60 - 20 * (h - 13);
  };
  const hours = Array.from({ length: 31 }, (_, i) => i / 2);
  return readingsAt(hours, hours.map(tempAt));
}

/** Asserts |actual − expected| ≤ tol, showing both values when it fails. */
export function expectWithin(actual: number, expected: number, tol: number): void {
  expect(actual, `expected ${expected} ± ${tol}`).toBeGreaterThanOrEqual(expected - tol);
  expect(actual, `expected ${expected} ± ${tol}`).toBeLessThanOrEqual(expected + tol);
}
