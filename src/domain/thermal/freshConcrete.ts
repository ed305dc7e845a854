/**
 * Temperature of freshly mixed concrete by the ACI 305R / 306R heat balance (domain.md §5), and its
 * inverses: the mixing-water temperature, or the ice, that gives a target concrete temperature.
 * SI: masses in kg (any one mass unit cancels), temperatures in °C.
 *
 * T = [0.22·(Ta·Ma + Tc·Mc) + Tw·Mw + Ta·Mwa − 80·Mi] / [0.22·(Ma + Mc) + Mw + Mi + Mwa]
 *
 * With aggregates below 0 °C their free water is ice: Ta·Mwa becomes Mwa·(0.5·Ta − 80)
 * (ACI 306R, from memory; terms derived in domain.md §5.1). Losses during batching, mixing and
 * transport are not included (CRD-C 307 adds them as an empirical differential).
 */
import { fToC } from "../units";

/** Specific heat of cement and aggregate relative to water (ACI 305R/306R, assumed). */
export const SOLIDS_HEAT_RATIO = 0.22;
/** Heat of fusion of ice over the specific heat of water, in °C (≈ 80 cal/g; domain.md §5.1). */
export const ICE_FUSION_C = 80;
/** Specific heat of ice relative to water (domain.md §5.1). */
export const ICE_HEAT_RATIO = 0.5;
/** Hottest mixing water NPCA precast guidance allows: 180 °F ≈ 82 °C (domain.md §5.3). */
export const MAX_HEATED_WATER_C = fToC(180);

/** One batch (e.g. per m³). Masses in kg, temperatures in °C. */
export interface ConcreteBatch {
  /** Dry (oven-dry) aggregate, Ma. */
  aggregateKg: number;
  aggregateTempC: number;
  /** Free (surface) water on the aggregates, Mwa, at the aggregate temperature. */
  freeWaterKg: number;
  cementKg: number;
  cementTempC: number;
  /** Added liquid mixing water, Mw. */
  waterKg: number;
  waterTempC: number;
  /** Ice added as part of the mixing water, Mi, taken at 0 °C. */
  iceKg: number;
}

/** Everything in the balance but the mixing water's Tw·Mw, and the total heat capacity (water = 1). */
function heatBalance(b: Omit<ConcreteBatch, "waterTempC">): {
  fixedHeat: number;
  heatCapacity: number;
} {
  const masses = [b.aggregateKg, b.freeWaterKg, b.cementKg, b.waterKg, b.iceKg];
  const temps = [b.aggregateTempC, b.cementTempC];
  if (masses.some((m) => !(m >= 0) || !Number.isFinite(m)) || !temps.every(Number.isFinite)) {
    throw new RangeError("batch masses must be finite and >= 0, temperatures finite");
  }
  const freeWaterHeat =
    b.aggregateTempC < 0
      ? b.freeWaterKg * (ICE_HEAT_RATIO * b.aggregateTempC - ICE_FUSION_C)
      : b.freeWaterKg * b.aggregateTempC;
  const fixedHeat =
    SOLIDS_HEAT_RATIO * (b.aggregateTempC * b.aggregateKg + b.cementTempC * b.cementKg) +
    freeWaterHeat -
    ICE_FUSION_C * b.iceKg;
  const heatCapacity =
    SOLIDS_HEAT_RATIO * (b.aggregateKg + b.cementKg) + b.waterKg + b.iceKg + b.freeWaterKg;
  if (!(heatCapacity > 0)) throw new RangeError("an empty batch has no temperature");
  return { fixedHeat, heatCapacity };
}

/**
 * Fresh concrete temperature (°C) of a batch, by the heat balance above: no heat of hydration, no
 * losses. Frozen free water when `aggregateTempC` < 0. Sensitivity is dominated by the aggregate
 * temperature (about 0.71 °C per °C for a typical batch, domain.md §5.2).
 * Source: ACI 305R / 306R mixture-temperature equation (domain.md §5.1). Throws a RangeError on a
 * negative or non-finite mass or an empty batch.
 */
export function freshConcreteTempC(batch: ConcreteBatch): number {
  const { fixedHeat, heatCapacity } = heatBalance(batch);
  return (fixedHeat + batch.waterTempC * batch.waterKg) / heatCapacity;
}

/**
 * The mixing-water temperature (°C) that gives `targetC`:
 * Tw = (T·[0.22(Ma + Mc) + Mw + Mi + Mwa] − 0.22(Ta·Ma + Tc·Mc) − Ta·Mwa + 80·Mi)/Mw (domain.md §5.1).
 * `status` says whether liquid water can do it: "above-boiling" (over 100 °C: impossible),
 * "below-freezing" (under 0 °C: use ice, see {@link iceForTargetC}), else "ok".
 * `aboveHeatingLimit` is true over {@link MAX_HEATED_WATER_C} (NPCA: no hotter than 180 °F).
 * Throws a RangeError when there is no mixing water to heat (waterKg 0).
 */
export function mixingWaterTempForTargetC(
  batch: Omit<ConcreteBatch, "waterTempC">,
  targetC: number,
): {
  waterTempC: number;
  status: "ok" | "above-boiling" | "below-freezing";
  aboveHeatingLimit: boolean;
} {
  if (!(batch.waterKg > 0))
    throw new RangeError("mixing water must be above 0 kg to set its temperature");
  const { fixedHeat, heatCapacity } = heatBalance(batch);
  const waterTempC = (targetC * heatCapacity - fixedHeat) / batch.waterKg;
  const status = waterTempC > 100 ? "above-boiling" : waterTempC < 0 ? "below-freezing" : "ok";
  return { waterTempC, status, aboveHeatingLimit: waterTempC > MAX_HEATED_WATER_C };
}

/**
 * How much of the mixing water (`waterKg`, liquid at `waterTempC`) to add as ice at 0 °C instead,
 * so the batch comes out at `targetC`. The total water stays `waterKg`, so the heat capacity does
 * not change and Mi = (heat without ice + Tw·W − T·capacity)/(80 + Tw). `status`: "no-ice-needed"
 * (iceKg 0: liquid water alone is at or below the target), "not-enough-water" (iceKg null: even all
 * of it as ice is too warm), else "ok". ACI 305R's ice equation under-estimates the temperature and
 * is reasonably accurate only up to about 20 % ice (domain.md §5.1).
 * Source: ACI 305R heat balance (domain.md §5.1, check F-5).
 */
export function iceForTargetC(
  batch: Omit<ConcreteBatch, "iceKg">,
  targetC: number,
): { iceKg: number | null; status: "ok" | "no-ice-needed" | "not-enough-water" } {
  const { fixedHeat, heatCapacity } = heatBalance({ ...batch, iceKg: 0 });
  const iceKg =
    (fixedHeat + batch.waterTempC * batch.waterKg - targetC * heatCapacity) /
    (ICE_FUSION_C + batch.waterTempC);
  if (iceKg <= 0) return { iceKg: 0, status: "no-ice-needed" };
  if (iceKg > batch.waterKg) return { iceKg: null, status: "not-enough-water" };
  return { iceKg, status: "ok" };
}
