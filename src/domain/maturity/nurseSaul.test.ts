import { describe, expect, it } from "vitest";
import { cToF } from "../units";
import { nurseSaulFromReadings, nurseSaulStep } from "./nurseSaul";
import { meanTempOverWindowC, MS_PER_H } from "./readings";
import { CAST_AT_MS, precastCycleReadings, readingsAt } from "./testFixtures";

/** Folds nurseSaulStep over intervals of constant temperature [tempC, hours]. */
const ttfOfConstantIntervals = (intervals: [number, number][], datumC: number): number =>
  intervals.reduce((ttf, [tempC, hours]) => nurseSaulStep(ttf, tempC, tempC, hours, datumC), 0);

/** `count` one-hour intervals at `tempC`. */
const hoursAt = (tempC: number, count: number): [number, number][] =>
  Array.from({ length: count }, () => [tempC, 1]);

const hourly = (n: number): number[] => Array.from({ length: n + 1 }, (_, i) => i);

describe("nurseSaulStep", () => {
  it.each([
    // domain.md §1.5 N-6 (ASTM C1074 Eq. 1; clip on the interval mean): −15 → −5 °C, datum −10 °C -> 0 °C·h
    { a: -15, b: -5, hours: 1, datumC: -10, ttfCH: 0 },
    // domain.md §1.5 N-7 (ASTM C1074 Eq. 1): 0.5 h at 25 °C, datum 0 °C -> 12.5 °C·h
    { a: 25, b: 25, hours: 0.5, datumC: 0, ttfCH: 12.5 },
    // domain.md §1.5 N-3 first interval (ASTM C1074 Eq. 1, trapezoid): 10 → 12 °C, datum −10 °C -> 21 °C·h
    { a: 10, b: 12, hours: 1, datumC: -10, ttfCH: 21 },
    // contracts.md strength: "a gap longer than 2 hours adds nothing" -> 3 h at 20 °C adds 0
    { a: 20, b: 20, hours: 3, datumC: 0, ttfCH: 0 },
    // contracts.md strength: exactly 2 h is not longer than 2 h, so it adds 2 × 20 = 40 °C·h
    { a: 20, b: 20, hours: 2, datumC: 0, ttfCH: 40 },
  ])(
    "adds $ttfCH °C·h for $a → $b °C over $hours h at datum $datumC °C",
    ({ a, b, hours, datumC, ttfCH }) => {
      expect(nurseSaulStep(0, a, b, hours, datumC)).toBeCloseTo(ttfCH, 9);
    },
  );

  it("adds to the previous temperature-time factor", () => {
    // domain.md §1.5 N-3 second interval (ASTM C1074 Eq. 1, trapezoid): 12 → 16 °C, datum −10 °C adds 24 °C·h
    expect(nurseSaulStep(21, 12, 16, 1, -10)).toBeCloseTo(45, 9);
  });

  it("refuses a negative interval", () => {
    // common practice: an interval runs forward in time; a negative one is a caller's error
    expect(() => nurseSaulStep(0, 20, 20, -1, 0)).toThrow(RangeError);
  });

  it.each([
    // domain.md §1.5 N-1 (ASTM C1074 Eq. 1): 24 h at 20 °C, datum 0 °C -> 480 °C·h
    { intervals: hoursAt(20, 24), datumC: 0, ttfCH: 480 },
    // domain.md §1.5 N-2 (ASTM C1074 Eq. 1): 24 h at 20 °C, datum −10 °C -> 720 °C·h
    { intervals: hoursAt(20, 24), datumC: -10, ttfCH: 720 },
    // domain.md §1.5 N-5 (clip at datum, §1.3): 6 h at −15 then 6 h at 5 °C, datum −10 °C -> 90 (not 60)
    { intervals: [...hoursAt(-15, 6), ...hoursAt(5, 6)], datumC: -10, ttfCH: 90 },
    // domain.md §1.5 N-8 (ASTM C1074 Eq. 1): 6 h @10, 6 h @20, 12 h @35, 24 h @50 °C, datum 0 °C -> 1800
    {
      intervals: [...hoursAt(10, 6), ...hoursAt(20, 6), ...hoursAt(35, 12), ...hoursAt(50, 24)],
      datumC: 0,
      ttfCH: 1800,
    },
    // domain.md §1.5 N-8: same history, datum −10 °C -> 2280 °C·h
    {
      intervals: [...hoursAt(10, 6), ...hoursAt(20, 6), ...hoursAt(35, 12), ...hoursAt(50, 24)],
      datumC: -10,
      ttfCH: 2280,
    },
  ])(
    "sums constant intervals to $ttfCH °C·h at datum $datumC °C",
    ({ intervals, datumC, ttfCH }) => {
      expect(ttfOfConstantIntervals(intervals, datumC)).toBeCloseTo(ttfCH, 9);
    },
  );
});

