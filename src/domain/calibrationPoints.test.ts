import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { MS_PER_H } from "./maturity/readings";
import {
  CAST_AT_MS,
  expectWithin,
  precastCycleReadings,
  readingsAt,
} from "./maturity/testFixtures";
import {
  ageUnitFromHeader,
  chartRangeCH,
  equivalentAgeAtConstantTempH,
  groupBreaks,
  guessLabColumns,
  maturityToCH,
  maturityUnitFromHeader,
  readLabNumber,
  readLabTable,
  readTempRecordText,
  rebasePointMaturity,
  recordAgeMismatch,
  recordMaturity,
  sampleCurve,
  strengthUnitFromHeader,
  thresholdStanding,
  ttfAtConstantTempCH,
  type LabReadOptions,
  type LabRow,
} from "./calibrationPoints";
import type { StrengthCurve } from "./strength/curves";
import { psiToMpa } from "./units";

/** E for Q = 5000 K with Plinth's R = 8.314 J/(mol·K) (domain.md §2.2, §2.3). */
const E_Q5000 = 5000 * 8.314;

describe("ttfAtConstantTempCH", () => {
  it.each([
    // domain.md §1.5 N-1: 24 h at 20 °C, datum 0 °C -> 480 °C·h
    { ageH: 24, tempC: 20, datumC: 0, ttf: 480 },
    // domain.md §1.5 N-2: the same with datum -10 °C -> 720 °C·h
    { ageH: 24, tempC: 20, datumC: -10, ttf: 720 },
    // domain.md §3.3 Set H: lab-cured at 23 °C, datum 0 -> M = 552 °C·h per day
    { ageH: 24, tempC: 23, datumC: 0, ttf: 552 },
    // domain.md §7.1 (ASTM C511, 23 °C) with ASTM C1074 Eq. 1, datum -10 °C: 7 d -> 168 × 33 = 5544
    { ageH: 168, tempC: 23, datumC: -10, ttf: 5544 },
    // domain.md §1.3: at or below the datum nothing is added
    { ageH: 48, tempC: -12, datumC: -10, ttf: 0 },
    { ageH: 0, tempC: 23, datumC: -10, ttf: 0 },
  ])("$ageH h at $tempC °C, datum $datumC °C -> $ttf °C·h", ({ ageH, tempC, datumC, ttf }) => {
    expectWithin(ttfAtConstantTempCH(ageH, tempC, datumC), ttf, 1e-9);
  });

  it("refuses a negative or non-finite age", () => {
    expect(() => ttfAtConstantTempCH(-1, 23, 0)).toThrow(RangeError);
    expect(() => ttfAtConstantTempCH(Number.NaN, 23, 0)).toThrow(RangeError);
    expect(() => ttfAtConstantTempCH(24, Number.NaN, 0)).toThrow(RangeError);
  });
});

describe("equivalentAgeAtConstantTempH", () => {
  it.each([
    // domain.md §2.5 E-1: 24 h at 30 °C, Q = 5000 K, Ts = 20 °C -> 42.127 h (±0.001)
    { ageH: 24, tempC: 30, te: 42.127, tol: 0.001 },
    // domain.md §2.5 E-3: 24 h at 20 °C -> 24 h exactly
    { ageH: 24, tempC: 20, te: 24, tol: 1e-9 },
    // domain.md §2.3 table, Q = 5000 K, Ts = 20 °C: α(23 °C) = 1.1886 (±5e-4 per hour)
    { ageH: 1, tempC: 23, te: 1.1886, tol: 5e-4 },
  ])("$ageH h at $tempC °C -> $te h", ({ ageH, tempC, te, tol }) => {
    expectWithin(equivalentAgeAtConstantTempH(ageH, tempC, E_Q5000), te, tol);
  });
});

