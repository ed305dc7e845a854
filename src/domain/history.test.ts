import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  breakToEstimateRatio,
  displayDatum,
  displayTtf,
  exportFileName,
  governingSeries,
  heldValueAt,
  maturityTrack,
  strengthSeries,
  thinRising,
  thinRows,
  timeGrid,
  ttfCrossingAt,
  type ReadingRow,
} from "./history";
import { maturityFromHistory } from "./maturity/accumulator";
import { equivalentAgeFromReadings } from "./maturity/arrhenius";
import { ttfReachedAt } from "./maturity/crossing";
import { nurseSaulFromReadings } from "./maturity/nurseSaul";
import { MS_PER_H, type Reading } from "./maturity/readings";
import {
  CAST_AT_MS,
  expectWithin,
  precastCycleReadings,
  readingsAt,
} from "./maturity/testFixtures";
import type { StrengthCurve } from "./strength/curves";
import { thinSeries, type SeriesPoint } from "./thin";

/** Readings as the database hands them over: [ts, °C, % RH]. */
const rows = (readings: readonly Reading[]): ReadingRow[] =>
  readings.map((r) => [r.tsMs, r.tempC, null] as const);
/** A track's column as a plain array of its points. */
const col = (t: { length: number }, c: Float64Array | Uint8Array) =>
  Array.from(c.subarray(0, t.length));

// Q = 5000 K as E = Q·R with the contract's R = 8.314 J/(mol·K) (domain.md §2.2, §2.5).
const E_Q5000 = 5000 * 8.314;
const params = (datumC: number) => ({ datumC, activationEnergyJMol: E_Q5000 });

