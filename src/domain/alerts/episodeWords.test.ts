import { describe, expect, it } from "vitest";
import {
  episodeChartWindow,
  alertLimitText,
  alertValueText,
  alertWhatText,
  compareForAttention,
  keepUnitsTogether,
  noticeReasonText,
  severityLook,
  stateLook,
} from "./episodeWords";

describe("an alert's value in the reader's units", () => {
  // domain.md §8.3: °F = 1.8·°C + 32; check pairs 10 → 50, 70 → 158, 0 → 32.
  it.each([
    ["temp_low", 10, "us", "50 °F"],
    ["temp_high", 70, "us", "158 °F"],
    ["bin_range", 0, "us", "32 °F"],
    ["temp_low", 12.5, "si", "12.5 °C"],
    // domain.md §8.3: 12.5 °C = 54.5 °F.
    ["temp_low", 12.5, "us", "54.5 °F"],
  ] as const)("%s %s °C for %s reads %s", (kind, c, units, text) => {
    expect(alertValueText(kind, c, units)).toBe(text);
  });

  // domain.md §8.3: rates scale by 1.8 with no offset, 22 °C/h = 39.6 °F/h.
  it("converts a rate without the 32 offset", () => {
    expect(alertValueText("rate_rise", 22, "us")).toBe("39.6 °F/h");
    expect(alertValueText("rate_fall", 22, "si")).toBe("22 °C/h");
  });

  // Relative humidity, minutes and battery are the same in both systems (common practice).
  it("keeps humidity, minutes and battery as they are", () => {
    expect(alertValueText("rh_low", 93.84, "us")).toBe("93.8 % RH");
    expect(alertValueText("silent", 41.6, "us")).toBe("42 min");
    expect(alertValueText("battery_low", 14.6, "si")).toBe("15 %");
  });

  // domain.md §8.3: 3000 psi = 20.684272 MPa; psi shown to the nearest 10.
  it("shows a milestone's strength in psi or MPa", () => {
    expect(alertValueText("pour_strip", 20.684272, "us")).toBe("3,000 psi");
    expect(alertValueText("pour_ship", 20.684272, "si")).toBe("20.7 MPa");
  });
});

describe("what is wrong, in words", () => {
  // domain.md §7.1 (ASTM C511): moist curing at RH ≥ 95 %; 93.8 % is below it.
  it("says the humidity and the limit it fell below", () => {
    expect(alertWhatText({ kind: "rh_low", threshold: 95, thresholdHigh: null }, 93.8, "us")).toBe(
      "Humidity 93.8 % RH, below 95 % RH",
    );
  });

  // domain.md §7.2: keep at least 10 °C (50 °F); §8.3 9.2 °C = 48.56 °F.
  it("says a cold temperature in °F for a US reader", () => {
    expect(alertWhatText({ kind: "temp_low", threshold: 10, thresholdHigh: null }, 9.2, "us")).toBe(
      "Temperature 48.6 °F, below 50 °F",
    );
  });

  // domain.md §7.5: a rise of 23 °C/h breaks the 22 °C/h limit; 23 × 1.8 = 41.4 °F/h.
  it("says a fast rise against its limit", () => {
    expect(alertWhatText({ kind: "rate_rise", threshold: 22, thresholdHigh: null }, 23, "us")).toBe(
      "Rising 41.4 °F/h, faster than 39.6 °F/h",
    );
    expect(alertWhatText({ kind: "rate_rise", threshold: 22, thresholdHigh: null }, 23, "si")).toBe(
      "Rising 23 °C/h, faster than 22 °C/h",
    );
  });

  // domain.md §5.3 / ACI 305.1: at most 35 °C; §8.3: 2 °C = 35.6 °F, 35 °C = 95 °F.
  it("gives a bin's range once with its unit", () => {
    expect(alertLimitText({ kind: "bin_range", threshold: 2, thresholdHigh: 35 }, "us")).toBe(
      "outside 35.6 to 95 °F",
    );
  });

  // domain.md §7.1: 95 % is moist curing (boundary inclusive), so 95.6 % is back within it.
  it("says when the value is back inside the limit though the episode is not yet over", () => {
    const rh = { kind: "rh_low", threshold: 95, thresholdHigh: null } as const;
    expect(alertWhatText(rh, 95.6, "si")).toBe("Humidity 95.6 % RH, back above 95 % RH");
    expect(alertWhatText(rh, 95, "si")).toBe("Humidity 95 % RH, back above 95 % RH");
    // domain.md §7.5: a rise of 20 °C/h is within the 22 °C/h limit.
    expect(alertWhatText({ kind: "rate_rise", threshold: 22, thresholdHigh: null }, 20, "si")).toBe(
      "Rising 20 °C/h, back under 22 °C/h",
    );
    expect(alertWhatText({ kind: "bin_range", threshold: 2, thresholdHigh: 35 }, 20, "si")).toBe(
      "Temperature 20 °C, back within 2 to 35 °C",
    );
  });

  it("falls back to the limit alone when no value was kept", () => {
    expect(alertWhatText({ kind: "rh_low", threshold: 95, thresholdHigh: null }, null, "si")).toBe(
      "Humidity below 95 % RH",
    );
  });

  it("says a milestone with its estimate", () => {
    expect(
      alertWhatText({ kind: "pour_strip", threshold: null, thresholdHigh: null }, 20.684272, "us"),
    ).toBe("Estimate 3,000 psi, at the mix's strip strength");
  });
});