describe("recordMaturity", () => {
  it("reads a specimen's record as a pour's sensors are read", () => {
    // domain.md §1.5 N-3 and N-4: hourly 10, 12, 16, 20, 22 °C -> 104 °C·h (datum -10), 64 (datum 0)
    const record = readingsAt([0, 1, 2, 3, 4], [10, 12, 16, 20, 22]);
    const m = recordMaturity(record, -10, E_Q5000);
    expectWithin(m.ttfCH, 104, 1e-9);
    expect(m.spanH).toBe(4);
    expect(m.complete).toBe(true);
    expect(m.readingCount).toBe(5);
    expectWithin(recordMaturity(record, 0, E_Q5000).ttfCH, 64, 1e-9);
  });

  it("gives the precast cycle's maturity and equivalent age", () => {
    // domain.md §1.5 N-9: 850 °C·h (datum -10); §2.5 E-5: te = 78.622 h (Q = 5000 K, Ts = 20 °C)
    const m = recordMaturity(precastCycleReadings(), -10, E_Q5000);
    expectWithin(m.ttfCH, 850, 1e-9);
    expectWithin(m.equivalentAgeH, 78.622, 0.01);
    expect(m.spanH).toBe(15);
  });

  it("marks a record with a gap over 2 h incomplete (Plinth contract's gap rule)", () => {
    const m = recordMaturity(readingsAt([0, 1, 4, 5], [23, 23, 23, 23]), -10, E_Q5000);
    expect(m.complete).toBe(false);
    // The 3 h gap adds nothing: 2 intervals of 1 h at 33 °C above the datum.
    expectWithin(m.ttfCH, 66, 1e-9);
  });

  it("refuses a record of fewer than two instants", () => {
    expect(() => recordMaturity(readingsAt([0, 0], [23, 24]), -10, E_Q5000)).toThrow(RangeError);
  });
});

describe("recordAgeMismatch", () => {
  it.each([
    // Plinth policy: within 1 h, or 5 % of the age when that is more.
    { spanH: 24, ageH: 24, ok: true },
    { spanH: 23.5, ageH: 24, ok: true },
    { spanH: 22.5, ageH: 24, ok: false },
    { spanH: 160, ageH: 168, ok: true },
    { spanH: 150, ageH: 168, ok: false },
    { spanH: 30, ageH: 24, ok: false },
  ])("a $spanH h record for a $ageH h break: $ok", ({ spanH, ageH, ok }) => {
    const why = recordAgeMismatch(spanH, ageH);
    if (ok) expect(why).toBeNull();
    else expect(why).toMatch(/the record covers .* h but the cylinders were broken at/);
  });
});

describe("rebasePointMaturity", () => {
  it("moves a lab-cured point to a new datum exactly", () => {
    // 24 h at 23 °C: 792 °C·h at datum -10 (ASTM C1074 Eq. 1); at datum 0 it is 552 (domain.md §3.3).
    const moved = rebasePointMaturity({ ageH: 24, ttfCH: 792 }, -10, 0, E_Q5000)!;
    expectWithin(moved.ttfCH, 552, 1e-9);
    // domain.md §2.3: α(23 °C) = 1.1886 at Q = 5000 K, Ts = 20 °C -> 28.526 h for 24 h
    expectWithin(moved.equivalentAgeH, 24 * 1.1886, 24 * 5e-4);
  });

  it("cannot move a point without an age", () => {
    expect(rebasePointMaturity({ ageH: null, ttfCH: 792 }, -10, 0, E_Q5000)).toBeNull();
  });

  it("comes back to the same maturity after moving there and back (property)", () => {
    fc.assert(
      fc.property(
        fc.double({ min: 1, max: 2000, noNaN: true }),
        fc.double({ min: 5, max: 80, noNaN: true }),
        fc.double({ min: -15, max: 4, noNaN: true }),
        fc.double({ min: -15, max: 4, noNaN: true }),
        (ageH, tempC, d1, d2) => {
          const ttfCH = ttfAtConstantTempCH(ageH, tempC, d1);
          const there = rebasePointMaturity({ ageH, ttfCH }, d1, d2, E_Q5000)!;
          expect(there.ttfCH).toBeCloseTo(ttfAtConstantTempCH(ageH, tempC, d2), 6);
          const back = rebasePointMaturity({ ageH, ttfCH: there.ttfCH }, d2, d1, E_Q5000)!;
          expect(back.ttfCH).toBeCloseTo(ttfCH, 6);
        },
      ),
    );
  });
});

