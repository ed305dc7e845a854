import fc from "fast-check";
import { levenbergMarquardt as referenceLm } from "ml-levenberg-marquardt";
import regression from "regression";
import { linearRegression, linearRegressionLine, rSquared } from "simple-statistics";
import { describe, expect, it } from "vitest";
import { ageConversionFactor, equivalentAgeFromReadings } from "../maturity/arrhenius";
import { maturityFromHistory } from "../maturity/accumulator";
import { meanTempOverWindowC, MS_PER_H } from "../maturity/readings";
import { CAST_AT_MS, expectWithin, precastCycleReadings } from "../maturity/testFixtures";
import { psiToMpa } from "../units";
import {
  datumAndActivationFromRates,
  fitStrengthCurve,
  FORECAST_WINDOW_H,
  forecastThresholdAt,
  maturityForStrength,
  strengthAt,
  type StrengthCurve,
  type StrengthPoint,
} from "./curves";

// domain.md §3.3: Set H and Set X are cured at 23 °C, so M = 23 × 24 × t °C·h (datum 0 °C) = 552·t.
const CH_PER_DAY = 552;
const AGES_D = [1, 3, 7, 14, 28];
const hyperbolicD = (t: number): number => (45 * 0.35 * (t - 0.25)) / (1 + 0.35 * (t - 0.25));
const exponentialD = (t: number): number => 50 * Math.exp(-((1.2 / t) ** 0.9));
/** domain.md §3.3 Set H, exact (Su 45 MPa, k 0.35 1/d, t0 0.25 d). */
const SET_H: StrengthPoint[] = AGES_D.map((t) => ({
  ttfCH: CH_PER_DAY * t,
  strengthMpa: hyperbolicD(t),
}));
/** domain.md §3.3 Set X, exact (Su 50 MPa, τ 1.2 d, β 0.9). */
const SET_X: StrengthPoint[] = AGES_D.map((t) => ({
  ttfCH: CH_PER_DAY * t,
  strengthMpa: exponentialD(t),
}));
/** Set H in maturity units: k per °C·h, M0 in °C·h. */
const CURVE_H: StrengthCurve = {
  model: "hyperbolic",
  suMpa: 45,
  kPerCH: 0.35 / CH_PER_DAY,
  m0CH: 0.25 * CH_PER_DAY,
};
const CURVE_X: StrengthCurve = {
  model: "exponential",
  suMpa: 50,
  tauCH: 1.2 * CH_PER_DAY,
  beta: 0.9,
};
/** Set H with a fixed scatter of a few tenths of an MPa, for cross-checks that are not exact fits. */
const SCATTER = [0.4, -0.3, 0.5, -0.2, 0.1];
const SET_H_SCATTERED = SET_H.map((p, i) => ({
  ...p,
  strengthMpa: p.strengthMpa + (SCATTER[i] ?? 0),
}));

const relClose = (actual: number, expected: number, rel: number) =>
  expectWithin(actual, expected, rel * Math.abs(expected));

describe("strengthAt", () => {
  it.each([
    // h: domain.md §3.3 Set H table (Carino hyperbolic); x: §3.3 Set X (Freiesleben Hansen exponential)
    { t: 1, h: 9.3564, x: 15.3898 },
    { t: 3, h: 22.0701, x: 32.2539 },
    { t: 7, h: 31.6171, x: 40.7531 },
    { t: 14, h: 37.2581, x: 44.8103 },
    { t: 28, h: 40.7993, x: 47.1483 },
  ])("reads the synthetic sets at $t d", ({ t, h, x }) => {
    // domain.md §3.3 Set H, ±5e-4 (rounding of the table)
    expectWithin(strengthAt(CURVE_H, CH_PER_DAY * t), h, 5e-4);
    // domain.md §3.3 Set X, ±5e-4
    expectWithin(strengthAt(CURVE_X, CH_PER_DAY * t), x, 5e-4);
  });

  it("is never negative", () => {
    const log: StrengthCurve = { model: "log", aMpa: -50.0515, bMpaPerDecade: 22.2045 };
    // common practice: no concrete has negative strength; log form below 10^(50.05/22.2) °C·h would be
    expect(strengthAt(log, 100)).toBe(0);
    // domain.md §3.1: hyperbolic strength starts at t0 (M0); before it the estimate is 0
    expect(strengthAt(CURVE_H, 100)).toBe(0);
    // domain.md §3.1: exponential S → 0 as M → 0
    expect(strengthAt(CURVE_X, 0)).toBe(0);
  });
});

