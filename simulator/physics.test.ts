import { describe, expect, it } from "vitest";
import {
  bagRhPct,
  binTempC,
  concreteCoreTempC,
  hydrationRiseC,
  noise,
  outdoorTempC,
} from "./physics";

const profile = { placingTempC: 22, peakRiseC: 20, peakAgeH: 12 };

describe("demo physics", () => {
  it("puts the hydration peak at the chosen age and height", () => {
    expect(hydrationRiseC(12, profile)).toBeCloseTo(20, 9);
    expect(hydrationRiseC(6, profile)).toBeLessThan(20);
    expect(hydrationRiseC(48, profile)).toBeLessThan(1);
    expect(hydrationRiseC(-1, profile)).toBe(0);
  });

  it("starts the core at its placing temperature", () => {
    expect(concreteCoreTempC(0, 25, profile)).toBeCloseTo(22, 9);
  });

  it("is warmest mid-afternoon and coldest near dawn", () => {
    const day = Date.UTC(2026, 11, 1);
    const at = (h: number) => outdoorTempC(day + h * 3_600_000, 5, 6, 0);
    expect(at(15)).toBeCloseTo(11, 9);
    expect(at(3)).toBeCloseTo(-1, 9);
    expect(Math.abs(binTempC(day + 18 * 3_600_000, 5, 6, 0) - 5)).toBeLessThanOrEqual(2.1);
  });

  it("keeps a wet bag humid and lets a dry one fall toward the room", () => {
    expect(bagRhPct(0, 50, null)).toBe(97.5);
    expect(bagRhPct(10 * 3_600_000, 50, 0)).toBeLessThan(60);
  });

  it("gives the same noise for the same key and step", () => {
    expect(noise("CB-01", 7)).toBe(noise("CB-01", 7));
    expect(noise("CB-01", 7)).not.toBe(noise("CB-02", 7));
  });
});
