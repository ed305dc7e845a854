import { describe, expect, it } from "vitest";
import { expectWithin } from "../maturity/testFixtures";
import { cToF } from "../units";
import {
  freshConcreteTempC,
  iceForTargetC,
  mixingWaterTempForTargetC,
  type ConcreteBatch,
} from "./freshConcrete";

/** domain.md §5.1 published worked example (hot-weather ice calculation sheet). */
const F1: ConcreteBatch = {
  aggregateKg: 2000,
  aggregateTempC: 41,
  freeWaterKg: 0,
  cementKg: 375,
  cementTempC: 46.2,
  waterKg: 180,
  waterTempC: 35,
  iceKg: 0,
};
/** domain.md §5.2 F-2: cold-weather batch per m³. */
const F2: ConcreteBatch = {
  aggregateKg: 1850,
  aggregateTempC: 5,
  freeWaterKg: 60,
  cementKg: 350,
  cementTempC: 15,
  waterKg: 110,
  waterTempC: 60,
  iceKg: 0,
};
/** domain.md §5.2 F-4: F-2 with aggregates at −5 °C and their free water frozen. */
const F4: ConcreteBatch = { ...F2, aggregateTempC: -5 };
/** domain.md §5.2 F-5: hot-weather batch with 40 kg of the water as ice. */
const F5: ConcreteBatch = {
  aggregateKg: 1850,
  aggregateTempC: 32,
  freeWaterKg: 40,
  cementKg: 350,
  cementTempC: 45,
  waterKg: 100,
  waterTempC: 20,
  iceKg: 40,
};
/** domain.md §5.2 F-5 companion: the same total water, 140 kg liquid at 20 °C. */
const F5_NO_ICE: ConcreteBatch = { ...F5, waterKg: 140, iceKg: 0 };

describe("freshConcreteTempC", () => {
  it.each([
    // domain.md §5.2 F-1 (published example, 28151.5/702.5): 40.073 °C (published 40.1), ±0.01
    { name: "F-1", batch: F1, tempC: 40.073 },
    // domain.md §5.2 F-2: 10090/654 = 15.428 °C, ±0.01
    { name: "F-2", batch: F2, tempC: 15.428 },
    // domain.md §5.2 F-4 (frozen free water, 0.5·Ta − 80): 770/654 = 1.177 °C, ±0.01
    { name: "F-4", batch: F4, tempC: 1.177 },
    // domain.md §5.2 F-5 (ice, −80·Mi): 16569/664 = 24.953 °C, ±0.01
    { name: "F-5", batch: F5, tempC: 24.953 },
    // domain.md §5.2 F-5: same total water without ice -> 30.977 °C, ±0.01
    { name: "F-5 without ice", batch: F5_NO_ICE, tempC: 30.977 },
  ])("gives $tempC °C for $name", ({ batch, tempC }) => {
    expectWithin(freshConcreteTempC(batch), tempC, 0.01);
  });

  it.each([
    // domain.md §5.2 F-6: F-2 in °F and lb is 59.771 °F
    { batch: F2, tempF: 59.771 },
    // domain.md §5.2 F-6: F-4 is 34.119 °F
    { batch: F4, tempF: 34.119 },
    // domain.md §5.2 F-6: F-5 is 76.916 °F
    { batch: F5, tempF: 76.916 },
  ])("agrees with the inch-pound form: $tempF °F", ({ batch, tempF }) => {
    expectWithin(cToF(freshConcreteTempC(batch)), tempF, 0.01 * 1.8);
  });

  it.each([
    // domain.md §5.2 sensitivities of F-2: ∂T/∂Ta = 0.714 °C per °C (aggregate and its free water)
    { change: { aggregateTempC: F2.aggregateTempC + 1 }, perC: 0.714 },
    // domain.md §5.2: ∂T/∂Tc = 0.118
    { change: { cementTempC: F2.cementTempC + 1 }, perC: 0.118 },
    // domain.md §5.2: ∂T/∂Tw = 0.168
    { change: { waterTempC: F2.waterTempC + 1 }, perC: 0.168 },
  ])("moves $perC °C per °C of one ingredient", ({ change, perC }) => {
    expectWithin(freshConcreteTempC({ ...F2, ...change }) - freshConcreteTempC(F2), perC, 5e-4);
  });

  it("refuses a negative mass", () => {
    // common practice: a batch has no negative ingredient
    expect(() => freshConcreteTempC({ ...F2, cementKg: -1 })).toThrow(RangeError);
  });
});

describe("mixingWaterTempForTargetC", () => {
  it("finds the F-3 water temperature and feeds back to the target", () => {
    const { waterTempC, status, aboveHeatingLimit } = mixingWaterTempForTargetC(F2, 18);
    // domain.md §5.2 F-3: (18 × 654 − 3190 − 300)/110 = 75.291 °C, ±0.01
    expectWithin(waterTempC, 75.291, 0.01);
    expect(status).toBe("ok");
    // domain.md §5.3 (NPCA): 75 °C is under the 180 °F (82 °C) heated-water limit
    expect(aboveHeatingLimit).toBe(false);
    // domain.md §5.2 F-3: feeding it back gives 18.000
    expectWithin(freshConcreteTempC({ ...F2, waterTempC }), 18, 1e-9);
  });

  it("flags water that would have to boil", () => {
    const result = mixingWaterTempForTargetC(F4, 18);
    // domain.md §5.1 inverse on F-4: (18 × 654 + 5830)/110 = 160.0 °C, above 100 °C: impossible
    expectWithin(result.waterTempC, 160.018, 0.01);
    expect(result.status).toBe("above-boiling");
    expect(result.aboveHeatingLimit).toBe(true);
  });

  it("flags water that would have to freeze", () => {
    const result = mixingWaterTempForTargetC(F5_NO_ICE, 25);
    // domain.md §5.1 inverse on F-5 without ice: (25 × 664 − 17769)/140 = −8.35 °C: needs ice
    expectWithin(result.waterTempC, -8.35, 0.01);
    expect(result.status).toBe("below-freezing");
  });
});

describe("iceForTargetC", () => {
  it("finds the 40 kg of ice of F-5", () => {
    const target = freshConcreteTempC(F5);
    // domain.md §5.2 F-5: 40 kg of the 140 kg water as ice gives 24.953 °C, so that target needs 40 kg
    expectWithin(iceForTargetC(F5_NO_ICE, target).iceKg ?? Number.NaN, 40, 1e-9);
    expect(iceForTargetC(F5_NO_ICE, target).status).toBe("ok");
  });

  it.each([
    // domain.md §5.2 F-5: without ice the batch is 30.977 °C, so 35 °C needs none
    { targetC: 35, result: { iceKg: 0, status: "no-ice-needed" } },
    // domain.md §5.1 balance on F-5: 5 °C needs (20569 − 3320)/100 = 172 kg of ice, more than the 140 kg of water
    { targetC: 5, result: { iceKg: null, status: "not-enough-water" } },
  ])("answers $result.status for a target of $targetC °C", ({ targetC, result }) => {
    expect(iceForTargetC(F5_NO_ICE, targetC)).toEqual(result);
  });
});