describe("fitStrengthCurve: log", () => {
  const fit = fitStrengthCurve("log", SET_H);

  it("gives the sheet's coefficients and R² on Set H", () => {
    if (fit.curve.model !== "log") throw new Error("model");
    // domain.md §3.3 log fit on Set H: a = −50.0515 MPa, b = 22.2045 MPa/decade (log10), R² = 0.98090
    expectWithin(fit.curve.aMpa, -50.0515, 1e-4);
    expectWithin(fit.curve.bMpaPerDecade, 22.2045, 1e-4);
    expectWithin(fit.r2, 0.9809, 5e-6);
    expect(fit.warnings).toEqual([]);
  });

  it.each([
    // domain.md §3.3 log-fit predictions at 1, 3, 7, 14, 28 d: 10.832, 21.426, 29.597, 36.281, 42.965 MPa
    { i: 0, predicted: 10.832 },
    { i: 1, predicted: 21.426 },
    { i: 2, predicted: 29.597 },
    { i: 3, predicted: 36.281 },
    { i: 4, predicted: 42.965 },
  ])("predicts $predicted MPa at point $i (residual = observed − fitted)", ({ i, predicted }) => {
    const point = SET_H[i];
    if (!point) throw new Error("fixture");
    expectWithin(point.strengthMpa - (fit.residualsMpa[i] ?? Number.NaN), predicted, 5e-4);
    expectWithin(strengthAt(fit.curve, point.ttfCH), predicted, 5e-4);
  });

  it.each([
    { name: "Set H", points: SET_H },
    { name: "scattered Set H", points: SET_H_SCATTERED },
  ])("agrees with simple-statistics and regression on $name", ({ points }) => {
    const own = fitStrengthCurve("log", points);
    if (own.curve.model !== "log") throw new Error("model");
    const xy = points.map((p): [number, number] => [Math.log10(p.ttfCH), p.strengthMpa]);
    const ss = linearRegression(xy);
    // domain.md §9: simple-statistics 7.12.1 linearRegression on log10 M agrees to 1e-10
    expectWithin(own.curve.bMpaPerDecade, ss.m, 1e-10);
    expectWithin(own.curve.aMpa, ss.b, 1e-10);
    // domain.md §9: simple-statistics rSquared of the same line
    expectWithin(own.r2, rSquared(xy, linearRegressionLine(ss)), 1e-10);
    const ln = regression.logarithmic(
      points.map((p): [number, number] => [p.ttfCH, p.strengthMpa]),
      { precision: 12 },
    );
    // domain.md §3.3 and §9: regression 2.0.1 logarithmic uses ln, so b_ln = b_log10 / ln 10, same a
    expectWithin(ln.equation[1] ?? Number.NaN, own.curve.bMpaPerDecade / Math.LN10, 1e-9);
    expectWithin(ln.equation[0] ?? Number.NaN, own.curve.aMpa, 1e-9);
  });
});

