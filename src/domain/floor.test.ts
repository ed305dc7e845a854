import { describe, expect, it } from "vitest";
import { tileAdvice, tileState } from "./floor";

const now = 1_000_000_000;
const bag = {
  kind: "bag" as const,
  tempC: 25,
  rhPct: 97,
  lastSeenAtMs: now - 60_000,
  onPour: true,
};

describe("a floor tile's state", () => {
  it("is ok for a warm, wet bag reporting", () => {
    expect(tileState(bag, now)).toBe("ok");
  });
  // domain.md §7.1 (ASTM C511): below 95 % RH is not moist curing; 95 % is.
  it("is drying below 95 % RH and ok at 95 %", () => {
    expect(tileState({ ...bag, rhPct: 94 }, now)).toBe("dry");
    expect(tileState({ ...bag, rhPct: 95 }, now)).toBe("ok");
  });
  // domain.md §7.2/§7.3: keep curing concrete above 10 °C (50 °F) (ACI 318, from memory; UFGS).
  it("is cold below 10 °C, which outranks drying", () => {
    expect(tileState({ ...bag, tempC: 9.9, rhPct: 80 }, now)).toBe("cold");
  });
  // domain.md §7.4: 70 °C widely recommended as a maximum (PCI MNL-116, from memory).
  it("is hot above 70 °C", () => {
    expect(tileState({ ...bag, tempC: 71 }, now)).toBe("hot");
  });
  it("is silent after fifteen minutes without a reading, whatever it last said (common practice)", () => {
    expect(tileState({ ...bag, tempC: 2, lastSeenAtMs: now - 16 * 60_000 }, now)).toBe("silent");
  });
  it("holds a bag off any pour to no limits: it reads room air", () => {
    expect(tileState({ ...bag, onPour: false, rhPct: 40, tempC: 5 }, now)).toBe("ok");
  });
  it("waits for a first reading", () => {
    expect(tileState({ ...bag, lastSeenAtMs: null, tempC: null }, now)).toBe("waiting");
  });
});

describe("a tile's advice", () => {
  // domain.md §8.3: 10 °C = 50 °F; 70 °C = 158 °F.
  it("speaks the operator's units", () => {
    expect(tileAdvice("cold", "us")).toContain("50 °F");
    expect(tileAdvice("cold", "si")).toContain("10 °C");
    expect(tileAdvice("hot", "us")).toContain("158 °F");
  });
});