describe("a line that wraps", () => {
  it("keeps each number with its unit", () => {
    expect(keepUnitsTogether("Humidity 93.8 % RH, below 95 % RH")).toBe(
      "Humidity 93.8\u00a0% RH, below 95\u00a0% RH",
    );
    expect(keepUnitsTogether("Estimate 3,000 psi, 42 min, 7 bags")).toBe(
      "Estimate 3,000\u00a0psi, 42\u00a0min, 7 bags",
    );
  });
});

describe("the order of what needs someone", () => {
  const ep = (
    id: number,
    state: "open" | "acknowledged" | "cleared",
    severity: "critical" | "warning" | "info",
    openedAtMs: number,
  ) => ({ id, state, severity, openedAtMs });

  it("puts open before acknowledged, critical before warning, the longest waiting first", () => {
    const list = [
      ep(1, "acknowledged", "critical", 100),
      ep(2, "open", "warning", 50),
      ep(3, "open", "critical", 300),
      ep(4, "open", "critical", 200),
      ep(5, "open", "info", 10),
    ].sort(compareForAttention);
    expect(list.map((e) => e.id)).toEqual([4, 3, 2, 5, 1]);
  });
});

describe("words and marks", () => {
  it("gives every severity and state a word and a mark of its own", () => {
    const sev = Object.values(severityLook);
    expect(new Set(sev.map((s) => s.mark)).size).toBe(sev.length);
    expect(new Set(sev.map((s) => s.word)).size).toBe(sev.length);
    const st = Object.values(stateLook);
    expect(new Set(st.map((s) => s.mark)).size).toBe(st.length);
  });

  it("names why a notice went out", () => {
    expect(noticeReasonText("first")).toBe("First notice");
    expect(noticeReasonText("escalate")).toBe("Escalation: not acknowledged");
    expect(noticeReasonText("cleared")).toBe("Cleared by itself");
  });
});

describe("the window an episode's chart shows", () => {
  const H = 3_600_000;
  it("keeps two hours each side of a short spell, and half the length of a long one", () => {
    expect(episodeChartWindow(10 * H, 11 * H, 20 * H)).toEqual({ fromMs: 8 * H, toMs: 13 * H });
    expect(episodeChartWindow(10 * H, 20 * H, 40 * H)).toEqual({ fromMs: 5 * H, toMs: 25 * H });
    // Still going: the window ends now.
    expect(episodeChartWindow(10 * H, 30 * H, 30 * H).toMs).toBe(30 * H);
  });

  it("asks for whole milliseconds when a long spell lasted an odd number of them", () => {
    // A spell of 5 h and 1 ms: half of it is not a whole millisecond.
    const w = episodeChartWindow(10 * H, 15 * H + 1, 40 * H);
    expect(Number.isInteger(w.fromMs) && Number.isInteger(w.toMs)).toBe(true);
    expect(w.fromMs).toBeLessThanOrEqual(10 * H - 2.5 * H);
    expect(w.toMs).toBeGreaterThanOrEqual(15 * H + 1 + 2.5 * H);
  });
});