describe("the running maturity of a sensor at each reading", () => {
  // domain.md §1.5 N-3 and N-4: hourly readings 10, 12, 16, 20, 22 °C, trapezoid interval mean.
  const n3 = rows(readingsAt([0, 1, 2, 3, 4], [10, 12, 16, 20, 22]));
  for (const [datumC, running, total] of [
    [-10, [0, 21, 45, 73, 104], 104], // N-3: (21 + 24 + 28 + 31)·1 = 104 °C·h
    [0, [0, 11, 25, 43, 64], 64], // N-4: 11 + 14 + 18 + 21 = 64 °C·h
  ] as const) {
    it(`adds each interval's mean above a datum of ${datumC} °C, ending at ${total} °C·h`, () => {
      const { track, state } = maturityTrack(n3, CAST_AT_MS, params(datumC));
      expect(col(track, track.ttfCH)).toEqual(running);
      expect(state.ttfCH).toBe(total);
    });
  }

  it("equals nurseSaulFromReadings of the readings up to each point (precast cycle, §7.6)", () => {
    const readings = precastCycleReadings();
    for (const datumC of [-10, 0]) {
      const { track } = maturityTrack(rows(readings), CAST_AT_MS, params(datumC));
      expect(track.length).toBe(readings.length);
      col(track, track.ttfCH).forEach((ttf, i) => {
        expect(ttf).toBeCloseTo(nurseSaulFromReadings(readings.slice(0, i + 1), datumC).ttfCH, 9);
      });
    }
  });

  it("ends at the reference cycle's check values (domain.md §1.5 N-9 and §2.5 E-5)", () => {
    const readings = precastCycleReadings();
    // N-9: 850 °C·h with T0 = −10 °C, 700 °C·h with T0 = 0 °C, ½-h readings, trapezoid.
    const cold = maturityTrack(rows(readings), CAST_AT_MS, params(-10));
    const zero = maturityTrack(rows(readings), CAST_AT_MS, params(0));
    expectWithin(cold.state.ttfCH, 850, 1e-9);
    expectWithin(zero.state.ttfCH, 700, 1e-9);
    // E-5: te = 78.622 h at Ts = 20 °C with Q = 5000 K (±0.01 h).
    expectWithin(cold.state.equivalentAgeH, 78.622, 0.01);
    // The equivalent age at every point is the Arrhenius sum of the readings up to it.
    col(cold.track, cold.track.equivalentAgeH).forEach((te, i) => {
      const expected = equivalentAgeFromReadings(readings.slice(0, i + 1), {
        activationEnergyJMol: E_Q5000,
      }).equivalentAgeH;
      expect(te).toBeCloseTo(expected, 9);
    });
  });

  it("adds nothing below the datum (domain.md §1.5 N-5: 90 °C·h with the clip, not 60)", () => {
    // N-5: 6 h at −15 °C, then 6 h at 5 °C, T0 = −10 °C, as hourly readings with the step between
    // 6 h and 6 h + 0.36 s: that 0.0001 h interval (mean −5 °C) adds 0.0005 °C·h, and the last
    // 5.9999 h at 5 °C add 89.9985 °C·h.
    const hours = [0, 1, 2, 3, 4, 5, 6, 6.0001, 7, 8, 9, 10, 11, 12];
    const stepped = readingsAt(
      hours,
      hours.map((h) => (h <= 6 ? -15 : 5)),
    );
    const { track, state } = maturityTrack(rows(stepped), CAST_AT_MS, params(-10));
    expect(col(track, track.ttfCH).slice(0, 7)).toEqual([0, 0, 0, 0, 0, 0, 0]);
    expectWithin(state.ttfCH, 90, 0.001);
  });

  it("marks the record incomplete after a gap over 2 hours, which adds nothing (contract)", () => {
    const r = rows(readingsAt([0, 1, 4, 5], [20, 20, 20, 20]));
    const { track, state } = maturityTrack(r, CAST_AT_MS, params(0));
    expect(col(track, track.complete)).toEqual([1, 1, 0, 0]);
    // 1 h at 20 °C above T0 = 0 adds 20 °C·h (domain.md §1.5 N-1: 24 h → 480); the 3 h gap adds nothing.
    expect(col(track, track.ttfCH)).toEqual([0, 20, 20, 40]);
    expect(state.complete).toBe(false);
  });

  it("skips readings before cast and keeps one point per timestamp (first stands)", () => {
    const r: ReadingRow[] = [
      [CAST_AT_MS - MS_PER_H, 50, null],
      [CAST_AT_MS + MS_PER_H, 30, 90],
      [CAST_AT_MS, 10, 95],
      [CAST_AT_MS, 99, 10],
    ];
    const { track } = maturityTrack(r, CAST_AT_MS, params(0));
    expect(col(track, track.tsMs)).toEqual([CAST_AT_MS, CAST_AT_MS + MS_PER_H]);
    // Each point names the row it came from, so its humidity can be found again.
    expect(Array.from(track.row.subarray(0, track.length))).toEqual([2, 1]);
    // (10 + 30)/2 × 1 h = 20 °C·h with T0 = 0 (trapezoid, domain.md §1.1).
    expect(track.ttfCH[1]).toBe(20);
  });

  it("ends at the same state as the accumulator's recompute path, for any history", () => {
    fc.assert(
      fc.property(
        fc.array(
          fc.record({
            tsMs: fc.integer({ min: CAST_AT_MS - 3 * MS_PER_H, max: CAST_AT_MS + 72 * MS_PER_H }),
            tempC: fc.double({ min: -30, max: 80, noNaN: true }),
          }),
          { maxLength: 200 },
        ),
        fc.constantFrom(-10, 0),
        (readings, datumC) => {
          const { state, track } = maturityTrack(rows(readings), CAST_AT_MS, params(datumC));
          expect(state).toEqual(maturityFromHistory(readings, CAST_AT_MS, params(datumC)));
          for (let i = 1; i < track.length; i++)
            expect(track.ttfCH[i]!).toBeGreaterThanOrEqual(track.ttfCH[i - 1]!);
        },
      ),
    );
  });

  it("refuses a reading that is not a number", () => {
    expect(() => maturityTrack([[CAST_AT_MS, Number.NaN, null]], CAST_AT_MS, params(0))).toThrow(
      RangeError,
    );
  });
});

