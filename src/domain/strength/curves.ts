/**
 * Strength-maturity curves (ASTM C1074 calibration; domain.md §3): fit a mix's cylinder breaks
 * against the temperature-time factor, read strength from maturity and back, and forecast when a
 * strength threshold is reached. Strength in MPa (psi conversion at the edge, src/domain/units.ts);
 * maturity M in °C·h of Nurse-Saul temperature-time factor with the mix's datum.
 */
import { GAS_CONSTANT_J_MOL_K, KELVIN_AT_0C } from "../maturity/arrhenius";
import { MS_PER_H } from "../maturity/readings";
import { fitLine, levenbergMarquardt, rSquared, type CurveModel } from "./leastSquares";

/** The three strength-maturity forms of domain.md §3.1. */
export type StrengthModel = "log" | "hyperbolic" | "exponential";

/**
 * A fitted strength-maturity curve, M in °C·h:
 * - log: S = a + b·log10(M) (ASTM C1074 appendix form; b in MPa per decade of M);
 * - hyperbolic (Carino): S = Su·k(M − M0)/[1 + k(M − M0)];
 * - exponential (Freiesleben Hansen): S = Su·exp[−(τ/M)^β].
 */
export type StrengthCurve =
  | { model: "log"; aMpa: number; bMpaPerDecade: number }
  | { model: "hyperbolic"; suMpa: number; kPerCH: number; m0CH: number }
  | { model: "exponential"; suMpa: number; tauCH: number; beta: number };

/** One calibration point: the mean cylinder-break strength at the mean maturity of one age. */
export interface StrengthPoint {
  ttfCH: number;
  strengthMpa: number;
}

export type FitWarningCode =
  "few-ages" | "poor-fit" | "curve-not-increasing" | "breaks-not-increasing" | "no-convergence";
export interface FitWarning {
  code: FitWarningCode;
  message: string;
}

/** A fit with its quality: R², RMSE, residuals (observed − fitted, MPa, in input order), warnings. */
export interface StrengthFit {
  curve: StrengthCurve;
  r2: number;
  rmseMpa: number;
  residualsMpa: number[];
  warnings: FitWarning[];
}

/** Ages a calibration should have: 1, 3, 7, 14 and 28 days (domain.md §3.2, ASTM C1074 procedure, from memory). */
export const MIN_CALIBRATION_AGES = 5;
/** Below this R² a fit is flagged as poor. Plinth policy: no standard gives a number. */
export const POOR_FIT_R2 = 0.9;

const hyperbolicModel: CurveModel = {
  f: ([su = 0, k = 0, m0 = 0], m) => (su * k * (m - m0)) / (1 + k * (m - m0)),
  grad: ([su = 0, k = 0, m0 = 0], m) => {
    const u = k * (m - m0);
    const d = (1 + u) ** 2;
    return [u / (1 + u), (su * (m - m0)) / d, (-su * k) / d];
  },
};

const exponentialModel: CurveModel = {
  f: ([su = 0, tau = 0, beta = 0], m) => su * Math.exp(-((tau / m) ** beta)),
  grad: ([su = 0, tau = 0, beta = 0], m) => {
    const w = (tau / m) ** beta;
    const e = Math.exp(-w);
    return [e, (-su * e * w * beta) / tau, -su * e * w * Math.log(tau / m)];
  },
};

/** The curve's formula without the zero floor; used for residuals. */
function modelStrengthMpa(curve: StrengthCurve, ttfCH: number): number {
  switch (curve.model) {
    case "log":
      return curve.aMpa + curve.bMpaPerDecade * Math.log10(ttfCH);
    case "hyperbolic":
      return hyperbolicModel.f([curve.suMpa, curve.kPerCH, curve.m0CH], ttfCH);
    case "exponential":
      return exponentialModel.f([curve.suMpa, curve.tauCH, curve.beta], ttfCH);
  }
}

