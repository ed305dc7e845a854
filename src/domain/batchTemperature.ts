/**
 * The next batch's temperature from the aggregate bins: which bins' readings stand for the fine
 * and the coarse aggregate, the mix's masses per cubic metre, the fresh-concrete temperature by
 * the ACI 305R / 306R heat balance (./thermal/freshConcrete.ts, domain.md §5), and the
 * mixing-water temperature or the ice that brings the batch to the middle of the mix's placing
 * range. Pure: plain numbers in, plain values out; time passed in. SI: kg per m³, °C.
 *
 * Assumptions, stated where the numbers are made:
 * - The mix's aggregate masses are saturated-surface-dry (SSD) batch masses and its moisture
 *   percentages are free (surface) moisture above SSD, as a share of the SSD mass. So the free
 *   water on an aggregate is mass × moisture / 100, it is part of the mix's water, and the water
 *   to add is the mix's water less that free water (common practice in batching).
 * - The SSD mass stands in for the oven-dry mass Ma of the balance; the water absorbed inside
 *   the particles (typically 0.5–2 % of the mass, from memory) is counted at the solids' 0.22.
 * - Supplementary cementitious materials are at the cement's temperature with the cement's 0.22.
 * - Each reporting bin of a class counts once in its class's mean (the plant chooses the bins
 *   that feed the batch when it knows them).
 */
import { SILENT_AFTER_MS } from "./sensorState";
import {
  ICE_FUSION_C,
  MAX_HEATED_WATER_C,
  SOLIDS_HEAT_RATIO,
  freshConcreteTempC,
  type ConcreteBatch,
} from "./thermal/freshConcrete";

/** Mixing-water temperature assumed when none is given, °C (common practice: mains water in a heated plant; enter the real one). */
export const DEFAULT_WATER_TEMP_C = 15;
/** Cement temperature assumed when none is given, °C (common practice: a silo near room temperature; enter the real one). */
export const DEFAULT_CEMENT_TEMP_C = 15;
/**
 * The coldest liquid mixing water a plant can count on, °C: below it only ice helps
 * (from memory: water chillers at batch plants deliver down to about 1 °C; water freezes at 0 °C).
 */
export const COLDEST_WATER_C = 1;
/**
 * Ice as a share of the mixing water above which the ACI 305R ice equation loses accuracy:
 * reasonably accurate only up to about 20 % (Jabbar 2017, domain.md §5.1).
 */
export const ICE_SHARE_RELIABLE = 0.2;
/**
 * Ice as a share of the mixing water above which the ACI 305R ice equation gives irrational
 * results (Jabbar 2017, domain.md §5.1: "above about 50 % ice replacement").
 */
export const ICE_SHARE_LIMIT = 0.5;
/**
 * Water hotter than this should meet the aggregates before the cement, to avoid flash set
 * (domain.md §5.3, from memory: "above about 60–80 °C"; the lower end is taken).
 */
export const FLASH_SET_WATER_C = 60;

/**
 * A change of mixing-water temperature smaller than this is not worth asking for: it moves the
 * batch by about 0.17 °C per °C (domain.md §5.2 sensitivity), so 1 °C is under 0.2 °C of concrete.
 */
export const WATER_CHANGE_WORTH_C = 1;

export { MAX_HEATED_WATER_C };

export type AggregateClass = "fine" | "coarse";
export const aggregateClasses: readonly AggregateClass[] = ["fine", "coarse"];

/**
 * The aggregate class a bin's `material` names: "fine" (or any sand), "coarse" (stone, gravel,
 * chip, rock). Anything else, or nothing, is null: such a bin is shown but not used.
 */
export function aggregateClassOf(material: string | null | undefined): AggregateClass | null {
  const m = (material ?? "").trim().toLowerCase();
  if (m === "") return null;
  if (/fine|sand/.test(m)) return "fine";
  if (/coarse|stone|gravel|chip|rock/.test(m)) return "coarse";
  return null;
}

/** One bin as the prediction sees it. */
export interface BinInput {
  id: string;
  aggregate: AggregateClass | null;
  tempC: number | null;
  lastSeenAtMs: number | null;
}

/** Where one class's aggregate temperature came from. */
export interface AggregateTemp {
  tempC: number | null;
  /** The bins whose last readings were averaged (empty when entered or missing). */
  binIds: string[];
  source: "bins" | "entered" | "none";
}