describe("strength over time from the mix's curve", () => {
  // domain.md §3.3, Set H log fit: a = −50.0515, b = 22.2045 MPa/decade; predictions at
  // M = 552 and 1656 °C·h are 10.832 and 21.426 MPa.
  const setH: StrengthCurve = { model: "log", aMpa: -50.0515, bMpaPerDecade: 22.2045 };

  it("reads each point's strength from the curve (Set H log fit predictions)", () => {
    const s = strengthSeries([552, 1656], setH);
    expectWithin(s[0]!, 10.832, 0.001);
    expectWithin(s[1]!, 21.426, 0.001);
  });

  it("never reads a negative strength, and reads none without a curve", () => {
    // At 1 °C·h the log form gives a = −50 MPa; strength is floored at 0 (strengthAt).
    expect(strengthSeries([1, 0], setH)).toEqual([0, 0]);
    expect(strengthSeries([552], null)).toEqual([null]);
  });
});

describe("when a threshold was crossed", () => {
  it("agrees with ttfReachedAt over the readings for any target (precast cycle)", () => {
    const readings = precastCycleReadings();
    const { track } = maturityTrack(rows(readings), CAST_AT_MS, params(-10));
    for (const target of [0, 1, 15, 100, 333.3, 600, 849.9, 850, 851]) {
      expect(ttfCrossingAt(track.tsMs.subarray(0, track.length), track.ttfCH, target)).toBe(
        ttfReachedAt(readings, CAST_AT_MS, params(-10), target),
      );
    }
  });

  it("interpolates inside the interval where the target falls", () => {
    // 1 h at a mean of 20 °C above T0 = 0 adds 20 °C·h (N-1 rate); 10 °C·h is reached halfway.
    expect(ttfCrossingAt([0, MS_PER_H], [0, 20], 10)).toBe(MS_PER_H / 2);
    expect(ttfCrossingAt([0, MS_PER_H], [0, 20], 21)).toBeNull();
    expect(ttfCrossingAt([], [], 1)).toBeNull();
  });
});

describe("the governing sensor over time", () => {
  const h = (n: number) => CAST_AT_MS + n * MS_PER_H;

  it("follows the coldest sensor on the pour, holding each at its last reading", () => {
    const warm = {
      sensor: "CB-01",
      fromMs: h(0),
      toMs: null,
      tsMs: [h(0), h(1), h(2)],
      ttfCH: [0, 40, 80],
    };
    const cold = {
      sensor: "EP-01",
      fromMs: h(0),
      toMs: null,
      tsMs: [h(0), h(1), h(2)],
      ttfCH: [0, 30, 90],
    };
    expect(governingSeries([warm, cold], [h(0), h(1), h(1.5), h(2)])).toEqual([
      { tsMs: h(0), ttfCH: 0, sensor: "CB-01" },
      { tsMs: h(1), ttfCH: 30, sensor: "EP-01" },
      { tsMs: h(1.5), ttfCH: 30, sensor: "EP-01" },
      { tsMs: h(2), ttfCH: 80, sensor: "CB-01" },
    ]);
  });

  it("counts a sensor only while it is on the pour", () => {
    const removed = {
      sensor: "CB-02",
      fromMs: h(0),
      toMs: h(1),
      tsMs: [h(0), h(1)],
      ttfCH: [0, 5],
    };
    const stays = {
      sensor: "CB-03",
      fromMs: h(0),
      toMs: null,
      tsMs: [h(0), h(1), h(2)],
      ttfCH: [0, 20, 40],
    };
    expect(governingSeries([removed, stays], [h(1), h(2)]).map((p) => p.sensor)).toEqual([
      "CB-02",
      "CB-03",
    ]);
    expect(governingSeries([removed], [h(3)])).toEqual([]);
  });

  it("holds the value at the last point at or before an instant", () => {
    const ts = [10, 20];
    const v = [1, 2];
    expect(heldValueAt(ts, v, 5, 0).value).toBe(0);
    expect(heldValueAt(ts, v, 10, 0).value).toBe(1);
    expect(heldValueAt(ts, v, 19, 0).value).toBe(1);
    expect(heldValueAt(ts, v, 25, 0)).toEqual({ value: 2, index: 2 });
  });

  it("spaces a grid evenly and ends exactly at its end", () => {
    expect(timeGrid(0, 100, 5)).toEqual([0, 25, 50, 75, 100]);
    expect(timeGrid(7, 7, 5)).toEqual([7]);
  });
});