describe("fitStrengthCurve: hyperbolic and exponential", () => {
  it("recovers Set H's hyperbolic parameters", () => {
    const { curve, r2, warnings } = fitStrengthCurve("hyperbolic", SET_H);
    if (curve.model !== "hyperbolic") throw new Error("model");
    // domain.md §3.3 Set H hyperbolic refit -> (45, 0.35, 0.25), 1e-6 relative
    relClose(curve.suMpa, 45, 1e-6);
    relClose(curve.kPerCH * CH_PER_DAY, 0.35, 1e-6);
    relClose(curve.m0CH / CH_PER_DAY, 0.25, 1e-6);
    expectWithin(r2, 1, 1e-9);
    expect(warnings).toEqual([]);
  });

  it("fits the exponential form to Set H as the sheet found", () => {
    const { curve, rmseMpa } = fitStrengthCurve("exponential", SET_H);
    if (curve.model !== "exponential") throw new Error("model");
    // domain.md §3.3: exponential on Set H -> Su 48.19, τ 2.057 d, β 0.697 (±0.05 each), RMSE 0.19 MPa
    expectWithin(curve.suMpa, 48.19, 0.05);
    expectWithin(curve.tauCH / CH_PER_DAY, 2.057, 0.05);
    expectWithin(curve.beta, 0.697, 0.05);
    expectWithin(rmseMpa, 0.19, 0.005);
  });

  it("recovers Set X's exponential parameters", () => {
    const { curve } = fitStrengthCurve("exponential", SET_X);
    if (curve.model !== "exponential") throw new Error("model");
    // domain.md §3.3 Set X refit -> (50, 1.2, 0.9), 1e-6 relative
    relClose(curve.suMpa, 50, 1e-6);
    relClose(curve.tauCH / CH_PER_DAY, 1.2, 1e-6);
    relClose(curve.beta, 0.9, 1e-6);
  });

  it("recovers Set H as domain.md §9 ran ml-levenberg-marquardt", () => {
    // domain.md §9 and Appendix A: ml-levenberg-marquardt 5.1.0 recovered (45, 0.35, 0.25) from Set H
    const ref = referenceLm(
      { x: AGES_D, y: SET_H.map((p) => p.strengthMpa) },
      ([su = 0, k = 0, t0 = 0]) =>
        (t: number) =>
          (su * k * (t - t0)) / (1 + k * (t - t0)),
      { initialValues: [40, 0.3, 0.1], maxIterations: 2000, errorTolerance: 1e-12 },
    );
    const own = fitStrengthCurve("hyperbolic", SET_H).curve;
    if (own.model !== "hyperbolic") throw new Error("model");
    const [su = 0, k = 0, t0 = 0] = ref.parameterValues;
    relClose(own.suMpa, su, 1e-6);
    relClose(own.kPerCH * CH_PER_DAY, k, 1e-6);
    relClose(own.m0CH / CH_PER_DAY, t0, 1e-6);
  });

  it.each([
    {
      model: "hyperbolic" as const,
      f:
        ([su = 0, k = 0, t0 = 0]: number[]) =>
        (t: number) =>
          (su * k * (t - t0)) / (1 + k * (t - t0)),
      start: [40, 0.3, 0.1],
      own: (c: StrengthCurve) =>
        c.model === "hyperbolic" ? [c.suMpa, c.kPerCH * CH_PER_DAY, c.m0CH / CH_PER_DAY] : [],
    },
    {
      model: "exponential" as const,
      f:
        ([su = 0, tau = 0, beta = 0]: number[]) =>
        (t: number) =>
          su * Math.exp(-((tau / t) ** beta)),
      start: [48, 2, 0.7],
      own: (c: StrengthCurve) =>
        c.model === "exponential" ? [c.suMpa, c.tauCH / CH_PER_DAY, c.beta] : [],
    },
  ])(
    "finds the same $model least-squares minimum as ml-levenberg-marquardt on scattered data",
    ({ model, f, start, own }) => {
      // domain.md §9: ml-levenberg-marquardt 5.1.0 as the reference non-linear fitter (central differences here)
      const ref = referenceLm({ x: AGES_D, y: SET_H_SCATTERED.map((p) => p.strengthMpa) }, f, {
        initialValues: start,
        maxIterations: 5000,
        errorTolerance: 1e-14,
        gradientDifference: 1e-7,
        centralDifference: true,
        improvementThreshold: 1e-6,
      });
      const params = own(fitStrengthCurve(model, SET_H_SCATTERED).curve);
      ref.parameterValues.forEach((p, i) => relClose(params[i] ?? Number.NaN, p, 1e-4));
    },
  );
});

