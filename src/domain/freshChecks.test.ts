import { describe, expect, it } from "vitest";
import {
  DEFAULT_PLACING_MAX_C,
  DEFAULT_PLACING_MIN_C,
  dischargeTempFlag,
  kgM3ToLbFt3,
  lbFt3ToKgM3,
  placingRange,
} from "./freshChecks";
import { cToF } from "./units";

describe("the discharge temperature against the placing range", () => {
  const range = placingRange(10, 32);
  it.each([
    [9.9, "low"],
    [10, "within"],
    [21, "within"],
    [32, "within"],
    [32.1, "high"],
  ] as const)("%f °C in 10–32 °C is %s (bounds inclusive)", (tempC, flag) => {
    expect(dischargeTempFlag(tempC, range)).toBe(flag);
  });

  it("flags nothing when no temperature was recorded", () => {
    expect(dischargeTempFlag(null, range)).toBeNull();
  });

  // domain.md §5.3 (ACI 301-20, ACI 305.1-14): 35 °C (95 °F) maximum at discharge; §7.2 (NPCA):
  // precast placement at 45 °F (7 °C) or more.
  it("falls back to 7 °C (45 °F) and 35 °C (95 °F) for a mix with no range", () => {
    expect(placingRange(null, null)).toEqual({ minC: 7, maxC: 35, source: "default" });
    expect(cToF(DEFAULT_PLACING_MIN_C)).toBeCloseTo(44.6, 6); // NPCA says 45 °F; 7 °C is 44.6 °F
    expect(cToF(DEFAULT_PLACING_MAX_C)).toBeCloseTo(95, 9);
    expect(dischargeTempFlag(35.5, placingRange(null, null))).toBe("high");
    expect(dischargeTempFlag(6.5, placingRange(null, null))).toBe("low");
  });

  it("keeps a mix's own bound and fills only the one it leaves empty", () => {
    expect(placingRange(12, null)).toEqual({ minC: 12, maxC: 35, source: "mix" });
  });
});

describe("unit weight units", () => {
  // 1 lb/ft³ = 0.45359237 kg / (0.3048 m)³ = 16.018463 kg/m³ (exact definitions of the pound and
  // the foot, domain.md §8.3 for the pound; the foot is 12 × 0.0254 m).
  it("converts lb/ft³ and kg/m³ by the exact factor", () => {
    expect(lbFt3ToKgM3(1)).toBeCloseTo(16.018463, 6);
    // Normal-weight concrete of 150 lb/ft³ is about 2403 kg/m³ (common practice).
    expect(lbFt3ToKgM3(150)).toBeCloseTo(2402.7695, 3);
    expect(kgM3ToLbFt3(lbFt3ToKgM3(143.2))).toBeCloseTo(143.2, 9);
  });
});