// domain.md §3.3 Set H in maturity units (M = 552·t °C·h): Su 45 MPa, k 0.35/552 per °C·h, M0 138 °C·h.
const CURVE_H: StrengthCurve = { model: "hyperbolic", suMpa: 45, kPerCH: 0.35 / 552, m0CH: 138 };
const SET_H_CH = [1, 3, 7, 14, 28].map((t) => 552 * t);

describe("thresholdStanding", () => {
  it("finds the maturity a threshold needs and where it lies against the breaks", () => {
    // domain.md §3.3 inverse: 20 MPa at te = 2.5357 d -> 2.5357 × 552 = 1399.7 °C·h
    const at20 = thresholdStanding(CURVE_H, 20, SET_H_CH);
    expectWithin(at20.ttfCH!, 2.5357 * 552, 0.1);
    expect(at20.standing).toBe("within");
    // 30 MPa at 5.9643 d (domain.md §3.3), still within 1 to 28 d
    expectWithin(thresholdStanding(CURVE_H, 30, SET_H_CH).ttfCH!, 5.9643 * 552, 0.1);
    // 5 MPa comes before the 1-day break (9.3564 MPa, domain.md §3.3): read below the data
    expect(thresholdStanding(CURVE_H, 5, SET_H_CH).standing).toBe("below");
    // 42 MPa comes after the 28-day break (40.7993 MPa): read above the data
    expect(thresholdStanding(CURVE_H, 42, SET_H_CH).standing).toBe("above");
    // At or above Su = 45 MPa the hyperbolic curve never gets there
    expect(thresholdStanding(CURVE_H, 45, SET_H_CH)).toEqual({
      ttfCH: null,
      standing: "unreachable",
    });
  });
});

describe("sampleCurve and chartRangeCH", () => {
  it("draws from one end to the other, evenly on a log scale, never below 0", () => {
    // domain.md §3.3 log fit of Set H: a = -50.0515, b = 22.2045 MPa/decade
    const log: StrengthCurve = { model: "log", aMpa: -50.0515, bMpaPerDecade: 22.2045 };
    const pts = sampleCurve(log, 100, 20_000, 32);
    expect(pts).toHaveLength(32);
    expect(pts[0]!.ttfCH).toBe(100);
    expect(pts.at(-1)!.ttfCH).toBe(20_000);
    const ratios = pts.slice(1).map((p, i) => p.ttfCH / pts[i]!.ttfCH);
    for (const r of ratios) expect(r).toBeCloseTo(ratios[0]!, 9);
    expect(pts.every((p) => p.strengthMpa >= 0)).toBe(true);
    // Below 10^(50.0515/22.2045) = 179.6 °C·h the log form is negative, and the estimate floors at 0.
    expect(pts[0]!.strengthMpa).toBe(0);
    // domain.md §3.3 prediction at 552 °C·h: 10.832 MPa
    expectWithin(sampleCurve(log, 552, 15456, 2)[0]!.strengthMpa, 10.832, 1e-3);
  });

  it("keeps the breaks and the thresholds in view, but not a threshold far past them", () => {
    expect(chartRangeCH([552, 15456], [1400, null])).toEqual({ fromCH: 276, toCH: 15456 * 1.5 });
    expect(chartRangeCH([552, 15456], [100])).toEqual({ fromCH: 50, toCH: 15456 * 1.5 });
    expect(chartRangeCH([552, 1000], [1e9])).toEqual({ fromCH: 276, toCH: 10_000 * 1.5 });
  });
});