describe("fitStrengthCurve warnings and refusals", () => {
  it("warns about a calibration with fewer than five ages", () => {
    // domain.md §3.2 (ASTM C1074 procedure, from memory): breaks at 1, 3, 7, 14 and 28 d
    const codes = fitStrengthCurve("hyperbolic", SET_H.slice(0, 4)).warnings.map((w) => w.code);
    expect(codes).toEqual(["few-ages"]);
  });

  it("counts ages, not points", () => {
    const pairs = SET_H.slice(0, 4).flatMap((p) => [p, { ...p, strengthMpa: p.strengthMpa + 0.2 }]);
    // domain.md §3.2: two cylinders per age; eight breaks at four ages are still four ages
    expect(fitStrengthCurve("log", pairs).warnings.map((w) => w.code)).toContain("few-ages");
  });

  it("warns about a poor fit, a falling curve and falling breaks", () => {
    const bad = AGES_D.map((t, i) => ({
      ttfCH: CH_PER_DAY * t,
      strengthMpa: [20, 35, 15, 30, 18][i] ?? 0,
    }));
    const codes = fitStrengthCurve("log", bad).warnings.map((w) => w.code);
    // Plinth policy (curves.ts POOR_FIT_R2 = 0.9); common practice: strength rises with maturity
    expect(codes).toEqual(["poor-fit", "curve-not-increasing", "breaks-not-increasing"]);
  });

  it.each([
    // common practice: log10 M and τ/M need a maturity above zero
    { points: [{ ttfCH: 0, strengthMpa: 5 }, ...SET_H] },
    { points: [{ ttfCH: Number.NaN, strengthMpa: 5 }, ...SET_H] },
    // least squares: three parameters cannot be fitted to two ages
    { points: SET_H.slice(0, 2) },
  ])("refuses points it cannot fit (case %#)", ({ points }) => {
    expect(() => fitStrengthCurve("hyperbolic", points)).toThrow(RangeError);
  });
});

describe("maturityForStrength", () => {
  it.each([
    // domain.md §3.3 Set H inverse te = t0 + r/[k(1 − r)]: 20 MPa -> 2.5357 d, ±5e-4 d
    { strengthMpa: 20, days: 2.5357 },
    // domain.md §3.3 Set H inverse: 30 MPa -> 5.9643 d
    { strengthMpa: 30, days: 5.9643 },
  ])("reaches $strengthMpa MPa at $days d on Set H", ({ strengthMpa, days }) => {
    expectWithin(
      (maturityForStrength(CURVE_H, strengthMpa) ?? Number.NaN) / CH_PER_DAY,
      days,
      5e-4,
    );
  });

  it("is null at or above the limiting strength, and for a falling curve", () => {
    // domain.md §3.1: Su is the limiting strength, approached but never reached
    expect(maturityForStrength(CURVE_H, 45)).toBeNull();
    expect(maturityForStrength(CURVE_X, 60)).toBeNull();
    // common practice: a curve that falls with maturity cannot say when a strength is reached
    expect(maturityForStrength({ model: "log", aMpa: 50, bMpaPerDecade: -3 }, 20)).toBeNull();
  });

  it("is 0 for a target of zero", () => {
    // common practice: any concrete has zero strength
    expect(maturityForStrength(CURVE_H, 0)).toBe(0);
  });

  it("inverts strengthAt for every model", () => {
    // domain.md §3.1 forms: the closed-form inverse must give back the strength asked for
    const log = fitStrengthCurve("log", SET_H).curve;
    fc.assert(
      fc.property(
        fc.constantFrom(log, CURVE_H, CURVE_X),
        fc.double({ min: 0.5, max: 44.5, noNaN: true }),
        (curve, s) => {
          const m = maturityForStrength(curve, s);
          expect(m).not.toBeNull();
          expectWithin(strengthAt(curve, m ?? Number.NaN), s, 1e-9 * Math.max(1, s));
        },
      ),
    );
  });
});

describe("strength from a whole cure", () => {
  it("gives 21.03 MPa for the precast cycle read on Set H", () => {
    const te23 = equivalentAgeFromReadings(precastCycleReadings(), {
      activationEnergyJMol: 5000 * 8.314,
      refTempC: 23,
    });
    // domain.md §3.3 "Example combining §2 and §3": te(23 °C) = 66.147 h = 2.7561 d -> Set H S = 21.03 MPa (±0.01)
    const strength = strengthAt(CURVE_H, (te23.equivalentAgeH / 24) * CH_PER_DAY);
    expectWithin(strength, 21.03, 0.01);
    // domain.md §3.3 and §7.4 (ACI 533R stripping strength 3000 psi): just above 20.6 MPa
    expect(strength).toBeGreaterThan(psiToMpa(3000));
  });
});