describe("nurseSaulFromReadings", () => {
  const n3 = readingsAt(hourly(4), [10, 12, 16, 20, 22]);

  it.each([
    // domain.md §1.5 N-3 (ASTM C1074 Eq. 1, trapezoid): hourly 10, 12, 16, 20, 22 °C, datum −10 °C -> 104 °C·h
    { datumC: -10, ttfCH: 104 },
    // domain.md §1.5 N-4 (ASTM C1074 Eq. 1, trapezoid): same readings, datum 0 °C -> 64 °C·h
    { datumC: 0, ttfCH: 64 },
  ])("gives $ttfCH °C·h for the hourly ramp at datum $datumC °C", ({ datumC, ttfCH }) => {
    expect(nurseSaulFromReadings(n3, datumC)).toEqual({
      ttfCH: expect.closeTo(ttfCH, 9),
      complete: true,
    });
  });

  it.each([
    // domain.md §1.5 N-9 and §7.6 (½-h readings, trapezoid): datum −10 °C -> 850 °C·h
    { datumC: -10, ttfCH: 850 },
    // domain.md §1.5 N-9 and §7.6: datum 0 °C -> 700 °C·h
    { datumC: 0, ttfCH: 700 },
  ])(
    "gives $ttfCH °C·h for the reference precast cycle at datum $datumC °C",
    ({ datumC, ttfCH }) => {
      expect(nurseSaulFromReadings(precastCycleReadings(), datumC).ttfCH).toBeCloseTo(ttfCH, 9);
    },
  );

  it.each([
    // domain.md §1.5 N-1 with hourly readings (ASTM C1074 Eq. 1): 24 h at 20 °C, datum 0 °C -> 480 °C·h
    { datumC: 0, ttfCH: 480 },
    // domain.md §1.5 N-2 with hourly readings: datum −10 °C -> 720 °C·h
    { datumC: -10, ttfCH: 720 },
  ])(
    "gives $ttfCH °C·h for a day of hourly readings at 20 °C, datum $datumC °C",
    ({ datumC, ttfCH }) => {
      const day = readingsAt(
        hourly(24),
        hourly(24).map(() => 20),
      );
      expect(nurseSaulFromReadings(day, datumC).ttfCH).toBeCloseTo(ttfCH, 9);
    },
  );

  it("reads °F readings with a °F datum as 1.8 times the °C·h", () => {
    const dayF = readingsAt(
      hourly(24),
      hourly(24).map(() => cToF(20)),
    );
    // domain.md §8.4: 480 °C·h (datum 0 °C) ⇔ 864 °F·h (datum 32 °F)
    expect(nurseSaulFromReadings(dayF, cToF(0)).ttfCH).toBeCloseTo(864, 9);
    // domain.md §8.4: 720 °C·h (datum −10 °C) ⇔ 1296 °F·h (datum 14 °F)
    expect(nurseSaulFromReadings(dayF, cToF(-10)).ttfCH).toBeCloseTo(1296, 9);
  });

  it("sorts readings that arrive out of order", () => {
    const shuffled = [n3[3], n3[0], n3[4], n3[2], n3[1]].filter((r) => r !== undefined);
    // domain.md §1.5 N-3: the same five readings in any order -> 104 °C·h
    expect(nurseSaulFromReadings(shuffled, -10).ttfCH).toBeCloseTo(104, 9);
  });

  it("keeps the first of two readings with the same timestamp", () => {
    const withDuplicate = [
      ...n3.slice(0, 2),
      { tsMs: CAST_AT_MS + MS_PER_H, tempC: 90 },
      ...n3.slice(2),
    ];
    // contracts.md readings: "the first stored value stands"; so still N-3's 104 °C·h
    expect(nurseSaulFromReadings(withDuplicate, -10).ttfCH).toBeCloseTo(104, 9);
  });

  it("skips a gap over 2 h and marks the record incomplete", () => {
    const gapped = readingsAt([0, 1, 4, 5], [20, 20, 20, 20]);
    // contracts.md strength: the 3 h gap adds nothing, complete_record false -> 2 × 20 = 40 °C·h at datum 0 °C
    expect(nurseSaulFromReadings(gapped, 0)).toEqual({
      ttfCH: expect.closeTo(40, 9),
      complete: false,
    });
  });

  it("gives zero for a single reading or none", () => {
    // ASTM C1074 Eq. 1 (domain.md §1.1): no interval, nothing to sum
    expect(nurseSaulFromReadings(n3.slice(0, 1), 0)).toEqual({ ttfCH: 0, complete: true });
    expect(nurseSaulFromReadings([], 0)).toEqual({ ttfCH: 0, complete: true });
  });
});

describe("meanTempOverWindowC", () => {
  const cycle = precastCycleReadings();
  const at = (h: number): number => CAST_AT_MS + h * MS_PER_H;

  it.each([
    // domain.md §7.6 cycle, arithmetic: 9–13 h hold at 60 °C and 13–15 h cooling (mean 40 °C) -> (4×60 + 2×40)/6
    { endH: 15, hours: 6, meanC: 320 / 6 },
    // domain.md §7.6 cycle: 5–11 h is all hold -> 60 °C
    { endH: 11, hours: 6, meanC: 60 },
    // domain.md §7.6 cycle: window from 13.75 h cuts a ½-h interval; linear 45 → 20 °C over 1.25 h -> 32.5 °C
    { endH: 15, hours: 1.25, meanC: 32.5 },
    // domain.md §7.6 cycle: 0–2 h preset at 20 °C, window reaching before the first reading -> 20 °C
    { endH: 2, hours: 6, meanC: 20 },
  ])(
    "is $meanC °C over the $hours h before $endH h of the precast cycle",
    ({ endH, hours, meanC }) => {
      expect(meanTempOverWindowC(cycle, at(endH), hours)).toBeCloseTo(meanC, 9);
    },
  );

  it("is null with fewer than two readings in the window", () => {
    // contracts.md strength forecast: no interval in the last 6 h, no mean to hold
    expect(meanTempOverWindowC(cycle.slice(0, 1), at(1), 6)).toBeNull();
  });

  it("leaves out a gap longer than 2 h", () => {
    const gapped = readingsAt([0, 1, 4, 5], [10, 10, 30, 30]);
    // contracts.md strength gap rule: the 1–4 h gap carries no time -> mean of 10 °C and 30 °C hours = 20 °C
    expect(meanTempOverWindowC(gapped, at(5), 6)).toBeCloseTo(20, 9);
  });
});
