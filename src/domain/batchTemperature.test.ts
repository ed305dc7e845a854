import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  aggregateClassOf,
  aggregateTemps,
  adviceText,
  batchMassesOf,
  batchTempC,
  iceForTargetKg,
  missingMixFields,
  noteText,
  placingState,
  planBatch,
  waterTempForTargetC,
  BATCH_CAUTION,
  MAX_HEATED_WATER_C,
  type BatchMasses,
  type BinInput,
  type MixProportions,
} from "./batchTemperature";
import { expectWithin } from "./maturity/testFixtures";
import { SILENT_AFTER_MS } from "./sensorState";
import {
  freshConcreteTempC,
  iceForTargetC,
  mixingWaterTempForTargetC,
  type ConcreteBatch,
} from "./thermal/freshConcrete";
import { cToF } from "./units";

/** One aggregate only (the worked examples of domain.md §5.2 have one), as batch masses. */
function oneAggregate(b: {
  aggregateKg: number;
  freeWaterKg: number;
  cementKg: number;
  waterKg: number;
}): BatchMasses {
  return {
    cementitiousKg: b.cementKg,
    fineAggKg: b.aggregateKg,
    coarseAggKg: 0,
    fineFreeWaterKg: b.freeWaterKg,
    coarseFreeWaterKg: 0,
    designWaterKg: b.waterKg + b.freeWaterKg,
    addedWaterKg: b.waterKg,
    moistureAssumed: { fine: false, coarse: false },
  };
}
const at = (aggC: number, cementC: number) => ({ fineC: aggC, coarseC: aggC, cementC });

/** domain.md §5.2 F-2: Ma 1850 kg @5 °C, Mwa 60 kg, Mc 350 kg @15 °C, Mw 110 kg @60 °C. */
const F2 = oneAggregate({ aggregateKg: 1850, freeWaterKg: 60, cementKg: 350, waterKg: 110 });
/** domain.md §5.2 F-5: Ma 1850 @32, Mwa 40, Mc 350 @45, 140 kg of water in all at 20 °C. */
const F5 = oneAggregate({ aggregateKg: 1850, freeWaterKg: 40, cementKg: 350, waterKg: 140 });

/** The demo plant's HS-10 (invented, simulator/plant.ts): per m³. */
const HS10: MixProportions = {
  cementKgM3: 505,
  scmKgM3: 90,
  waterKgM3: 160,
  fineAggKgM3: 740,
  coarseAggKgM3: 1010,
  fineAggMoisturePct: 5,
  coarseAggMoisturePct: 1,
  placingTempMinC: 10,
  placingTempMaxC: 32,
};
const EMPTY_MIX: MixProportions = {
  cementKgM3: null,
  scmKgM3: null,
  waterKgM3: null,
  fineAggKgM3: null,
  coarseAggKgM3: null,
  fineAggMoisturePct: null,
  coarseAggMoisturePct: null,
  placingTempMinC: null,
  placingTempMaxC: null,
};