describe("readTempRecordText", () => {
  it("reads times with an offset, plant wall times and °F, skipping a line of names", () => {
    const text = [
      "time,temp",
      "2026-03-02T00:00:00Z,23.0",
      "2026-03-02 00:30,73.4 °F", // America/Chicago, CST (UTC−06:00) on 2 March 2026
      "",
      "2026-03-02 01:00;23,5",
      "yesterday,20",
    ].join("\n");
    const { readings, errors } = readTempRecordText(text, {
      timeZone: "America/Chicago",
      tempUnit: "c",
    });
    expect(readings).toHaveLength(3);
    expect(readings[0]).toEqual({ tsMs: Date.UTC(2026, 2, 2, 0, 0), tempC: 23 });
    expect(readings[1]!.tsMs).toBe(Date.UTC(2026, 2, 2, 6, 30));
    // domain.md §8.3: 23 °C = 73.4 °F
    expectWithin(readings[1]!.tempC, 23, 1e-9);
    expect(readings[2]).toEqual({ tsMs: Date.UTC(2026, 2, 2, 7, 0), tempC: 23.5 });
    expect(errors).toEqual([{ line: 6, error: expect.stringContaining('the time "yesterday"') }]);
  });

  it("takes bare numbers in the chosen unit", () => {
    const { readings } = readTempRecordText("2026-03-02T00:00:00Z,68", {
      timeZone: "UTC",
      tempUnit: "f",
    });
    // domain.md §8.3: 68 °F = 20 °C
    expectWithin(readings[0]!.tempC, 20, 1e-9);
  });
});

describe("reading a lab file's cells", () => {
  it.each([
    ["4150", true, 4150, null],
    ["4,150", true, 4150, null],
    ["4 150 psi", true, 4150, "psi"],
    ["28.6", false, 28.6, null],
    ["28,6", false, 28.6, null],
    ["4,150", false, 4.15, null],
    ["7 d", false, 7, "d"],
    ["24h", false, 24, "h"],
    ["1,234.5", true, 1234.5, null],
  ] as const)("%s (thousands %s) -> %d %s", (raw, thousands, value, unit) => {
    expect(readLabNumber(raw, thousands)).toEqual({ value, unit });
  });

  it.each(["", "abc", "4..1", "-"])("refuses %j", (raw) => {
    expect(readLabNumber(raw, true)).toBeNull();
  });

  it.each([
    ["Age (days)", "d"],
    ["age_h", "h"],
    ["Age, hours", "h"],
    ["Days", "d"],
    ["Age", null],
  ] as const)("age header %s -> %s", (h, unit) => expect(ageUnitFromHeader(h)).toBe(unit));

  it.each([
    ["Strength (psi)", "psi"],
    ["strength_mpa", "mpa"],
    ["f'c N/mm2", "mpa"],
    ["Strength", null],
  ] as const)("strength header %s -> %s", (h, unit) =>
    expect(strengthUnitFromHeader(h)).toBe(unit),
  );

  it.each([
    ["Maturity (°C·h)", "c_h"],
    ["ttf_c_h", "c_h"],
    ["Maturity °C-days", "c_d"],
    ["TTF (°F-hr)", "f_h"],
    ["Maturity", "c_h"],
  ] as const)("maturity header %s -> %s", (h, unit) =>
    expect(maturityUnitFromHeader(h)).toBe(unit),
  );

  it("converts maturity units to °C·h", () => {
    // domain.md §8.4: 864 °F·h (datum 32 °F) = 480 °C·h (datum 0 °C)
    expectWithin(maturityToCH(864, "f_h"), 480, 1e-9);
    expect(maturityToCH(20, "c_d")).toBe(480);
    expect(maturityToCH(480, "c_h")).toBe(480);
  });

  it("proposes columns from a lab's header names", () => {
    expect(
      guessLabColumns([
        "Cylinder",
        "Age (d)",
        "Compressive strength (psi)",
        "Curing temp (°F)",
        "Tested",
      ]),
    ).toEqual({ specimen: 0, age: 1, strength: 2, maturity: null, curing_temp: 3, broken_at: 4 });
    expect(guessLabColumns(["specimen", "age_h", "strength_mpa", "ttf_c_h"])).toEqual({
      specimen: 0,
      age: 1,
      strength: 2,
      maturity: 3,
      curing_temp: null,
      broken_at: null,
    });
    expect(guessLabColumns(["ID", "Temperature-time factor", "f'c"]).maturity).toBe(1);
  });
});

