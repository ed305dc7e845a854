import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  blankRule,
  clearWords,
  displaySymbol,
  formValuesOf,
  marginFromDisplay,
  marginToDisplay,
  readNumber,
  readRuleForm,
  ruleProblems,
  scopeWords,
  thresholdFromDisplay,
  thresholdToDisplay,
  watchWords,
  type RuleDraft,
  type RuleFields,
} from "./ruleForm";
import { defaultRules } from "./rules";

const anywhere = { areaId: null, sensorKind: null, sensorId: null, pourId: null };
const draft = (over: Partial<RuleDraft>): RuleDraft => ({
  kind: "temp_low",
  threshold: 10,
  thresholdHigh: null,
  holdMin: 15,
  clearMargin: 1,
  audience: "on_call",
  escalateAfterMin: 30,
  scope: anywhere,
  ...over,
});
const fields = (over: Partial<RuleFields>): RuleFields => ({ ...blankRule, ...over });
const problemFields = (d: RuleDraft) => ruleProblems(d).map((p) => p.field);

describe("a threshold in the reader's units", () => {
  // The Fahrenheit degree is defined as exactly 5/9 K with water freezing at 32 °F, so
  // °F = 1.8·°C + 32 (domain.md §8.3 check pairs: −10 → 14, 0 → 32, 10 → 50, 23 → 73.4,
  // 40 → 104, 70 → 158, 88 → 190.4).
  it.each([
    [-10, 14],
    [0, 32],
    [10, 50],
    [23, 73.4],
    [40, 104],
    [70, 158],
    [88, 190.4],
  ])("shows %s °C as %s °F and reads it back", (c, f) => {
    expect(thresholdToDisplay(c, "c", "us")).toBeCloseTo(f, 9);
    expect(thresholdFromDisplay(f, "c", "us")).toBeCloseTo(c, 4);
  });

  // domain.md §8.3: differences and rates scale by 1.8 with no offset: 22 °C/h = 39.6 °F/h,
  // 40 °F/h = 22.2 °C/h (the definition of the Fahrenheit degree; PCI's 22 °C/h limit is 40 °F/h).
  it("converts a rate by 1.8 alone, without the 32 offset", () => {
    expect(thresholdToDisplay(22, "c_per_h", "us")).toBeCloseTo(39.6, 9);
    expect(thresholdFromDisplay(40, "c_per_h", "us")).toBeCloseTo(22.2222, 4);
  });

  // Same definition: a clearing margin is a temperature difference, 1 °C = 1.8 °F.
  it("converts a clearing margin by 1.8 alone, for temperatures and rates", () => {
    expect(marginToDisplay(1, "c", "us")).toBeCloseTo(1.8, 9);
    expect(marginToDisplay(2, "c_per_h", "us")).toBeCloseTo(3.6, 9);
    expect(marginFromDisplay(1.8, "c", "us")).toBeCloseTo(1, 9);
  });

  // Relative humidity, minutes and battery are the same quantity in both systems (common practice).
  it("leaves humidity, minutes and battery as they are", () => {
    for (const unit of ["pct_rh", "min", "pct_battery"] as const) {
      expect(thresholdToDisplay(95, unit, "us")).toBe(95);
      expect(thresholdFromDisplay(95, unit, "us")).toBe(95);
      expect(marginToDisplay(1.5, unit, "us")).toBe(1.5);
    }
    expect(displaySymbol("pct_rh", "us")).toBe("% RH");
    expect(displaySymbol("c_per_h", "us")).toBe("°F/h");
    expect(displaySymbol("c", "si")).toBe("°C");
  });

  it("changes nothing for a reader in SI", () => {
    expect(thresholdToDisplay(10, "c", "si")).toBe(10);
    expect(thresholdFromDisplay(22, "c_per_h", "si")).toBe(22);
    expect(marginToDisplay(1, "c", "si")).toBe(1);
  });

  // Property: what a form shows and reads back is the stored value to within 1e-4 (the stored
  // rounding) for any temperature a reading may have (the readings contract: −40 to 120 °C).
  it("round-trips any temperature threshold through a °F form", () => {
    fc.assert(
      fc.property(fc.double({ min: -40, max: 120, noNaN: true }), (c) => {
        const shown = Number(formValuesOf(fields({ threshold: c, holdMin: 0 }), "us").threshold);
        // The form shows two decimals of °F: 0.005 °F is 0.0028 °C.
        expect(Math.abs(thresholdFromDisplay(shown, "c", "us") - c)).toBeLessThan(0.003);
      }),
    );
  });
});

