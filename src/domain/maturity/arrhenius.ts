/**
 * Equivalent age by the Arrhenius function (Freiesleben Hansen & Pedersen; ASTM C1074 Eq. 2):
 * te = Σ exp[−(E/R)·(1/Ta − 1/Ts)]·Δt, temperatures in kelvin, te in hours at the reference
 * temperature Ts.
 */
import { assertHours, foldIntervals, isGap, type Reading } from "./readings";

/** Kelvin at 0 °C. */
export const KELVIN_AT_0C = 273.15;
/** Gas constant R in J/(mol·K), the value the Plinth contract fixes for equivalent age. */
export const GAS_CONSTANT_J_MOL_K = 8.314;
/** Reference temperature of Plinth's equivalent age, °C (contract: "equivalent age at 20 °C"). */
export const DEFAULT_REF_TEMP_C = 20;

/** The Arrhenius parameters: apparent activation energy E, and optional Ts (°C) and R. */
export interface ArrheniusParams {
  activationEnergyJMol: number;
  /** Reference temperature Ts in °C; default {@link DEFAULT_REF_TEMP_C}. */
  refTempC?: number;
  /** Gas constant in J/(mol·K); default {@link GAS_CONSTANT_J_MOL_K}. */
  gasConstantJMolK?: number;
}

/**
 * The age conversion factor α(T) = exp[−(E/R)·(1/(T + 273.15) − 1/(Ts + 273.15))]: hours at the
 * reference temperature per hour at `tempC`. Dimensionless, always > 0 (it never reaches zero, and
 * ASTM C1074 defines no cut-off, domain.md §2.1), exactly 1 at Ts, increasing with temperature.
 * Temperatures are converted to kelvin here, so °C must be passed, never °F (domain.md §8.4).
 *
 * Source: ASTM C1074 Eq. 2 (Freiesleben Hansen & Pedersen). Throws a RangeError for a temperature
 * at or below absolute zero or a non-positive activation energy or gas constant.
 */
export function ageConversionFactor(tempC: number, params: ArrheniusParams): number {
  const {
    activationEnergyJMol,
    refTempC = DEFAULT_REF_TEMP_C,
    gasConstantJMolK = GAS_CONSTANT_J_MOL_K,
  } = params;
  const tK = tempC + KELVIN_AT_0C;
  const tsK = refTempC + KELVIN_AT_0C;
  if (!(tK > 0) || !(tsK > 0))
    throw new RangeError(`temperatures must be above absolute zero, got ${tempC} / ${refTempC} °C`);
  if (!(activationEnergyJMol > 0) || !(gasConstantJMolK > 0)) {
    throw new RangeError("activation energy and gas constant must be positive");
  }
  return Math.exp((-activationEnergyJMol / gasConstantJMolK) * (1 / tK - 1 / tsK));
}

/**
 * The equivalent age (hours at Ts) after one more interval between two consecutive readings.
 *
 * - Units: `prevEquivalentAgeH` and the result in hours; `tempAC`, `tempBC` in °C; `hours` ≥ 0.
 * - Interval mean: α is taken at Ta = (tempAC + tempBC)/2 (trapezoid; domain.md §2.5 E-5).
 * - No datum: every interval adds α(Ta)·hours > 0, even below freezing (domain.md §2.1).
 * - Gap: an interval longer than 2 h adds nothing (Plinth contract; see `MAX_GAP_H`).
 * - Invariant: the result is never below `prevEquivalentAgeH`.
 *
 * Source: ASTM C1074 Eq. 2; gap policy per the Plinth contract. Throws as {@link ageConversionFactor},
 * or on a negative or non-finite `hours`.
 */
export function equivalentAgeStep(
  prevEquivalentAgeH: number,
  tempAC: number,
  tempBC: number,
  hours: number,
  params: ArrheniusParams,
): number {
  assertHours(hours);
  if (isGap(hours)) return prevEquivalentAgeH;
  return prevEquivalentAgeH + ageConversionFactor((tempAC + tempBC) / 2, params) * hours;
}

/**
 * The equivalent age (hours at Ts) of a whole history of readings, in any order: readings are
 * sorted, one per timestamp (first stands), each interval adds per {@link equivalentAgeStep}.
 * `complete` is false when any interval is longer than 2 h (it then adds nothing).
 *
 * Source: ASTM C1074 Eq. 2; interval and gap policy per the Plinth contract.
 */
export function equivalentAgeFromReadings(
  readings: readonly Reading[],
  params: ArrheniusParams,
): { equivalentAgeH: number; complete: boolean } {
  const { total, complete } = foldIntervals(readings, (ageH, a, b, hours) =>
    equivalentAgeStep(ageH, a.tempC, b.tempC, hours, params),
  );
  return { equivalentAgeH: total, complete };
}
