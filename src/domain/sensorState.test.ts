import { describe, expect, it } from "vitest";
import { bagBelowMoistLevel, formatDuration, sensorState } from "./sensorState";

describe("sensor state", () => {
  it("is silent after fifteen minutes without a reading (common practice)", () => {
    expect(sensorState(0, 15 * 60_000)).toBe("reporting");
    expect(sensorState(0, 15 * 60_000 + 1)).toBe("silent");
    expect(sensorState(null, 0)).toBe("never");
  });

  // domain.md §7.1 (ASTM C511): RH ≥ 95 % is moist; 94 % alarms, 95 % is OK (boundary inclusive).
  it("flags a bag below 95 % RH and keeps 95 % as moist", () => {
    expect(bagBelowMoistLevel(94)).toBe(true);
    expect(bagBelowMoistLevel(95)).toBe(false);
    expect(bagBelowMoistLevel(null)).toBe(false);
  });

  it("writes durations the way a shift reads them", () => {
    expect(formatDuration(59 * 60_000)).toBe("59 min");
    expect(formatDuration(200 * 60_000)).toBe("3 h 20 min");
    expect(formatDuration(53 * 3_600_000)).toBe("2 d 5 h");
  });
});