describe("reading a rule form", () => {
  it("reads a °F form into SI", () => {
    const v = formValuesOf(fields({ name: "Cold bag", threshold: 10, clearMargin: 1 }), "us");
    expect(v.threshold).toBe("50");
    expect(v.clear_margin).toBe("1.8");
    const r = readRuleForm({ ...v, threshold: "41" }, "us");
    expect(r.ok).toBe(true);
    if (r.ok) {
      // 41 °F = 5 °C (domain.md §8.3's formula).
      expect(r.rule.threshold).toBe(5);
      expect(r.rule.clearMargin).toBe(1);
    }
  });

  it("names a field that is not a number", () => {
    const v = formValuesOf(fields({ name: "Cold bag" }), "si");
    const r = readRuleForm({ ...v, threshold: "ten" }, "si");
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.errors).toEqual([{ field: "threshold", error: "Enter a number" }]);
  });

  it("writes the limits of its complaints in the reader's units", () => {
    const v = formValuesOf(fields({ name: "Hot" }), "us");
    const r = readRuleForm({ ...v, threshold: "300" }, "us");
    expect(r.ok).toBe(false);
    // 120 °C is the highest reading Plinth accepts (readings contract); 120 °C = 248 °F.
    if (!r.ok) expect(r.errors).toEqual([{ field: "threshold", error: "At most 248 °F" }]);
  });

  it("sends a pour milestone with no threshold, hold, margin or sensor scope", () => {
    const v = formValuesOf(fields({ name: "Strip" }), "si");
    const r = readRuleForm(
      { ...v, kind: "pour_strip", sensor_kind: "bag", area_id: "3", audience: "quality" },
      "si",
    );
    expect(r.ok).toBe(true);
    if (r.ok) {
      expect(r.rule.threshold).toBeNull();
      expect(r.rule.holdMin).toBe(0);
      expect(r.rule.clearMargin).toBe(0);
      expect(r.rule.scope).toEqual(anywhere);
      expect(r.rule.escalateAfterMin).toBeNull();
    }
  });

  it("takes people's ways of typing numbers", () => {
    expect(readNumber("1,5")).toBe(1.5);
    expect(readNumber("\u22123")).toBe(-3);
    expect(readNumber(" 95 ")).toBe(95);
    expect(readNumber("9 5")).toBeNull();
    expect(readNumber("")).toBeNull();
  });
});