/**
 * True when strength rises with maturity: b > 0 (log); Su, k > 0 (hyperbolic); Su, τ, β > 0
 * (exponential). Only such a curve can be read backwards by {@link maturityForStrength}.
 */
export function curveIncreases(curve: StrengthCurve): boolean {
  switch (curve.model) {
    case "log":
      return curve.bMpaPerDecade > 0;
    case "hyperbolic":
      return curve.suMpa > 0 && curve.kPerCH > 0;
    case "exponential":
      return curve.suMpa > 0 && curve.tauCH > 0 && curve.beta > 0;
  }
}

/**
 * Estimated strength (MPa) at a temperature-time factor (°C·h), from the curve's formula
 * (domain.md §3.1), floored at 0: never negative, 0 at M ≤ 0 and, for the hyperbolic form, at
 * M ≤ M0 (before strength development starts). Source: ASTM C1074 strength-maturity relationship.
 */
export function strengthAt(curve: StrengthCurve, ttfCH: number): number {
  if (!(ttfCH > 0) || (curve.model === "hyperbolic" && ttfCH <= curve.m0CH)) return 0;
  return Math.max(0, modelStrengthMpa(curve, ttfCH));
}

/**
 * The least temperature-time factor (°C·h) at which {@link strengthAt} reaches `strengthMpa`:
 * 0 for a target at or below 0; null when the curve never reaches it (at or above the limiting
 * strength Su of the hyperbolic and exponential forms) or does not increase ({@link curveIncreases}).
 * Closed forms: M = 10^((S − a)/b); M = M0 + r/[k(1 − r)] with r = S/Su (domain.md §3.3);
 * M = τ/(−ln r)^(1/β).
 */
export function maturityForStrength(curve: StrengthCurve, strengthMpa: number): number | null {
  if (!(strengthMpa > 0)) return 0;
  if (!curveIncreases(curve)) return null;
  if (curve.model === "log") return 10 ** ((strengthMpa - curve.aMpa) / curve.bMpaPerDecade);
  const r = strengthMpa / curve.suMpa;
  if (r >= 1) return null;
  if (curve.model === "hyperbolic") return curve.m0CH + r / (curve.kPerCH * (1 - r));
  return curve.tauCH / (-Math.log(r)) ** (1 / curve.beta);
}

/** Starting points for the non-linear fits, from the linearised forms of domain.md §3.2. */
function startingPoints(
  model: "hyperbolic" | "exponential",
  ms: number[],
  ss: number[],
): number[][] {
  const maxS = Math.max(...ss);
  const minM = Math.min(...ms);
  const meanM = ms.reduce((s, m) => s + m, 0) / ms.length;
  const positive = ms.map((m, i) => ({ m, s: ss[i] ?? 0 })).filter((p) => p.s > 0);
  const tryLine = (xs: number[], ys: number[]) => {
    try {
      return fitLine(xs, ys);
    } catch {
      return null;
    }
  };
  if (model === "hyperbolic") {
    // 1/S = 1/Su + 1/(k·Su·(M − M0)), for a guessed M0 (ASTM C1074 Appendix X1 linearisation).
    return [0, 0.5 * minM].map((m0) => {
      const line = tryLine(
        positive.map((p) => 1 / (p.m - m0)),
        positive.map((p) => 1 / p.s),
      );
      return line && line.intercept > 0 && line.slope > 0
        ? [1 / line.intercept, line.intercept / line.slope, m0]
        : [1.5 * maxS, 1 / meanM, m0];
    });
  }
  // ln(−ln(S/Su)) = β·ln τ − β·ln M, for a guessed Su above the highest break.
  return [1.05, 1.25, 1.6, 2.5].map((factor) => {
    const su = factor * maxS;
    const line = tryLine(
      positive.map((p) => Math.log(p.m)),
      positive.map((p) => Math.log(-Math.log(p.s / su))),
    );
    const beta = line ? -line.slope : Number.NaN;
    return line && beta > 0 ? [su, Math.exp(line.intercept / beta), beta] : [su, meanM, 1];
  });
}

