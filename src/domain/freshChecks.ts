/**
 * Checks of the fresh-concrete tests taken at casting: the concrete temperature at discharge
 * against the mix's placing range, and the unit conversions the tests are entered in.
 * Pure; SI in and out (°C, mm, kg/m³).
 */

/**
 * The placing range used when a mix has none of its own, in °C.
 * - Minimum 7 °C (45 °F): NPCA precast guidance, concrete placement temperature at least 45 °F
 *   (domain.md §7.2, source 13).
 * - Maximum 35 °C (95 °F) at discharge: ACI 301-20 and ACI 305.1-14, general hot-weather work
 *   (domain.md §5.3, source 19).
 */
export const DEFAULT_PLACING_MIN_C = 7;
export const DEFAULT_PLACING_MAX_C = 35;

export type DischargeFlag = "low" | "high" | "within";

export interface PlacingRange {
  minC: number;
  maxC: number;
  /** Whose range it is: the mix's own, or Plinth's default above. */
  source: "mix" | "default";
}

/**
 * The placing range that applies: the mix's own bounds where set, the default for a bound the
 * mix leaves empty.
 */
export function placingRange(mixMinC: number | null, mixMaxC: number | null): PlacingRange {
  return {
    minC: mixMinC ?? DEFAULT_PLACING_MIN_C,
    maxC: mixMaxC ?? DEFAULT_PLACING_MAX_C,
    source: mixMinC === null && mixMaxC === null ? "default" : "mix",
  };
}

/**
 * Where a discharge temperature (°C) falls against a placing range: `low` below the minimum,
 * `high` above the maximum, `within` on or between the bounds (both inclusive). Null when no
 * temperature was recorded.
 */
export function dischargeTempFlag(
  dischargeTempC: number | null,
  range: Pick<PlacingRange, "minC" | "maxC">,
): DischargeFlag | null {
  if (dischargeTempC === null || !Number.isFinite(dischargeTempC)) return null;
  if (dischargeTempC < range.minC) return "low";
  if (dischargeTempC > range.maxC) return "high";
  return "within";
}

/** Kilograms per cubic metre in one pound per cubic foot: 0.45359237 kg / 0.3048³ m³ (exact). */
export const KG_M3_PER_LB_FT3 = 0.45359237 / 0.3048 ** 3;

/** kg/m³ from lb/ft³ (unit weight as US plants report it). */
export const lbFt3ToKgM3 = (lbFt3: number): number => lbFt3 * KG_M3_PER_LB_FT3;
/** lb/ft³ from kg/m³. */
export const kgM3ToLbFt3 = (kgM3: number): number => kgM3 / KG_M3_PER_LB_FT3;

/**
 * Plausible bounds for the fresh tests, to catch a slip of the finger (a slump typed in inches
 * into the millimetre box). Common practice, not limits of any standard.
 */
export const FRESH_BOUNDS = {
  dischargeTempC: { min: -10, max: 60 },
  slumpMm: { min: 0, max: 300 },
  spreadMm: { min: 200, max: 900 },
  airPct: { min: 0, max: 15 },
  unitWeightKgM3: { min: 1000, max: 4000 },
} as const;