describe("batchTempC", () => {
  it.each([
    // domain.md §5.2 F-2: 10090/654 = 15.428 °C, ±0.01
    { name: "F-2", m: F2, t: at(5, 15), waterC: 60, iceKg: 0, tempC: 15.428 },
    // domain.md §5.2 F-4 (aggregates at −5 °C, free water frozen): 770/654 = 1.177 °C, ±0.01
    { name: "F-4", m: F2, t: at(-5, 15), waterC: 60, iceKg: 0, tempC: 1.177 },
    // domain.md §5.2 F-5 (40 kg of the water as ice): 16569/664 = 24.953 °C, ±0.01
    { name: "F-5", m: F5, t: at(32, 45), waterC: 20, iceKg: 40, tempC: 24.953 },
    // domain.md §5.2 F-5, same total water with no ice: 30.977 °C, ±0.01
    { name: "F-5 without ice", m: F5, t: at(32, 45), waterC: 20, iceKg: 0, tempC: 30.977 },
    // domain.md §5.1 published example (F-1): 28151.5/702.5 = 40.073 °C (published 40.1), ±0.01
    {
      name: "F-1",
      m: oneAggregate({ aggregateKg: 2000, freeWaterKg: 0, cementKg: 375, waterKg: 180 }),
      t: at(41, 46.2),
      waterC: 35,
      iceKg: 0,
      tempC: 40.073,
    },
  ])("gives $tempC °C for $name", ({ m, t, waterC, iceKg, tempC }) => {
    expectWithin(batchTempC(m, t, waterC, iceKg), tempC, 0.01);
  });

  it("gives F-2's 59.771 °F in the inch-pound form", () => {
    // domain.md §5.2 F-6: F-2 recomputed in °F and lb is 59.771 °F
    expectWithin(cToF(batchTempC(F2, at(5, 15), 60)), 59.771, 0.018);
  });

  it("weighs two aggregates at different temperatures, one of them frozen", () => {
    // F-2 split in two halves (925 kg with 30 kg free water each), one at −5 °C (frozen, as F-4)
    // and one at +5 °C (as F-2). The balance adds part by part (domain.md §5.1 terms), so the
    // numerator is half of F-2's plus half of F-4's: (10090 + 770)/2 = 5430, over 654 -> 8.303 °C.
    const split: BatchMasses = {
      ...F2,
      fineAggKg: 925,
      coarseAggKg: 925,
      fineFreeWaterKg: 30,
      coarseFreeWaterKg: 30,
    };
    expectWithin(batchTempC(split, { fineC: -5, coarseC: 5, cementC: 15 }, 60), 5430 / 654, 1e-9);
    // The same halves at one temperature give F-2 itself (domain.md §5.2 F-2: 15.428 °C).
    expectWithin(batchTempC(split, at(5, 15), 60), 15.428, 0.01);
  });

  it("agrees with freshConcreteTempC for any batch of one aggregate", () => {
    // Cross-check against the module of domain.md §5.1 (src/domain/thermal/freshConcrete.ts).
    fc.assert(
      fc.property(
        fc.record({
          aggregateKg: fc.double({ min: 500, max: 2200, noNaN: true }),
          aggregateTempC: fc.double({ min: -20, max: 50, noNaN: true }),
          freeWaterKg: fc.double({ min: 0, max: 120, noNaN: true }),
          cementKg: fc.double({ min: 150, max: 700, noNaN: true }),
          cementTempC: fc.double({ min: -10, max: 80, noNaN: true }),
          waterKg: fc.double({ min: 20, max: 220, noNaN: true }),
          waterTempC: fc.double({ min: 0, max: 95, noNaN: true }),
          iceShare: fc.double({ min: 0, max: 1, noNaN: true }),
        }),
        (r) => {
          const iceKg = r.waterKg * r.iceShare;
          const batch: ConcreteBatch = {
            aggregateKg: r.aggregateKg,
            aggregateTempC: r.aggregateTempC,
            freeWaterKg: r.freeWaterKg,
            cementKg: r.cementKg,
            cementTempC: r.cementTempC,
            waterKg: r.waterKg - iceKg,
            waterTempC: r.waterTempC,
            iceKg,
          };
          const m = oneAggregate({ ...r, waterKg: r.waterKg });
          const t = at(r.aggregateTempC, r.cementTempC);
          expectWithin(batchTempC(m, t, r.waterTempC, iceKg), freshConcreteTempC(batch), 1e-9);
          const target = 20;
          const noIce = { ...batch, waterKg: r.waterKg, iceKg: 0 };
          expectWithin(
            waterTempForTargetC(m, t, target),
            mixingWaterTempForTargetC(noIce, target).waterTempC,
            1e-7,
          );
          const ice = iceForTargetC(noIce, target).iceKg;
          const mine = iceForTargetKg(m, t, r.waterTempC, target);
          if (ice === null) expect(mine).toBeNull();
          else expectWithin(mine ?? NaN, ice, 1e-7);
        },
      ),
    );
  });
});