/** True when a bin's last reading is recent enough to use (the floor's own silence limit). */
export function binReporting(bin: BinInput, nowMs: number): boolean {
  return (
    bin.tempC !== null &&
    Number.isFinite(bin.tempC) &&
    bin.lastSeenAtMs !== null &&
    nowMs - bin.lastSeenAtMs <= SILENT_AFTER_MS
  );
}

/**
 * The fine and coarse aggregate temperatures: for each class, a temperature entered by hand if
 * one is given, else the mean of the last readings of its reporting bins (only the `chosen` bins
 * when a choice is given), else none. Silent bins are never used: a stale reading would pass
 * yesterday's temperature off as today's.
 */
export function aggregateTemps(
  bins: readonly BinInput[],
  nowMs: number,
  options: {
    chosen?: readonly string[] | null;
    enteredC?: Partial<Record<AggregateClass, number | null>>;
  } = {},
): Record<AggregateClass, AggregateTemp> {
  const pick = (cls: AggregateClass): AggregateTemp => {
    const entered = options.enteredC?.[cls];
    if (entered !== undefined && entered !== null && Number.isFinite(entered))
      return { tempC: entered, binIds: [], source: "entered" };
    const used = bins.filter(
      (b) =>
        b.aggregate === cls &&
        binReporting(b, nowMs) &&
        (!options.chosen || options.chosen.includes(b.id)),
    );
    if (used.length === 0) return { tempC: null, binIds: [], source: "none" };
    const tempC = used.reduce((s, b) => s + (b.tempC as number), 0) / used.length;
    return { tempC, binIds: used.map((b) => b.id), source: "bins" };
  };
  return { fine: pick("fine"), coarse: pick("coarse") };
}

/** A mix's proportions per cubic metre and placing range, as stored (null: not filled in). */
export interface MixProportions {
  cementKgM3: number | null;
  scmKgM3: number | null;
  waterKgM3: number | null;
  fineAggKgM3: number | null;
  coarseAggKgM3: number | null;
  fineAggMoisturePct: number | null;
  coarseAggMoisturePct: number | null;
  placingTempMinC: number | null;
  placingTempMaxC: number | null;
}

/** The proportions a prediction cannot do without, with the words the product uses for them. */
export const requiredMixFields = {
  cementKgM3: "cement",
  waterKgM3: "water",
  fineAggKgM3: "fine aggregate",
  coarseAggKgM3: "coarse aggregate",
  placingTempMinC: "lowest placing temperature",
  placingTempMaxC: "highest placing temperature",
} as const satisfies Partial<Record<keyof MixProportions, string>>;

export type RequiredMixField = keyof typeof requiredMixFields;

/**
 * The required proportions a mix lacks, in the order above. A value that cannot be right
 * (a negative mass, no water, no aggregate at all, a placing range upside down) counts as missing.
 */
export function missingMixFields(mix: MixProportions): RequiredMixField[] {
  const missing: RequiredMixField[] = [];
  const ok = (v: number | null, min = 0) => v !== null && Number.isFinite(v) && v >= min;
  if (!ok(mix.cementKgM3) || mix.cementKgM3 === 0) missing.push("cementKgM3");
  if (!ok(mix.waterKgM3) || mix.waterKgM3 === 0) missing.push("waterKgM3");
  if (!ok(mix.fineAggKgM3)) missing.push("fineAggKgM3");
  if (!ok(mix.coarseAggKgM3)) missing.push("coarseAggKgM3");
  if (
    ok(mix.fineAggKgM3) &&
    ok(mix.coarseAggKgM3) &&
    (mix.fineAggKgM3 as number) + (mix.coarseAggKgM3 as number) === 0
  ) {
    missing.push("fineAggKgM3", "coarseAggKgM3");
  }
  const lo = mix.placingTempMinC;
  const hi = mix.placingTempMaxC;
  const loOk = lo !== null && Number.isFinite(lo);
  const hiOk = hi !== null && Number.isFinite(hi);
  if (!loOk || (hiOk && (lo as number) >= (hi as number))) missing.push("placingTempMinC");
  if (!hiOk || (loOk && (lo as number) >= (hi as number))) missing.push("placingTempMaxC");
  return [...new Set(missing)];
}