const options: LabReadOptions = {
  ageUnit: null,
  strengthUnit: null,
  tempUnit: null,
  defaultCuringTempC: null,
  datumC: -10,
  activationEnergyJMol: E_Q5000,
  timeZone: "America/Chicago",
};

const csvRows = (text: string) => text.split("\n").map((l) => l.split(","));

describe("readLabTable", () => {
  it("reads a lab's sheet, one row a cylinder, into one point an age", () => {
    const table = [
      ["Brindle Hollow lab", "", ""],
      ["Specimen", "Age (days)", "Strength (psi)"],
      ["A-1", "1", "4100"],
      ["A-2", "1", "4200"],
      ["", "", ""],
      ["A-3", "3", "6,900"],
      ["A-4", "7", "8650"],
    ];
    const r = readLabTable(table, { ...options, defaultCuringTempC: 23 });
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    const t = r.table;
    expect(t.headerRow).toBe(2);
    expect(t.units).toEqual({ age: "d", strength: "psi", temp: null, maturity: "c_h" });
    expect(t.errors).toEqual([]);
    expect(t.rows.map((x) => x.row)).toEqual([3, 4, 6, 7]);
    expect(t.points).toHaveLength(3);
    const first = t.points[0]!;
    expect(first.ageH).toBe(24);
    // ASTM C511 lab curing at 23 °C (domain.md §7.1), datum -10: 24 × 33 = 792 °C·h (ASTM C1074 Eq. 1)
    expectWithin(first.ttfCH, 792, 1e-9);
    // mean of 4100 and 4200 psi; 1 psi = 6894.757 Pa (domain.md §8.3)
    expectWithin(first.strengthMpa, psiToMpa(4150), 1e-12);
    expect(first.cylinderCount).toBe(2);
    expect(first.specimens).toBe("A-1, A-2");
    expectWithin(first.rangePct!, (100 / 4150) * 100, 1e-9);
    // α(23 °C) = 1.1886 at Q = 5000 K (domain.md §2.3)
    expectWithin(first.equivalentAgeH!, 24 * 1.1886, 24 * 5e-4);
    expect(t.points[1]!.ageH).toBe(72);
    expectWithin(t.points[1]!.strengthMpa, psiToMpa(6900), 1e-12);
    expect(t.warnings).toEqual([]);
  });

  it("takes the file's maturity and curing temperatures, in MPa with decimal commas", () => {
    const table = [
      ["specimen", "age_h", "strength_mpa", "Maturity (°F-hr)", "Curing temp (°F)", "Tested"],
      ["S1", "24", "28,6", "864", "", "2026-03-02"],
      ["S2", "72", "35,0", "", "73.4", "03/05/2026"],
    ];
    const r = readLabTable(table, options);
    if (!r.ok) throw new Error(r.error);
    const [a, b] = r.table.rows;
    // domain.md §8.4: 864 °F·h = 480 °C·h
    expectWithin(a!.ttfCH, 480, 1e-9);
    expect(a!.curingTempC).toBeNull();
    expectWithin(a!.strengthMpa, 28.6, 1e-12);
    // noon in America/Chicago on 2 March 2026 (CST, UTC−06:00)
    expect(a!.brokenAtMs).toBe(Date.UTC(2026, 2, 2, 18));
    // 73.4 °F = 23 °C (domain.md §8.3) for 72 h, datum -10: 72 × 33 = 2376 °C·h (ASTM C1074 Eq. 1)
    expectWithin(b!.curingTempC!, 23, 1e-9);
    expectWithin(b!.ttfCH, 2376, 1e-9);
    expect(b!.brokenAtMs).toBe(Date.UTC(2026, 2, 5, 18));
    expect(r.table.units.temp).toBe("f");
  });

  it("lists each row it cannot read, with why, and keeps the others", () => {
    const table = csvRows(
      [
        "Cylinder,Age,Strength (psi),Curing temp",
        "C1,1,abc,23",
        "C2,1,4150,23",
        "C3,2 d,4150,-10",
        "C4,3 d,4150,",
        "C5,3 d,50,23",
        "C6,3 d,5000,23",
        "C7,3 weeks,5000,23",
      ].join("\n"),
    );
    const r = readLabTable(table, { ...options, tempUnit: "c" });
    if (!r.ok) throw new Error(r.error);
    expect(r.table.errors).toEqual([
      { row: 2, error: 'the strength "abc" is not a number' },
      { row: 3, error: "the age unit is not known: choose days or hours" },
      { row: 4, error: expect.stringContaining("is not above the mix's datum temperature") },
      { row: 5, error: expect.stringContaining("no maturity and no curing temperature") },
      { row: 6, error: expect.stringContaining("is outside 100 to 30,000 psi") },
      { row: 8, error: 'the age "3 weeks" has an unknown unit' },
    ]);
    expect(r.table.rows.map((x) => x.row)).toEqual([7]);
    expect(r.table.rows[0]!.ageH).toBe(72);
  });

  it("warns when the cylinders of one age differ by more than 10 % of their mean", () => {
    // domain.md §3.2 (from memory): a pair whose range exceeds 10 % of its mean needs another specimen
    const table = csvRows(
      "Specimen,Age (d),Strength (psi)\nA,3,6000\nB,3,6700\nC,7,8000\nD,7,8100",
    );
    const r = readLabTable(table, { ...options, defaultCuringTempC: 23 });
    if (!r.ok) throw new Error(r.error);
    expect(r.table.warnings).toEqual([
      expect.stringMatching(/^The 2 cylinders at 3 d differ by 11 % of their mean/),
    ]);
  });

  it("refuses a file with no header naming a strength and an age or maturity", () => {
    const r = readLabTable(csvRows("a,b\n1,2"), options);
    expect(r).toEqual({ ok: false, error: expect.stringContaining("No header row") });
  });
});