describe("waterTempForTargetC and iceForTargetKg", () => {
  it("finds F-3's 75.291 °C water and feeds back to 18 °C", () => {
    // domain.md §5.2 F-3: (18 × 654 − 3190 − 300)/110 = 75.291 °C, ±0.01; fed back: 18.000
    const waterC = waterTempForTargetC(F2, at(5, 15), 18);
    expectWithin(waterC, 75.291, 0.01);
    expectWithin(batchTempC(F2, at(5, 15), waterC), 18, 1e-9);
  });

  it("finds F-5's 40 kg of ice", () => {
    // domain.md §5.2 F-5: 40 kg of the 140 kg of water as ice gives 24.953 °C
    const target = batchTempC(F5, at(32, 45), 20, 40);
    expectWithin(iceForTargetKg(F5, at(32, 45), 20, target) ?? NaN, 40, 1e-9);
    // domain.md §5.2 F-5: without ice it is 30.977 °C, so 35 °C needs none
    expect(iceForTargetKg(F5, at(32, 45), 20, 35)).toBe(0);
    // domain.md §5.1 balance on F-5: 5 °C needs (20569 − 3320)/100 = 172 kg, over the 140 kg of water
    expect(iceForTargetKg(F5, at(32, 45), 20, 5)).toBeNull();
  });
});

describe("batchMassesOf", () => {
  it("takes the free water off the mix's water (moisture above SSD)", () => {
    const m = batchMassesOf(HS10);
    // Arithmetic on the module's stated assumption (common practice: SSD masses, free moisture):
    // 740 × 5 % = 37 kg and 1010 × 1 % = 10.1 kg of free water; 160 − 47.1 = 112.9 kg to add.
    expectWithin(m.fineFreeWaterKg, 37, 1e-9);
    expectWithin(m.coarseFreeWaterKg, 10.1, 1e-9);
    expectWithin(m.addedWaterKg, 112.9, 1e-9);
    // Cement and SCM together: 505 + 90 = 595 kg.
    expect(m.cementitiousKg).toBe(595);
    expect(m.moistureAssumed).toEqual({ fine: false, coarse: false });
  });

  it("takes 0 % moisture where none is filled in, and says so", () => {
    const plan = planBatch({ ...HS10, fineAggMoisturePct: null }, at(15, 15), 15);
    expectWithin(plan.masses.addedWaterKg, 160 - 10.1, 1e-9);
    expect(plan.notes).toContain("fine_moisture_assumed");
    expect(plan.notes).not.toContain("coarse_moisture_assumed");
  });

  it("refuses a mix whose proportions are incomplete", () => {
    expect(() => batchMassesOf(EMPTY_MIX)).toThrow(RangeError);
  });
});

describe("missingMixFields", () => {
  it.each([
    {
      name: "a mix with nothing filled in",
      mix: EMPTY_MIX,
      missing: [
        "cementKgM3",
        "waterKgM3",
        "fineAggKgM3",
        "coarseAggKgM3",
        "placingTempMinC",
        "placingTempMaxC",
      ],
    },
    { name: "a complete mix", mix: HS10, missing: [] },
    // common practice: a placing range is lowest below highest
    {
      name: "a placing range upside down",
      mix: { ...HS10, placingTempMinC: 30, placingTempMaxC: 12 },
      missing: ["placingTempMinC", "placingTempMaxC"],
    },
    // common practice: concrete has water and cement; a mix may lack one aggregate, not both
    { name: "no water", mix: { ...HS10, waterKgM3: 0 }, missing: ["waterKgM3"] },
    {
      name: "no aggregate at all",
      mix: { ...HS10, fineAggKgM3: 0, coarseAggKgM3: 0 },
      missing: ["fineAggKgM3", "coarseAggKgM3"],
    },
    { name: "a mortar without coarse aggregate", mix: { ...HS10, coarseAggKgM3: 0 }, missing: [] },
  ])("lists what $name lacks", ({ mix, missing }) => {
    expect(missingMixFields(mix)).toEqual(missing);
  });
});

describe("aggregateClassOf", () => {
  it.each([
    ["fine", "fine"],
    ["Concrete sand", "fine"],
    ["coarse", "coarse"],
    ["3/4 in. stone", "coarse"],
    ["pea gravel", "coarse"],
    ["cement", null],
    ["", null],
    [null, null],
  ] as const)("reads %j as %j", (material, cls) => {
    // common practice: sand is the fine aggregate; stone, gravel and chip are coarse
    expect(aggregateClassOf(material)).toBe(cls);
  });
});