describe("thinning for a chart", () => {
  it("keeps the first and last point of a rising series, the limit and the order", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 3_000 }),
        fc.integer({ min: 2, max: 400 }),
        (n, max) => {
          const ts = Array.from({ length: n }, (_, i) => i * 60_000);
          const out = thinRising(ts, max);
          expect(out.length).toBeLessThanOrEqual(max);
          expect(out[0]).toBe(0);
          expect(out.at(-1)).toBe(n - 1);
          for (let i = 1; i < out.length; i++) expect(out[i]!).toBeGreaterThan(out[i - 1]!);
        },
      ),
    );
  });

  it("keeps the same readings as thinSeries, so no peak or dip is hidden", () => {
    fc.assert(
      fc.property(
        fc.array(
          // Small whole numbers too, so equal extremes (ties) are met often.
          fc.tuple(
            fc.oneof(
              fc.integer({ min: -2, max: 2 }),
              fc.double({ min: -40, max: 120, noNaN: true }),
            ),
            fc.option(
              fc.oneof(
                fc.integer({ min: 95, max: 97 }),
                fc.double({ min: 0, max: 100, noNaN: true }),
              ),
            ),
          ),
          { minLength: 1, maxLength: 2_000 },
        ),
        fc.integer({ min: 1, max: 300 }),
        (values, max) => {
          const points: SeriesPoint[] = values.map(([t, rh], i) => ({
            tsMs: i * 60_000,
            tempC: t,
            rhPct: rh,
          }));
          const r: ReadingRow[] = points.map((p) => [p.tsMs, p.tempC, p.rhPct]);
          const kept = thinRows(r, max).map((i) => points[i]);
          expect(kept).toEqual(thinSeries(points, max));
        },
      ),
      { numRuns: 200 },
    );
  });

  it("keeps a one-minute spike in a week of readings", () => {
    const r: ReadingRow[] = Array.from({ length: 7 * 1440 }, (_, i) => [i * 60_000, 20, 97]);
    r[5_000] = [5_000 * 60_000, 71, 97]; // one hot minute (domain.md §7.5: 71 °C peak)
    r[9_000] = [9_000 * 60_000, 20, 60]; // one dry minute
    const kept = thinRows(r, 400);
    expect(kept.length).toBeLessThanOrEqual(400);
    expect(kept).toContain(5_000);
    expect(kept).toContain(9_000);
  });
});

describe("what people read", () => {
  it("shows maturity in °F·h as 1.8 × °C·h for US units (domain.md §8.4: 720 °C·h = 1296 °F·h)", () => {
    expect(displayTtf(720, "us")).toEqual({ value: "1,296", unit: "°F·h" });
    expect(displayTtf(720, "si")).toEqual({ value: "720", unit: "°C·h" });
  });

  it("shows the datum with the °F offset (domain.md §8.3: −10 °C = 14 °F)", () => {
    expect(displayDatum(-10, "us")).toBe("14 °F");
    expect(displayDatum(-10, "si")).toBe("-10 °C");
  });

  it("compares a break with the estimate at the time", () => {
    // 3000 psi = 20.684272 MPa (domain.md §8.3); a break 10 % over it is 22.7527 MPa.
    expectWithin(breakToEstimateRatio(22.7527, 20.684272)!, 1.1, 1e-4);
    expect(breakToEstimateRatio(20, null)).toBeNull();
    expect(breakToEstimateRatio(20, 0)).toBeNull();
  });

  it("makes a safe file name of a pour code", () => {
    expect(exportFileName("P-2611-01", "cure-history.csv")).toBe("P-2611-01-cure-history.csv");
    expect(exportFileName('Bed 4 / "A"', "cure-report.pdf")).toBe("Bed-4-A-cure-report.pdf");
    expect(exportFileName("///", "x.csv")).toBe("pour-x.csv");
  });
});