/** One cubic metre of the mix as batched: kg of each ingredient. */
export interface BatchMasses {
  /** Cement and supplementary cementitious materials together. */
  cementitiousKg: number;
  fineAggKg: number;
  coarseAggKg: number;
  /** Free water the fine aggregate brings, at its temperature (Mwa of §5.1). */
  fineFreeWaterKg: number;
  coarseFreeWaterKg: number;
  /** The mix's water. */
  designWaterKg: number;
  /** Water to add at the mixer: the mix's water less the aggregates' free water (Mw of §5.1; may be ≤ 0). */
  addedWaterKg: number;
  /** True where a moisture percentage was not filled in and 0 % (SSD) was taken. */
  moistureAssumed: Record<AggregateClass, boolean>;
}

/**
 * Batch masses per m³ from a mix whose required fields are all present (check with
 * {@link missingMixFields} first; throws a RangeError otherwise). Free water = SSD mass × free
 * moisture / 100; added water = the mix's water − free water (see the module's assumptions).
 */
export function batchMassesOf(mix: MixProportions): BatchMasses {
  if (missingMixFields(mix).length > 0)
    throw new RangeError("the mix's proportions are incomplete");
  const fineAggKg = mix.fineAggKgM3 as number;
  const coarseAggKg = mix.coarseAggKgM3 as number;
  const moisture = (pct: number | null) => (pct !== null && Number.isFinite(pct) ? pct : 0);
  const fineFreeWaterKg = (fineAggKg * Math.max(0, moisture(mix.fineAggMoisturePct))) / 100;
  const coarseFreeWaterKg = (coarseAggKg * Math.max(0, moisture(mix.coarseAggMoisturePct))) / 100;
  const designWaterKg = mix.waterKgM3 as number;
  return {
    cementitiousKg: (mix.cementKgM3 as number) + Math.max(0, mix.scmKgM3 ?? 0),
    fineAggKg,
    coarseAggKg,
    fineFreeWaterKg,
    coarseFreeWaterKg,
    designWaterKg,
    addedWaterKg: designWaterKg - fineFreeWaterKg - coarseFreeWaterKg,
    moistureAssumed: {
      fine: mix.fineAggMoisturePct === null,
      coarse: mix.coarseAggMoisturePct === null,
    },
  };
}

/** The temperatures of the solids, °C. */
export interface SolidsTemps {
  fineC: number;
  coarseC: number;
  cementC: number;
}

/** Heat content (kg·°C) and heat capacity (kg) of part of a batch, both relative to water. */
interface Heat {
  heatKgC: number;
  capacityKg: number;
}

const NOTHING: ConcreteBatch = {
  aggregateKg: 0,
  aggregateTempC: 0,
  freeWaterKg: 0,
  cementKg: 0,
  cementTempC: 0,
  waterKg: 0,
  waterTempC: 0,
  iceKg: 0,
};

/**
 * The heat balance is additive: a part's heat is its temperature times its heat capacity, and a
 * batch's temperature is the sum of its parts' heats over the sum of their capacities. Each
 * part's temperature comes from {@link freshConcreteTempC}, so the frozen-free-water and ice
 * terms of §5.1 are the same code for a batch of one aggregate or of two at different temperatures.
 */
function heatOf(part: Partial<ConcreteBatch>): Heat {
  const b = { ...NOTHING, ...part };
  const capacityKg =
    SOLIDS_HEAT_RATIO * (b.aggregateKg + b.cementKg) + b.waterKg + b.iceKg + b.freeWaterKg;
  if (capacityKg === 0) return { heatKgC: 0, capacityKg: 0 };
  return { heatKgC: freshConcreteTempC(b) * capacityKg, capacityKg };
}

/** Everything but the mixing water: both aggregates with their free water, and the cement. */
function solidsHeat(m: BatchMasses, t: SolidsTemps): Heat {
  const parts = [
    heatOf({ aggregateKg: m.fineAggKg, aggregateTempC: t.fineC, freeWaterKg: m.fineFreeWaterKg }),
    heatOf({
      aggregateKg: m.coarseAggKg,
      aggregateTempC: t.coarseC,
      freeWaterKg: m.coarseFreeWaterKg,
    }),
    heatOf({ cementKg: m.cementitiousKg, cementTempC: t.cementC }),
  ];
  return {
    heatKgC: parts.reduce((s, p) => s + p.heatKgC, 0),
    capacityKg: parts.reduce((s, p) => s + p.capacityKg, 0),
  };
}