describe("what must agree with a rule's kind", () => {
  it("passes every one of Plinth's default rules", () => {
    for (const d of defaultRules) {
      const problems = ruleProblems({
        kind: d.kind,
        threshold: d.threshold,
        thresholdHigh: d.thresholdHigh,
        holdMin: d.holdMin,
        clearMargin: d.clearMargin,
        audience: d.audience,
        escalateAfterMin: d.escalateAfterMin,
        scope: { ...anywhere, sensorKind: d.scopeSensorKind },
      });
      expect(problems, d.name).toEqual([]);
    }
  });

  // Plinth policy, each case naming the field at fault.
  it.each<[string, Partial<RuleDraft>, string]>([
    [
      "a range without its top",
      { kind: "bin_range", threshold: 2, thresholdHigh: null },
      "threshold_high",
    ],
    [
      "a range upside down",
      { kind: "bin_range", threshold: 35, thresholdHigh: 2 },
      "threshold_high",
    ],
    [
      "a range whose margin meets in the middle",
      { kind: "bin_range", threshold: 2, thresholdHigh: 6, clearMargin: 2 },
      "clear_margin",
    ],
    [
      "a single limit given a top",
      { kind: "temp_low", threshold: 10, thresholdHigh: 20 },
      "threshold_high",
    ],
    [
      "a milestone given a threshold",
      {
        kind: "pour_strip",
        threshold: 20,
        holdMin: 0,
        clearMargin: 0,
        audience: "quality",
        escalateAfterMin: null,
      },
      "threshold",
    ],
    [
      "a milestone on a sensor kind",
      {
        kind: "pour_ship",
        threshold: null,
        holdMin: 0,
        clearMargin: 0,
        audience: "quality",
        escalateAfterMin: null,
        scope: { ...anywhere, sensorKind: "bag" },
      },
      "scope.sensor_kind",
    ],
    ["a silence of no minutes", { kind: "silent", threshold: 0, clearMargin: 0 }, "threshold"],
    ["humidity over 100 %", { kind: "rh_low", threshold: 101 }, "threshold"],
    ["battery below 0 %", { kind: "battery_low", threshold: -1 }, "threshold"],
    [
      "a dry-cure margin that clears past 100 %",
      { kind: "rh_low", threshold: 95, clearMargin: 6 },
      "clear_margin",
    ],
    [
      "a rate margin as large as the rate",
      { kind: "rate_rise", threshold: 22, clearMargin: 22 },
      "clear_margin",
    ],
    ["a negative margin", { clearMargin: -1 }, "clear_margin"],
    ["a hold over a day", { holdMin: 1441 }, "hold_min"],
    [
      "escalation on an e-mail-only rule",
      { audience: "quality", escalateAfterMin: 15 },
      "escalate_after_min",
    ],
    ["escalation after no time", { escalateAfterMin: 0 }, "escalate_after_min"],
    [
      "one sensor inside an area",
      { scope: { ...anywhere, sensorId: "CB-07", areaId: 1 } },
      "scope.sensor_id",
    ],
    ["a temperature below what a sensor reads", { kind: "temp_low", threshold: -41 }, "threshold"],
  ])("refuses %s", (_what, over, field) => {
    expect(problemFields(draft(over))).toContain(field);
  });

  it("accepts a rate of rise at the PCI limit with a 2 °C/h margin", () => {
    // PCI MNL-116 §4.19.3: 22 °C/h (domain.md §7.4, from memory).
    expect(ruleProblems(draft({ kind: "rate_rise", threshold: 22, clearMargin: 2 }))).toEqual([]);
  });
});

describe("the words of a rule", () => {
  it("says what a rule alerts on in °F for a us reader and °C for an SI one", () => {
    const cold = { kind: "temp_low" as const, threshold: 10, thresholdHigh: null };
    expect(watchWords(cold, "si")).toBe("temperature below 10 °C");
    // 10 °C = 50 °F (domain.md §8.3).
    expect(watchWords(cold, "us")).toBe("temperature below 50 °F");
    // 22 °C/h = 39.6 °F/h (domain.md §8.3).
    expect(watchWords({ kind: "rate_rise", threshold: 22, thresholdHigh: null }, "us")).toBe(
      "rising faster than 39.6 °F/h",
    );
    // ACI 301 / 305.1: 35 °C (95 °F) at discharge (domain.md §5.3); 2 °C = 35.6 °F (§8.3).
    expect(watchWords({ kind: "bin_range", threshold: 2, thresholdHigh: 35 }, "us")).toBe(
      "outside 35.6 to 95 °F",
    );
    expect(watchWords({ kind: "rh_low", threshold: 95, thresholdHigh: null }, "us")).toBe(
      "humidity below 95 % RH",
    );
  });

  it("says when an alert is over, margin included", () => {
    expect(
      clearWords(draft({ kind: "rh_low", threshold: 95, clearMargin: 1.5, holdMin: 0 }), "us"),
    ).toBe("Back at 96.5 % RH or more");
    // 10 + 1 = 11 °C = 51.8 °F (domain.md §8.3's formula).
    expect(clearWords(draft({}), "us")).toBe("Back at 51.8 °F or more, for 15 min");
    expect(
      clearWords(draft({ kind: "silent", threshold: 30, clearMargin: 0, holdMin: 0 }), "si"),
    ).toBe("When readings come again");
  });

  it("says what a rule watches", () => {
    const none = { area: null, sensorKind: null, sensorId: null, pourCode: null };
    expect(scopeWords("rh_low", { ...none, sensorKind: "bag" })).toBe("All cure bag sensors");
    expect(scopeWords("temp_low", { ...none, area: "Cure Room 1" })).toBe(
      "All sensors in Cure Room 1",
    );
    expect(scopeWords("temp_high", { ...none, sensorId: "EP-01", pourCode: "P-1" })).toBe(
      "Sensor EP-01 on pour P-1",
    );
    expect(scopeWords("pour_strip", none)).toBe("Every pour");
  });
});
