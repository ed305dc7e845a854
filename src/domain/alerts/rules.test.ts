import { describe, expect, it } from "vitest";
import { judge, type RuleLimits } from "./episode";
import { defaultRules, ruleKinds } from "./rules";

const limits = (name: string): RuleLimits => {
  const d = defaultRules.find((r) => r.name === name);
  if (!d) throw new Error(`no default rule ${name}`);
  return {
    kind: d.kind,
    threshold: d.threshold,
    thresholdHigh: d.thresholdHigh,
    holdMs: d.holdMin * 60_000,
    clearMargin: d.clearMargin,
  };
};

describe("the plant's default rules", () => {
  it("each names its source and has a sensible unit and scope", () => {
    for (const d of defaultRules) {
      expect(d.source.length, d.name).toBeGreaterThan(10);
      expect(ruleKinds[d.kind].range, d.name).toBe(d.thresholdHigh !== null);
      if (ruleKinds[d.kind].pour) expect(d.threshold, d.name).toBeNull();
      else expect(d.threshold, d.name).not.toBeNull();
    }
    expect(new Set(defaultRules.map((d) => d.name)).size).toBe(defaultRules.length);
  });

  it("dry cure: 94 % alarms, 95 % does not (domain.md §7.1 vectors, ASTM C511 RH ≥ 95 %)", () => {
    const dry = limits("Dry cure bag");
    expect(judge(dry, 94)).toBe("breach");
    expect(judge(dry, 95)).not.toBe("breach"); // boundary inclusive
  });

  it("heating too fast: 23 °C/h alarms, 20 °C/h does not (domain.md §7.5, PCI limit 22 °C/h)", () => {
    const rise = limits("Concrete heating too fast");
    expect(judge(rise, 23)).toBe("breach");
    expect(judge(rise, 20)).toBe("clear");
  });

  it("too hot: a 71 °C peak alarms under the 70 °C policy (domain.md §7.5)", () => {
    expect(judge(limits("Concrete too hot"), 71)).toBe("breach");
    expect(judge(limits("Concrete too hot"), 60)).toBe("clear");
  });

  it("cold cure at 10 °C and the freezing caution above 0 °C (domain.md §7.2, §7.3)", () => {
    expect(judge(limits("Cold cure bag"), 9.9)).toBe("breach");
    expect(judge(limits("Cold cure bag"), 12)).toBe("clear");
    expect(judge(limits("Concrete near freezing"), 0)).toBe("breach");
  });

  it("bins: frozen or above the 35 °C discharge limit (domain.md §5.3) alarm", () => {
    const bin = limits("Aggregate bin out of range");
    expect(judge(bin, -1)).toBe("breach");
    expect(judge(bin, 36)).toBe("breach");
    expect(judge(bin, 20)).toBe("clear");
  });

  it("a silent sensor is flagged well before the 2-hour gap that breaks the maturity record", () => {
    const silent = limits("Sensor silent");
    expect(judge(silent, 31)).toBe("breach");
    expect(silent.threshold!).toBeLessThan(120);
  });
});