/** The added water as liquid at `waterTempC` with `iceKg` of it as ice at 0 °C. */
function waterHeat(m: BatchMasses, waterTempC: number, iceKg: number): Heat {
  const added = Math.max(0, m.addedWaterKg);
  return heatOf({ waterKg: added - iceKg, waterTempC, iceKg });
}

/**
 * Fresh concrete temperature (°C) of one batch by the ACI 305R / 306R heat balance (domain.md
 * §5.1), with the fine and coarse aggregate each at its own temperature and its free water frozen
 * below 0 °C, and `iceKg` of the added water as ice. No heat of hydration, no losses.
 */
export function batchTempC(m: BatchMasses, t: SolidsTemps, waterTempC: number, iceKg = 0): number {
  const s = solidsHeat(m, t);
  const w = waterHeat(m, waterTempC, iceKg);
  return (s.heatKgC + w.heatKgC) / (s.capacityKg + w.capacityKg);
}

/**
 * The added-water temperature (°C) that brings the batch to `targetC`: the inverse of §5.1,
 * Tw = (T·capacity − heat of everything else)/Mw. Throws a RangeError when there is no water to add.
 */
export function waterTempForTargetC(m: BatchMasses, t: SolidsTemps, targetC: number): number {
  if (!(m.addedWaterKg > 0)) throw new RangeError("no mixing water to add");
  const s = solidsHeat(m, t);
  return (targetC * (s.capacityKg + m.addedWaterKg) - s.heatKgC) / m.addedWaterKg;
}

/**
 * Ice (kg) to put in place of that much of the added water, the rest liquid at `waterTempC`, to
 * bring the batch to `targetC`. The total water is unchanged, so the capacity is too:
 * Mi = (heat without ice − T·capacity)/(80 + Tw) (§5.1, as in iceForTargetC). 0 when liquid
 * water alone is at or below the target; null when even all of it as ice is too warm.
 */
export function iceForTargetKg(
  m: BatchMasses,
  t: SolidsTemps,
  waterTempC: number,
  targetC: number,
): number | null {
  const added = Math.max(0, m.addedWaterKg);
  const s = solidsHeat(m, t);
  const w = waterHeat(m, waterTempC, 0);
  const iceKg =
    (s.heatKgC + w.heatKgC - targetC * (s.capacityKg + w.capacityKg)) / (ICE_FUSION_C + waterTempC);
  if (iceKg <= 0) return 0;
  return iceKg > added ? null : iceKg;
}

export type PlacingState = "in_range" | "too_cold" | "too_hot";

/** Where a concrete temperature stands against a placing range (both ends inclusive). */
export function placingState(tempC: number, minC: number, maxC: number): PlacingState {
  if (tempC < minC) return "too_cold";
  if (tempC > maxC) return "too_hot";
  return "in_range";
}

/** What to do with the mixing water. */
export type BatchAdvice =
  /** Water alone brings the batch to the target (`iceAlternativeKg`: the ice that would do the same, when cooling). */
  | { action: "water"; waterTempC: number; reachesC: number; iceAlternativeKg: number | null }
  /** The target needs water above the heating limit; water at the limit still lands in the range. */
  | {
      action: "water_at_heating_limit";
      waterTempC: number;
      neededWaterTempC: number;
      reachesC: number;
    }
  /** Ice in place of part of the added water, the rest liquid at the entered temperature. */
  | { action: "ice"; iceKg: number; waterTempC: number; reachesC: number; aimsForMiddle: boolean }
  /** Water and ice cannot bring the batch into the range: the aggregates must change. */
  | {
      action: "cannot_reach";
      remedy: "heat_aggregates" | "cool_aggregates";
      /** For heating: the water temperature the middle would need. */
      neededWaterTempC: number | null;
      /** The nearest the batch can come: water at the heating limit, or all the added water as ice. */
      bestC: number;
    }
  /** The aggregates' free water is all the mix's water or more: nothing is left to add. */
  | { action: "no_mixing_water" };

export type BatchNote =
  | "fine_moisture_assumed"
  | "coarse_moisture_assumed"
  | "frozen_aggregate"
  | "hot_water_first"
  | "ice_share_high"
  | "ice_share_over_half";

export interface BatchPlan {
  /** The entered mixing-water temperature. */
  waterTempC: number;
  targetC: number;
  minC: number;
  maxC: number;
  /** The batch with the entered water temperature and no ice. */
  predictedC: number;
  state: PlacingState;
  advice: BatchAdvice;
  masses: BatchMasses;
  notes: BatchNote[];
}