describe("aggregateTemps", () => {
  const now = Date.UTC(2026, 2, 2, 4);
  const bins: BinInput[] = [
    { id: "AB-01", aggregate: "fine", tempC: 2, lastSeenAtMs: now - 60_000 },
    { id: "AB-02", aggregate: "coarse", tempC: -1, lastSeenAtMs: now - 60_000 },
    { id: "AB-03", aggregate: "coarse", tempC: 3, lastSeenAtMs: now - 120_000 },
    { id: "AB-04", aggregate: "fine", tempC: 6, lastSeenAtMs: now - 30_000 },
    // Silent: its last reading is older than the floor's silence limit.
    { id: "AB-05", aggregate: "fine", tempC: 40, lastSeenAtMs: now - SILENT_AFTER_MS - 1 },
    { id: "AB-06", aggregate: null, tempC: 10, lastSeenAtMs: now },
  ];

  it("averages the reporting bins of each class and leaves silent ones out", () => {
    // common practice: each reporting bin counts once; (2 + 6)/2 = 4 and (−1 + 3)/2 = 1
    expect(aggregateTemps(bins, now)).toEqual({
      fine: { tempC: 4, binIds: ["AB-01", "AB-04"], source: "bins" },
      coarse: { tempC: 1, binIds: ["AB-02", "AB-03"], source: "bins" },
    });
  });

  it("uses only the chosen bins, and a hand-entered temperature over the bins", () => {
    const t = aggregateTemps(bins, now, { chosen: ["AB-04", "AB-05"], enteredC: { coarse: 7.5 } });
    expect(t.fine).toEqual({ tempC: 6, binIds: ["AB-04"], source: "bins" });
    expect(t.coarse).toEqual({ tempC: 7.5, binIds: [], source: "entered" });
  });

  it("has no temperature for a class without a reporting bin", () => {
    expect(aggregateTemps(bins.slice(1, 3), now).fine).toEqual({
      tempC: null,
      binIds: [],
      source: "none",
    });
  });
});

describe("placingState", () => {
  it.each([
    // HS-10's invented range 10 to 32 °C, both ends inclusive (common practice)
    { tempC: 9.9, state: "too_cold" },
    { tempC: 10, state: "in_range" },
    { tempC: 32, state: "in_range" },
    { tempC: 32.1, state: "too_hot" },
  ])("calls $tempC °C $state", ({ tempC, state }) => {
    expect(placingState(tempC, 10, 32)).toBe(state);
  });
});