/** Fits the curve's parameters by least squares: a line on log10 M, or Levenberg-Marquardt. */
function fitParameters(
  model: StrengthModel,
  ms: number[],
  ss: number[],
): { curve: StrengthCurve; converged: boolean } {
  if (model === "log") {
    const { intercept, slope } = fitLine(ms.map(Math.log10), ss);
    return { curve: { model, aMpa: intercept, bMpaPerDecade: slope }, converged: true };
  }
  const curveModel = model === "hyperbolic" ? hyperbolicModel : exponentialModel;
  const fits = startingPoints(model, ms, ss).map((p0) =>
    levenbergMarquardt(curveModel, ms, ss, p0),
  );
  const best = fits.reduce((a, b) => (b.sse < a.sse || !Number.isFinite(a.sse) ? b : a));
  const [p0 = Number.NaN, p1 = Number.NaN, p2 = Number.NaN] = best.params;
  const curve: StrengthCurve =
    model === "hyperbolic"
      ? { model, suMpa: p0, kPerCH: p1, m0CH: p2 }
      : { model, suMpa: p0, tauCH: p1, beta: p2 };
  return { curve, converged: best.converged && Number.isFinite(best.sse) };
}

/**
 * Fits a strength-maturity curve to calibration points by least squares (ASTM C1074 calibration,
 * domain.md §3.2): for "log", a straight line of S on log10(M) in closed form; for "hyperbolic"
 * and "exponential", Levenberg-Marquardt from starting points given by their linearised forms.
 *
 * - Units: `ttfCH` in °C·h (> 0), `strengthMpa` in MPa. The curve's parameters are in the same
 *   units (Su in MPa, k in 1/(°C·h), M0 and τ in °C·h).
 * - Quality: R² = 1 − SSres/SStot on strength; RMSE; residuals observed − fitted, input order.
 * - Warnings (the fit is still returned): "few-ages" when fewer than {@link MIN_CALIBRATION_AGES}
 *   distinct maturities; "poor-fit" when R² < {@link POOR_FIT_R2}; "curve-not-increasing" when the
 *   fitted curve does not rise with maturity; "breaks-not-increasing" when the mean break strength
 *   does not rise from one maturity to the next; "no-convergence" when the iteration did not settle.
 * - Throws a RangeError when a point is not finite, a maturity is not above 0, or there are fewer
 *   distinct maturities than the model has parameters (2 for log, 3 otherwise).
 */
export function fitStrengthCurve(
  model: StrengthModel,
  points: readonly StrengthPoint[],
): StrengthFit {
  if (
    points.some(
      (p) => !Number.isFinite(p.strengthMpa) || !Number.isFinite(p.ttfCH) || !(p.ttfCH > 0),
    )
  ) {
    throw new RangeError(
      "each calibration point needs a finite strength and a maturity above 0 °C·h",
    );
  }
  const ms = points.map((p) => p.ttfCH);
  const ss = points.map((p) => p.strengthMpa);
  const ages = [...new Set(ms)].sort((a, b) => a - b);
  if (ages.length < (model === "log" ? 2 : 3)) {
    throw new RangeError(`a ${model} fit needs more distinct maturities than ${ages.length}`);
  }
  const { curve, converged } = fitParameters(model, ms, ss);
  const fitted = ms.map((m) => modelStrengthMpa(curve, m));
  const residualsMpa = ss.map((s, i) => s - (fitted[i] ?? Number.NaN));
  const r2 = rSquared(ss, fitted);
  const rmseMpa = Math.sqrt(residualsMpa.reduce((s, r) => s + r * r, 0) / residualsMpa.length);

  const warnings: FitWarning[] = [];
  if (ages.length < MIN_CALIBRATION_AGES) {
    warnings.push({
      code: "few-ages",
      message: `${ages.length} ages; a calibration needs ${MIN_CALIBRATION_AGES} (1, 3, 7, 14, 28 d)`,
    });
  }
  if (r2 < POOR_FIT_R2)
    warnings.push({ code: "poor-fit", message: `R² ${r2.toFixed(3)} is below ${POOR_FIT_R2}` });
  if (!curveIncreases(curve))
    warnings.push({
      code: "curve-not-increasing",
      message: "the fitted strength does not rise with maturity",
    });
  const meanAt = (m: number) => {
    const at = points.filter((p) => p.ttfCH === m);
    return at.reduce((s, p) => s + p.strengthMpa, 0) / at.length;
  };
  const means = ages.map(meanAt);
  const fall = means.findIndex((s, i) => i > 0 && s <= (means[i - 1] ?? Number.NaN));
  if (fall > 0) {
    warnings.push({
      code: "breaks-not-increasing",
      message: `break strength does not rise from ${ages[fall - 1]} to ${ages[fall]} °C·h`,
    });
  }
  if (!converged)
    warnings.push({ code: "no-convergence", message: "the fit did not settle; check the points" });
  return { curve, r2, rmseMpa, residualsMpa, warnings };
}