/**
 * The next batch: its predicted temperature with the entered water, and the water temperature
 * (or ice) that brings it to the middle of the placing range. When the middle is out of reach,
 * the nearest safe step inside the range: water at the heating limit (NPCA 180 °F, §5.3), or the
 * ice for the top of the range; when the range itself is out of reach, which way the aggregates
 * must go. Water is liquid from {@link COLDEST_WATER_C} to the heating limit.
 */
export function planBatch(mix: MixProportions, temps: SolidsTemps, waterTempC: number): BatchPlan {
  const masses = batchMassesOf(mix);
  const minC = mix.placingTempMinC as number;
  const maxC = mix.placingTempMaxC as number;
  const targetC = (minC + maxC) / 2;
  const predictedC = batchTempC(masses, temps, waterTempC);
  const notes: BatchNote[] = [];
  if (masses.moistureAssumed.fine) notes.push("fine_moisture_assumed");
  if (masses.moistureAssumed.coarse) notes.push("coarse_moisture_assumed");
  if (
    (temps.fineC < 0 && masses.fineFreeWaterKg > 0) ||
    (temps.coarseC < 0 && masses.coarseFreeWaterKg > 0)
  )
    notes.push("frozen_aggregate");

  let advice: BatchAdvice;
  if (!(masses.addedWaterKg > 0)) {
    advice = { action: "no_mixing_water" };
  } else {
    const neededC = waterTempForTargetC(masses, temps, targetC);
    if (neededC > MAX_HEATED_WATER_C) {
      const atLimitC = batchTempC(masses, temps, MAX_HEATED_WATER_C);
      advice =
        atLimitC >= minC
          ? {
              action: "water_at_heating_limit",
              waterTempC: MAX_HEATED_WATER_C,
              neededWaterTempC: neededC,
              reachesC: atLimitC,
            }
          : {
              action: "cannot_reach",
              remedy: "heat_aggregates",
              neededWaterTempC: neededC,
              bestC: atLimitC,
            };
    } else if (neededC >= COLDEST_WATER_C) {
      const iceAlternativeKg =
        neededC < waterTempC ? iceForTargetKg(masses, temps, waterTempC, targetC) : null;
      advice = {
        action: "water",
        waterTempC: neededC,
        reachesC: targetC,
        iceAlternativeKg: iceAlternativeKg === 0 ? null : iceAlternativeKg,
      };
    } else {
      const toMiddle = iceForTargetKg(masses, temps, waterTempC, targetC);
      const toTop = toMiddle === null ? iceForTargetKg(masses, temps, waterTempC, maxC) : null;
      if (toMiddle === 0) {
        // The entered water is already colder than the target needs (it can only be near 0 °C).
        advice = {
          action: "water",
          waterTempC: neededC,
          reachesC: targetC,
          iceAlternativeKg: null,
        };
      } else if (toMiddle !== null) {
        advice = {
          action: "ice",
          iceKg: toMiddle,
          waterTempC,
          reachesC: targetC,
          aimsForMiddle: true,
        };
      } else if (toTop !== null && toTop > 0) {
        advice = { action: "ice", iceKg: toTop, waterTempC, reachesC: maxC, aimsForMiddle: false };
      } else {
        advice = {
          action: "cannot_reach",
          remedy: "cool_aggregates",
          neededWaterTempC: null,
          bestC: batchTempC(masses, temps, waterTempC, masses.addedWaterKg),
        };
      }
    }
  }
  const usedWaterC =
    advice.action === "water" || advice.action === "water_at_heating_limit"
      ? advice.waterTempC
      : waterTempC;
  if (usedWaterC > FLASH_SET_WATER_C || waterTempC > FLASH_SET_WATER_C)
    notes.push("hot_water_first");
  const iceKg =
    advice.action === "ice"
      ? advice.iceKg
      : advice.action === "water"
        ? (advice.iceAlternativeKg ?? 0)
        : 0;
  const iceShare = masses.addedWaterKg > 0 ? iceKg / masses.addedWaterKg : 0;
  if (iceShare > ICE_SHARE_LIMIT) notes.push("ice_share_over_half");
  else if (iceShare > ICE_SHARE_RELIABLE) notes.push("ice_share_high");

  return {
    waterTempC,
    targetC,
    minC,
    maxC,
    predictedC,
    state: placingState(predictedC, minC, maxC),
    advice,
    masses,
    notes,
  };
}

