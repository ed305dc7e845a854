import { describe, expect, it } from "vitest";
import { fToC } from "../units";
import { ageConversionFactor, equivalentAgeFromReadings, equivalentAgeStep } from "./arrhenius";
import { nurseSaulStep } from "./nurseSaul";
import { precastCycleReadings, readingsAt, expectWithin } from "./testFixtures";

/** R of domain.md §0, used for its [D] values quoted in kJ/mol. */
const R_SHEET = 8.314462618;
/** E such that E/R = 5000 K with Plinth's R = 8.314 (domain.md §2.3 "Q = 5000 K"). */
const E_Q5000 = 5000 * 8.314;

const hoursAt = (tempC: number, count: number): number[] =>
  Array.from({ length: count }, () => tempC);
/** Folds equivalentAgeStep over one-hour intervals at the given constant temperatures. */
const ageOfHourlyTemps = (tempsC: number[], refTempC: number): number =>
  tempsC.reduce(
    (ageH, t) => equivalentAgeStep(ageH, t, t, 1, { activationEnergyJMol: E_Q5000, refTempC }),
    0,
  );

describe("ageConversionFactor", () => {
  const temps = [-10, -5, 0, 5, 10, 15, 20, 23, 30, 40, 50, 60, 70];
  // domain.md §2.3 table, Q = 5000 K, Ts = 20 °C (ASTM C1074 Eq. 2), ±5e-4
  const ts20 = [
    0.1431, 0.2039, 0.2868, 0.3986, 0.5475, 0.7438, 1, 1.1886, 1.7553, 2.9723, 4.8716, 7.7513,
    12.0038,
  ];
  // domain.md §2.3 table, Q = 5000 K, Ts = 23 °C (ASTM C1074 Eq. 2), ±5e-4
  const ts23 = [
    0.1204, 0.1715, 0.2413, 0.3354, 0.4606, 0.6258, 0.8413, 1, 1.4768, 2.5006, 4.0986, 6.5214,
    10.0991,
  ];

  it.each(temps.map((t, i) => ({ t, ts20: ts20[i], ts23: ts23[i] })))(
    "matches the Q = 5000 K table at $t °C",
    ({ t, ts20: a20, ts23: a23 }) => {
      // domain.md §2.3 Q = 5000 K rows (ASTM C1074 Eq. 2), ±5e-4
      expectWithin(
        ageConversionFactor(t, { activationEnergyJMol: E_Q5000 }),
        a20 ?? Number.NaN,
        5e-4,
      );
      expectWithin(
        ageConversionFactor(t, { activationEnergyJMol: E_Q5000, refTempC: 23 }),
        a23 ?? Number.NaN,
        5e-4,
      );
    },
  );

  it.each([
    // domain.md §2.3 E = 40 kJ/mol, Ts = 20 °C, ±5e-4
    { e: 40_000, ts: 20, t: 10, alpha: 0.5601 },
    { e: 40_000, ts: 20, t: 30, alpha: 1.7183 },
    { e: 40_000, ts: 20, t: 40, alpha: 2.8523 },
    { e: 40_000, ts: 20, t: 60, alpha: 7.1736 },
    // domain.md §2.3 E = 40 kJ/mol, Ts = 23 °C
    { e: 40_000, ts: 23, t: 10, alpha: 0.4743 },
    { e: 40_000, ts: 23, t: 30, alpha: 1.4551 },
    { e: 40_000, ts: 23, t: 40, alpha: 2.4154 },
    // domain.md §2.3 E = 45 kJ/mol, Ts = 20 °C
    { e: 45_000, ts: 20, t: 10, alpha: 0.521 },
    { e: 45_000, ts: 20, t: 30, alpha: 1.8386 },
    { e: 45_000, ts: 20, t: 40, alpha: 3.2516 },
    { e: 45_000, ts: 20, t: 60, alpha: 9.1771 },
    // domain.md §2.3 E = 45 kJ/mol, Ts = 23 °C
    { e: 45_000, ts: 23, t: 10, alpha: 0.4321 },
    { e: 45_000, ts: 23, t: 30, alpha: 1.525 },
    { e: 45_000, ts: 23, t: 40, alpha: 2.6969 },
    // domain.md §2.3 E = 33.5 kJ/mol constant, Ts = 20 °C
    { e: 33_500, ts: 20, t: 10, alpha: 0.6154 },
    { e: 33_500, ts: 20, t: 30, alpha: 1.5736 },
    { e: 33_500, ts: 20, t: 40, alpha: 2.4056 },
    // domain.md §2.3 FHP temperature-dependent E (formula from memory), factor at the E it gives: 10 °C, 48.2 kJ/mol
    { e: 48_200, ts: 20, t: 10, alpha: 0.4974 },
    // domain.md §2.3 FHP (from memory): 5 °C, 55.55 kJ/mol
    { e: 55_550, ts: 20, t: 5, alpha: 0.2926 },
    // domain.md §2.3 FHP (from memory): 0 °C, 62.9 kJ/mol
    { e: 62_900, ts: 20, t: 0, alpha: 0.1511 },
  ])("is $alpha at $t °C for E = $e J/mol, Ts = $ts °C", ({ e, ts, t, alpha }) => {
    expectWithin(
      ageConversionFactor(t, { activationEnergyJMol: e, refTempC: ts, gasConstantJMolK: R_SHEET }),
      alpha,
      5e-4,
    );
  });

  it("reproduces the published NIST factors to 25 °C for E = 38.2 kJ/mol", () => {
    const params = { activationEnergyJMol: 38_200, refTempC: 25 };
    // domain.md §2.4 (NIST online paper, Table IX text): 0.585 at 15 °C, ±0.002
    expectWithin(ageConversionFactor(15, params), 0.585, 0.002);
    // domain.md §2.4 (NIST online paper, Table IX text): 1.65 at 35 °C, ±0.005
    expectWithin(ageConversionFactor(35, params), 1.65, 0.005);
  });

  it("gives the same factor for 86 °F converted as for 30 °C", () => {
    // domain.md §8.4: 86 °F must give the 30 °C factor, 1.7553 at Q = 5000 K, Ts = 20 °C
    expectWithin(ageConversionFactor(fToC(86), { activationEnergyJMol: E_Q5000 }), 1.7553, 5e-4);
  });

  it("is not the Nurse-Saul ratio at steam-curing temperatures", () => {
    // domain.md §2.3 "Nurse-Saul equivalents": at 60 °C Arrhenius (Q = 5000 K) gives 7.75 ...
    expectWithin(ageConversionFactor(60, { activationEnergyJMol: E_Q5000 }), 7.7513, 5e-4);
    // ... against Nurse-Saul's (60 + 10)/(20 + 10) = 2.3333 (datum −10 °C)
    expectWithin(nurseSaulStep(0, 60, 60, 1, -10) / nurseSaulStep(0, 20, 20, 1, -10), 2.3333, 5e-4);
  });

  it("refuses a temperature at or below absolute zero and a non-positive energy", () => {
    // common practice: the Arrhenius function needs kelvin above zero and E > 0
    expect(() => ageConversionFactor(-273.15, { activationEnergyJMol: E_Q5000 })).toThrow(
      RangeError,
    );
    expect(() => ageConversionFactor(20, { activationEnergyJMol: 0 })).toThrow(RangeError);
  });
});

