import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { thinSeries, type SeriesPoint } from "./thin";

const series = (temps: number[], rh: (number | null)[] = []): SeriesPoint[] =>
  temps.map((t, i) => ({ tsMs: i * 60_000, tempC: t, rhPct: rh[i] ?? null }));

describe("thinning a series for a chart", () => {
  it("returns a short series whole", () => {
    const s = series([1, 2, 3]);
    expect(thinSeries(s, 10)).toEqual(s);
  });

  it("keeps a one-minute spike that an average would hide", () => {
    const temps = Array.from({ length: 10_000 }, () => 20);
    temps[4_321] = 45; // one hot minute
    temps[7_777] = -5; // one cold minute
    const out = thinSeries(series(temps), 100);
    expect(out.length).toBeLessThanOrEqual(100);
    expect(Math.max(...out.map((p) => p.tempC))).toBe(45);
    expect(Math.min(...out.map((p) => p.tempC))).toBe(-5);
  });

  it("keeps the driest humidity too", () => {
    const temps = Array.from({ length: 5_000 }, () => 20);
    const rh = Array.from({ length: 5_000 }, () => 97);
    rh[2_500] = 61;
    const out = thinSeries(series(temps, rh), 40);
    expect(Math.min(...out.map((p) => p.rhPct!))).toBe(61);
  });

  it("never exceeds the limit, stays in time order, and keeps every extreme", () => {
    fc.assert(
      fc.property(
        fc.array(fc.double({ min: -40, max: 120, noNaN: true }), {
          minLength: 1,
          maxLength: 3_000,
        }),
        fc.integer({ min: 4, max: 500 }),
        (temps, max) => {
          const out = thinSeries(series(temps), max);
          expect(out.length).toBeLessThanOrEqual(max);
          for (let i = 1; i < out.length; i++)
            expect(out[i]!.tsMs).toBeGreaterThan(out[i - 1]!.tsMs);
          // == rather than Object.is: +0 and −0 are the same temperature.
          expect(Math.max(...out.map((p) => p.tempC)) === Math.max(...temps)).toBe(true);
          expect(Math.min(...out.map((p) => p.tempC)) === Math.min(...temps)).toBe(true);
        },
      ),
      { numRuns: 200 },
    );
  });
});