// Expected values below come from the §5.1 balance worked by hand for HS-10 (per m³: 740 kg
// fine with 37 kg free water, 1010 kg coarse with 10.1 kg, 595 kg cementitious, 112.9 kg to add):
// capacity 0.22 × 2345 + 160 = 675.9 kg; target the middle of 10–32 °C = 21 °C.
describe("planBatch", () => {
  it("asks for hot water on a cold morning (bins at 8 °C)", () => {
    const plan = planBatch(HS10, at(8, 15), 15);
    // §5.1: heat without water = 0.22 × (8 × 1750 + 15 × 595) + 8 × 47.1 = 5420.3;
    // T = (5420.3 + 15 × 112.9)/675.9 = 10.525 °C (in range, low); Tw = (21 × 675.9 − 5420.3)/112.9 = 77.711 °C
    expectWithin(plan.predictedC, 10.525, 0.001);
    expect(plan.state).toBe("in_range");
    expect(plan.advice.action).toBe("water");
    if (plan.advice.action !== "water") return;
    expectWithin(plan.advice.waterTempC, 77.711, 0.001);
    expect(plan.advice.waterTempC).toBeLessThan(MAX_HEATED_WATER_C);
    expect(plan.notes).toContain("hot_water_first");
    const text = adviceText(plan, { temp: (c) => `${c.toFixed(1)} °C`, mass: (k) => `${k} kg` });
    expect(text).toContain("Heat the mixing water to 77.7 °C");
  });

  it("asks for no change when the water is already within 1 °C of what the middle needs", () => {
    // §5.1, as above: 77.711 °C is needed; water at 77.2 °C is 0.5 °C off, under 0.1 °C of concrete
    // (∂T/∂Tw ≈ 0.17, domain.md §5.2)
    const plan = planBatch(HS10, at(8, 15), 77.2);
    const text = adviceText(plan, { temp: (c) => `${c.toFixed(1)} °C`, mass: (k) => `${k} kg` });
    expect(text).toMatch(/^Keep the mixing water at 77\.7 °C for about 21\.0 °C/);
  });

  it("heats the water to the limit when the middle needs more (bins at 4 °C)", () => {
    const plan = planBatch(HS10, at(4, 15), 15);
    // §5.1: heat without water = 3691.9; Tw for 21 °C = (14193.9 − 3691.9)/112.9 = 93.020 °C,
    // above NPCA's 180 °F (82.2 °C, §5.3); at 82.2 °C: (3691.9 + 82.222 × 112.9)/675.9 = 19.196 °C
    expect(plan.state).toBe("too_cold");
    expect(plan.advice.action).toBe("water_at_heating_limit");
    if (plan.advice.action !== "water_at_heating_limit") return;
    expectWithin(plan.advice.neededWaterTempC, 93.02, 0.001);
    expectWithin(plan.advice.reachesC, 19.196, 0.001);
  });

  it("flags that water and ice cannot do it when the bins are frozen (−2 °C)", () => {
    const plan = planBatch(HS10, at(-2, 15), 15);
    // §5.1 with frozen free water: heat without water = 0.22 × (−2 × 1750 + 15 × 595)
    // + 47.1 × (0.5 × −2 − 80) = −2621.6; with 82.2 °C water: (−2621.6 + 9283)/675.9 = 9.855 °C < 10 °C
    expect(plan.notes).toContain("frozen_aggregate");
    expect(plan.advice).toMatchObject({ action: "cannot_reach", remedy: "heat_aggregates" });
    if (plan.advice.action !== "cannot_reach") return;
    expectWithin(plan.advice.bestC, 9.855, 0.001);
    // §5.1 inverse: (21 × 675.9 + 2621.6)/112.9 = 148.94 °C for the middle
    expectWithin(plan.advice.neededWaterTempC ?? NaN, 148.942, 0.001);
    const text = adviceText(plan, { temp: (c) => `${c.toFixed(1)} °C`, mass: (k) => `${k} kg` });
    expect(text).toMatch(
      /^Cannot reach the placing range with water and ice alone: heat the aggregates\. Water would have to be above the 82\.2 °C heating limit/,
    );
  });

  it("offers cooler water, or ice instead, on a warm day (bins 22 °C, cement 25 °C, water 25 °C)", () => {
    const plan = planBatch(HS10, at(22, 25), 25);
    // §5.1: T = 23.082 °C; Tw for 21 °C = 12.535 °C; or 13.403 kg of the 25 °C water as ice
    expectWithin(plan.predictedC, 23.082, 0.001);
    expect(plan.advice.action).toBe("water");
    if (plan.advice.action !== "water") return;
    expectWithin(plan.advice.waterTempC, 12.535, 0.001);
    expectWithin(plan.advice.iceAlternativeKg ?? NaN, 13.403, 0.001);
    const text = adviceText(plan, { temp: (c) => `${c.toFixed(1)} °C`, mass: (k) => `${k} kg` });
    expect(text).toContain("Cool the mixing water to 12.5 °C");
  });

  it("asks for ice when water would have to freeze (bins 30 °C, cement 40 °C)", () => {
    const plan = planBatch(HS10, at(30, 40), 15);
    // §5.1: T = 29.431 °C with 15 °C water; Tw for 21 °C = −35.47 °C (impossible); ice = 59.985 kg
    // of the 112.9 kg (53 %: over the 50 % past which the ice equation gives irrational results,
    // Jabbar 2017 in §5.1)
    expectWithin(plan.predictedC, 29.431, 0.001);
    expect(plan.advice).toMatchObject({ action: "ice", aimsForMiddle: true, reachesC: 21 });
    if (plan.advice.action !== "ice") return;
    expectWithin(plan.advice.iceKg, 59.985, 0.001);
    expect(plan.notes).toContain("ice_share_over_half");
    expect(plan.notes).not.toContain("ice_share_high");
    expectWithin(batchTempC(plan.masses, at(30, 40), 15, plan.advice.iceKg), 21, 1e-9);
  });

  it("warns between 20 % and 50 % of the water as ice (bins 26 °C, cement 30 °C, water 10 °C)", () => {
    const plan = planBatch(HS10, at(26, 30), 10);
    // §5.1 on HS-10: heat without water = 0.22 × (26 × 1750 + 30 × 595) + 26 × 47.1 = 15161.6;
    // Tw for 21 °C = (14193.9 − 15161.6)/112.9 = −8.57 °C, so ice: (15161.6 + 10 × 112.9 − 14193.9)/90
    // = 23.297 kg, 20.6 % of the water (Jabbar 2017 in §5.1: less reliable past about 20 %)
    expect(plan.advice).toMatchObject({ action: "ice", aimsForMiddle: true });
    if (plan.advice.action !== "ice") return;
    expectWithin(plan.advice.iceKg, 23.297, 0.001);
    expect(plan.notes).toContain("ice_share_high");
    expect(plan.notes).not.toContain("ice_share_over_half");
  });

  it("settles for the top of the range when the middle needs more ice than water (bins 45 °C)", () => {
    const plan = planBatch(HS10, at(45, 70), 25);
    // §5.1: ice for 21 °C = 164.15 kg > 112.9 kg of water; for 32 °C = 93.345 kg
    expect(plan.advice).toMatchObject({ action: "ice", aimsForMiddle: false, reachesC: 32 });
    if (plan.advice.action !== "ice") return;
    expectWithin(plan.advice.iceKg, 93.345, 0.001);
  });

  it("says to cool the aggregates when even all the water as ice is too warm (bins 55 °C)", () => {
    const plan = planBatch(HS10, at(55, 70), 25);
    // §5.1: ice for 32 °C = 134.5 kg > 112.9 kg; all of it as ice gives 35.355 °C
    expect(plan.state).toBe("too_hot");
    expect(plan.advice).toMatchObject({ action: "cannot_reach", remedy: "cool_aggregates" });
    if (plan.advice.action !== "cannot_reach") return;
    expectWithin(plan.advice.bestC, 35.355, 0.001);
    const text = adviceText(plan, { temp: (c) => `${c.toFixed(1)} °C`, mass: (k) => `${k} kg` });
    expect(text).toMatch(
      /^Cannot reach the placing range with water and ice alone: cool the aggregates\./,
    );
  });

  it("says when the aggregates bring all the water the mix needs", () => {
    // 740 kg × 22 % = 162.8 kg of free water on the sand alone, over the mix's 160 kg
    const plan = planBatch({ ...HS10, fineAggMoisturePct: 22 }, at(15, 15), 15);
    expect(plan.advice).toEqual({ action: "no_mixing_water" });
    const text = adviceText(plan, { temp: (c) => `${c} °C`, mass: (k) => `${k.toFixed(1)} kg` });
    expect(text).toContain("(172.9 kg) is at least the mix's water (160.0 kg)");
  });

  it("words every note and carries a caution that defers to the engineer of record", () => {
    const f = { temp: (c: number) => `${c} °C`, mass: (k: number) => `${k} kg` };
    for (const n of [
      "fine_moisture_assumed",
      "coarse_moisture_assumed",
      "frozen_aggregate",
      "hot_water_first",
      "ice_share_high",
      "ice_share_over_half",
    ] as const)
      expect(noteText(n, f).length).toBeGreaterThan(20);
    expect(BATCH_CAUTION).toMatch(/ACI 305R \/ 306R/);
    expect(BATCH_CAUTION).toMatch(/thermometer at discharge/);
    expect(BATCH_CAUTION).toMatch(/engineer of record/);
  });
});