describe("groupBreaks", () => {
  const row = (over: Partial<LabRow>): LabRow => ({
    row: 1,
    specimen: null,
    ageH: 24,
    strengthMpa: 30,
    ttfCH: 792,
    equivalentAgeH: null,
    curingTempC: null,
    brokenAtMs: null,
    ...over,
  });

  it("pairs each age's mean strength with its mean maturity (ASTM C1074 calibration, domain.md §3.2)", () => {
    const points = groupBreaks([
      row({ row: 2, ageH: 72, strengthMpa: 40, ttfCH: 2300 }),
      row({ row: 3, ageH: 72, strengthMpa: 44, ttfCH: 2400 }),
      row({ row: 4, ageH: null, strengthMpa: 20, ttfCH: 500 }),
      row({ row: 5, ageH: 24, strengthMpa: 30, ttfCH: 792, brokenAtMs: 5 }),
    ]);
    expect(points.map((p) => [p.ageH, p.ttfCH, p.strengthMpa, p.rows])).toEqual([
      [24, 792, 30, [5]],
      [72, 2350, 42, [2, 3]],
      [null, 500, 20, [4]],
    ]);
    expect(points[0]!.brokenAtMs).toBe(5);
    expect(points[0]!.rangePct).toBeNull();
  });
});

describe("the lab's cast time does not matter to a record", () => {
  it("gives the same maturity wherever the record starts", () => {
    const shifted = readingsAt([0, 1, 2, 3, 4], [10, 12, 16, 20, 22]).map((r) => ({
      ...r,
      tsMs: r.tsMs + 17 * MS_PER_H - CAST_AT_MS + Date.UTC(2025, 0, 1),
    }));
    // domain.md §1.5 N-3: 104 °C·h
    expectWithin(recordMaturity(shifted, -10, E_Q5000).ttfCH, 104, 1e-9);
  });
});