/** How a view writes a temperature (°C in) and a mass per volume (kg/m³ in), in its user's units. */
export interface Formatters {
  temp: (c: number) => string;
  mass: (kgM3: number) => string;
}

/** The advice in one or two plain sentences, in the reader's units. */
export function adviceText(plan: BatchPlan, f: Formatters): string {
  const a = plan.advice;
  const limit = f.temp(MAX_HEATED_WATER_C);
  switch (a.action) {
    case "water": {
      const change = a.waterTempC - plan.waterTempC;
      const verb =
        change >= WATER_CHANGE_WORTH_C
          ? "Heat the mixing water to"
          : change <= -WATER_CHANGE_WORTH_C
            ? "Cool the mixing water to"
            : "Keep the mixing water at";
      const ice =
        a.iceAlternativeKg !== null
          ? ` Or keep the water as it is and put ${f.mass(a.iceAlternativeKg)} of it in as ice.`
          : "";
      return `${verb} ${f.temp(a.waterTempC)} for about ${f.temp(a.reachesC)}, the middle of the placing range.${ice}`;
    }
    case "water_at_heating_limit":
      return `The middle of the range would need water at ${f.temp(a.neededWaterTempC)}, above the ${limit} heating limit. Water at ${limit} gives about ${f.temp(a.reachesC)}: inside the range, but low. Warm the aggregates for more margin.`;
    case "ice":
      return a.aimsForMiddle
        ? `Put ${f.mass(a.iceKg)} of the mixing water in as ice, the rest at ${f.temp(a.waterTempC)}, for about ${f.temp(a.reachesC)}, the middle of the placing range.`
        : `Put ${f.mass(a.iceKg)} of the mixing water in as ice, the rest at ${f.temp(a.waterTempC)}: that only reaches the top of the range, about ${f.temp(a.reachesC)}. Cool the aggregates for more margin.`;
    case "cannot_reach":
      return a.remedy === "heat_aggregates"
        ? `Cannot reach the placing range with water and ice alone: heat the aggregates. Water would have to be above the ${limit} heating limit${a.neededWaterTempC !== null ? ` (${f.temp(a.neededWaterTempC)} for the middle)` : ""}; at ${limit} the batch comes out about ${f.temp(a.bestC)}.`
        : `Cannot reach the placing range with water and ice alone: cool the aggregates. Even with all the added water as ice the batch comes out about ${f.temp(a.bestC)}.`;
    case "no_mixing_water":
      return `No mixing water is left to add: the aggregates' free water (${f.mass(plan.masses.fineFreeWaterKg + plan.masses.coarseFreeWaterKg)}) is at least the mix's water (${f.mass(plan.masses.designWaterKg)}). Check the moisture figures.`;
  }
}

/** Each note in a sentence, in the reader's units. */
export function noteText(note: BatchNote, f: Formatters): string {
  switch (note) {
    case "fine_moisture_assumed":
      return "The mix has no moisture figure for the fine aggregate: 0 % free moisture (SSD) was taken.";
    case "coarse_moisture_assumed":
      return "The mix has no moisture figure for the coarse aggregate: 0 % free moisture (SSD) was taken.";
    case "frozen_aggregate":
      return `Aggregate below ${f.temp(0)}: its free water is counted as ice, which takes heat to melt. Frozen lumps must not go into the mixer.`;
    case "hot_water_first":
      return `Water above about ${f.temp(FLASH_SET_WATER_C)} should meet the aggregates before the cement, to avoid a flash set.`;
    case "ice_share_high":
      return `More than ${Math.round(ICE_SHARE_RELIABLE * 100)} % of the water as ice: the heat balance is less reliable there, and the concrete tends to come out warmer than predicted. Check the first batch closely.`;
    case "ice_share_over_half":
      return `More than half the water as ice: the heat balance cannot be trusted there. Cool the aggregates (shade, sprinkle) rather than count on this much ice, and check the first batch closely.`;
  }
}

/** The caution shown with every prediction. */
export const BATCH_CAUTION =
  "An estimate by the ACI 305R / 306R heat balance of the ingredients: it leaves out the heat of mixing and early hydration and the losses in batching, mixing and transport. Check the concrete with a thermometer at discharge before placing. The placing range, hot-water and ice practice are set by the engineer of record, the project specification and local codes.";