describe("forecastThresholdAt", () => {
  const asOfMs = Date.UTC(2026, 2, 2, 6);

  it.each([
    // ASTM C1074 Eq. 1 held at a constant mean: 300 °C·h more at (20 − (−10)) °C -> 10 h
    { ttfCH: 500, meanTempC: 20, datumC: -10, targetTtfCH: 800, expected: asOfMs + 10 * MS_PER_H },
    // ASTM C1074 Eq. 1: 30 °C·h more at 60 °C above a 0 °C datum -> 0.5 h
    { ttfCH: 670, meanTempC: 60, datumC: 0, targetTtfCH: 700, expected: asOfMs + 0.5 * MS_PER_H },
    // contracts.md forecast: already reached -> now
    { ttfCH: 900, meanTempC: 20, datumC: -10, targetTtfCH: 800, expected: asOfMs },
    // domain.md §1.3: at or below the datum nothing accrues -> never (null)
    { ttfCH: 500, meanTempC: -10, datumC: -10, targetTtfCH: 800, expected: null },
    // contracts.md forecast: no mean temperature over the last 6 hours -> no forecast
    { ttfCH: 500, meanTempC: null, datumC: -10, targetTtfCH: 800, expected: null },
    // domain.md §3.1: a strength at or above Su has no maturity (null target) -> never
    { ttfCH: 500, meanTempC: 20, datumC: -10, targetTtfCH: null, expected: null },
  ])(
    "forecasts $expected for $ttfCH → $targetTtfCH °C·h at $meanTempC °C",
    ({ expected, ...rest }) => {
      expect(forecastThresholdAt({ asOfMs, ...rest })).toBe(expected);
    },
  );
});

describe("forecast from a cure history", () => {
  it("holds the last 6 hours' mean of the readings", () => {
    // ½-h readings: 10 °C to 4.5 h, 30 °C from 5 h to 11 h; the last 6 h average 30 °C
    const readings = Array.from({ length: 23 }, (_, i) => ({
      tsMs: CAST_AT_MS + i * 0.5 * MS_PER_H,
      tempC: i <= 9 ? 10 : 30,
    }));
    const asOfMs = CAST_AT_MS + 11 * MS_PER_H;
    const state = maturityFromHistory(readings, CAST_AT_MS, {
      datumC: -10,
      activationEnergyJMol: 5000 * 8.314,
    });
    // ASTM C1074 Eq. 1, trapezoid, datum −10 °C: 4.5 h × 20 + 0.5 h × 30 + 6 h × 40 = 345 °C·h
    expect(state.ttfCH).toBeCloseTo(345, 9);
    const meanTempC = meanTempOverWindowC(readings, asOfMs, FORECAST_WINDOW_H);
    // contracts.md forecast: 280 °C·h more at (30 − (−10)) °C -> 7 h after as_of
    expect(
      forecastThresholdAt({ asOfMs, ttfCH: state.ttfCH, meanTempC, datumC: -10, targetTtfCH: 625 }),
    ).toBe(asOfMs + 7 * MS_PER_H);
  });
});

describe("datumAndActivationFromRates", () => {
  // domain.md §3.3 Set Q: k(T) made from Q = 5000 K with k(23 °C) = 0.35 1/d
  const rateAt = (tempC: number) =>
    0.35 * ageConversionFactor(tempC, { activationEnergyJMol: 5000 * 8.314, refTempC: 23 });
  const rates = [5, 23, 40].map((tempC) => ({ tempC, rateConstant: rateAt(tempC) }));

  it.each([
    // domain.md §3.3 Set Q: k(5 °C) = 0.11737, k(23 °C) = 0.35, k(40 °C) = 0.87522 1/d
    { tempC: 5, k: 0.11737 },
    { tempC: 23, k: 0.35 },
    { tempC: 40, k: 0.87522 },
  ])("makes k($tempC °C) = $k 1/d", ({ tempC, k }) => {
    expectWithin(rateAt(tempC), k, 5e-6);
  });

  it("finds Q = 5000 K and a datum of +1.92 °C", () => {
    const { activationEnergyJMol, datumC } = datumAndActivationFromRates(rates);
    // domain.md §3.3 Set Q (ASTM C1074 Appendix X1): slope of ln k vs 1/T = −5000 K (±1e-6)
    relClose(activationEnergyJMol / 8.314, 5000, 1e-6);
    // domain.md §3.3 Set Q: intercept of the k vs T line -> T0 = +1.92 °C
    expectWithin(datumC, 1.92, 0.005);
  });
});