describe("equivalentAgeStep", () => {
  it.each([
    // domain.md §2.5 E-1 (ASTM C1074 Eq. 2): 24 h at 30 °C, Q = 5000 K, Ts = 20 °C -> 42.127 h ±0.001
    { tempsC: hoursAt(30, 24), ts: 20, ageH: 42.127, tol: 0.001 },
    // domain.md §2.5 E-2: same, Ts = 23 °C -> 35.442 h ±0.001
    { tempsC: hoursAt(30, 24), ts: 23, ageH: 35.442, tol: 0.001 },
    // domain.md §2.5 E-3: 24 h at 20 °C, Ts = 20 °C -> 24 h, 1e-9
    { tempsC: hoursAt(20, 24), ts: 20, ageH: 24, tol: 1e-9 },
    // domain.md §2.5 E-4: 6 h @10, 6 h @20, 12 h @35, 24 h @50 °C, Q = 5000 K, Ts = 20 °C -> 153.730 h ±0.01
    {
      tempsC: [...hoursAt(10, 6), ...hoursAt(20, 6), ...hoursAt(35, 12), ...hoursAt(50, 24)],
      ts: 20,
      ageH: 153.73,
      tol: 0.01,
    },
  ])("sums to $ageH h at Ts = $ts °C", ({ tempsC, ts, ageH, tol }) => {
    expectWithin(ageOfHourlyTemps(tempsC, ts), ageH, tol);
  });

  it("takes the factor at the interval mean temperature", () => {
    // domain.md §2.5 E-5 method (trapezoid interval mean): 20 → 40 °C over 1 h uses α(30 °C) = 1.7553
    expectWithin(equivalentAgeStep(0, 20, 40, 1, { activationEnergyJMol: E_Q5000 }), 1.7553, 5e-4);
  });

  it("adds nothing over a gap longer than 2 h", () => {
    // contracts.md strength: "a gap longer than 2 hours adds nothing"
    expect(equivalentAgeStep(5, 20, 20, 2.5, { activationEnergyJMol: E_Q5000 })).toBe(5);
  });

  it("still adds below freezing, since Arrhenius has no datum", () => {
    // domain.md §2.1: α never reaches zero; −10 °C at Q = 5000 K, Ts = 20 °C is 0.1431 (§2.3)
    expectWithin(
      equivalentAgeStep(0, -10, -10, 1, { activationEnergyJMol: E_Q5000 }),
      0.1431,
      5e-4,
    );
  });
});

describe("equivalentAgeFromReadings", () => {
  it.each([
    // domain.md §2.5 E-5 (precast cycle §7.6, ½-h readings, trapezoid), Q = 5000 K, Ts = 20 °C -> 78.622 h ±0.01
    { ts: 20, ageH: 78.622 },
    // domain.md §2.5 E-5: Ts = 23 °C -> 66.147 h ±0.01
    { ts: 23, ageH: 66.147 },
  ])("gives $ageH h for the precast cycle at Ts = $ts °C", ({ ts, ageH }) => {
    const result = equivalentAgeFromReadings(precastCycleReadings(), {
      activationEnergyJMol: E_Q5000,
      refTempC: ts,
    });
    expectWithin(result.equivalentAgeH, ageH, 0.01);
    expect(result.complete).toBe(true);
  });

  it("skips a gap and marks the record incomplete", () => {
    const gapped = readingsAt([0, 1, 4, 5], [20, 20, 20, 20]);
    // contracts.md strength: the 3 h gap adds nothing; at 20 °C = Ts each hour is 1 h (E-3) -> 2 h, incomplete
    expect(equivalentAgeFromReadings(gapped, { activationEnergyJMol: E_Q5000 })).toEqual({
      equivalentAgeH: expect.closeTo(2, 9),
      complete: false,
    });
  });
});