/** Hours of readings whose mean temperature the forecast holds (Plinth contract, `forecast_at`). */
export const FORECAST_WINDOW_H = 6;

/**
 * When a pour is forecast to reach `targetTtfCH` if the mean temperature of the last
 * {@link FORECAST_WINDOW_H} hours holds (Plinth contract, `forecast_at`; take the mean with
 * `meanTempOverWindowC`): asOfMs + (target − ttfCH)/(meanTempC − datumC) hours, rounded up
 * to the whole millisecond. `asOfMs` itself when the target is already reached; null when the target
 * is null (the strength is unreachable, see {@link maturityForStrength}), the mean is unknown, or the
 * mean is at or below the datum (Nurse-Saul adds nothing there, ASTM C1074 Eq. 1, domain.md §1.3).
 * Units: epoch ms, °C, °C·h.
 */
export function forecastThresholdAt(input: {
  asOfMs: number;
  ttfCH: number;
  meanTempC: number | null;
  datumC: number;
  targetTtfCH: number | null;
}): number | null {
  const { asOfMs, ttfCH, meanTempC, datumC, targetTtfCH } = input;
  if (targetTtfCH === null) return null;
  if (ttfCH >= targetTtfCH) return asOfMs;
  if (meanTempC === null || !(meanTempC > datumC)) return null;
  return Math.ceil(asOfMs + ((targetTtfCH - ttfCH) / (meanTempC - datumC)) * MS_PER_H);
}

/**
 * ASTM C1074 Appendix X1 (domain.md §3.2): from rate constants k found at several curing
 * temperatures, the activation energy E = −slope·R of ln k against 1/T (T in kelvin; J/mol) and
 * the datum temperature (°C) where the straight line of k against T crosses zero. k in any
 * consistent unit (e.g. 1/d). R defaults to 8.314 J/(mol·K) (Plinth contract). Throws a RangeError
 * with fewer than two distinct temperatures or a k not above 0.
 */
export function datumAndActivationFromRates(
  rates: readonly { tempC: number; rateConstant: number }[],
  gasConstantJMolK = GAS_CONSTANT_J_MOL_K,
): { datumC: number; activationEnergyJMol: number } {
  if (rates.some((r) => !(r.rateConstant > 0)))
    throw new RangeError("rate constants must be above 0");
  const arrhenius = fitLine(
    rates.map((r) => 1 / (r.tempC + KELVIN_AT_0C)),
    rates.map((r) => Math.log(r.rateConstant)),
  );
  const linear = fitLine(
    rates.map((r) => r.tempC),
    rates.map((r) => r.rateConstant),
  );
  return {
    datumC: -linear.intercept / linear.slope,
    activationEnergyJMol: -arrhenius.slope * gasConstantJMolK,
  };
}
