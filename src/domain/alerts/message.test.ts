import { describe, expect, it } from "vitest";
import {
  emailBody,
  emailSubject,
  formatLimit,
  formatValue,
  smsBody,
  type NoticeFacts,
} from "./message";

const facts: NoticeFacts = {
  plantName: "Test Yard",
  ruleName: "Dry cure bag",
  kind: "rh_low",
  severity: "critical",
  threshold: 95,
  thresholdHigh: null,
  sensorId: "CB-14",
  sensorLabel: "Bag 2, room 2",
  pourCode: "P-100",
  value: 93.8,
  worst: 91.2,
  startedAtText: "Mar 2, 02:14",
};

describe("values in the reader's units", () => {
  it("converts temperatures with the offset and rates without it", () => {
    // Exact: °F = °C × 1.8 + 32; a difference converts by × 1.8 alone (definition of the degree).
    expect(formatValue("temp_low", 10, "us")).toBe("50.0 °F");
    expect(formatValue("temp_low", 10, "si")).toBe("10.0 °C");
    expect(formatValue("rate_rise", 22, "us")).toBe("39.6 °F/h");
    expect(formatValue("rate_rise", 22, "si")).toBe("22.0 °C/h");
    expect(formatValue("rh_low", 93.84, "us")).toBe("93.8 % RH");
    expect(formatValue("silent", 42.4, "si")).toBe("42 min");
  });

  it("gives a pour's strength in psi or MPa", () => {
    // 1 psi = 6.894757 kPa (NIST SP 811): 20.684 MPa is 3,000 psi.
    expect(formatValue("pour_strip", 20.684271, "us")).toBe("3,000 psi");
    expect(formatValue("pour_strip", 20.684271, "si")).toBe("20.7 MPa");
  });

  it("words the limits", () => {
    expect(formatLimit({ kind: "temp_high", threshold: 70, thresholdHigh: null }, "us")).toBe(
      "above 158.0 °F",
    );
    expect(formatLimit({ kind: "bin_range", threshold: 2, thresholdHigh: 35 }, "si")).toBe(
      "outside 2.0 °C to 35.0 °C",
    );
  });
});

describe("texts and e-mails", () => {
  it("says where, what, since when, and how to answer, in one or two text segments", () => {
    const text = smsBody(facts, "first", "us");
    expect(text).toBe(
      "Plinth ALARM: CB-14 (Bag 2, room 2), pour P-100: Dry cure bag: 93.8 % RH, below 95.0 % RH, since Mar 2, 02:14. Reply ACK when handled, or ACK and a note.",
    );
    expect(text.length).toBeLessThanOrEqual(2 * 153); // two concatenated GSM-7 segments
  });

  it("says how long it waited when escalated, and that it cleared by itself", () => {
    expect(smsBody({ ...facts, unackedFor: "15 min" }, "escalate", "si")).toMatch(
      /^Plinth ALARM \(not acknowledged for 15 min\): CB-14/,
    );
    expect(smsBody(facts, "cleared", "si")).toContain("cleared by itself");
    expect(emailSubject(facts, "escalate")).toBe(
      "Not acknowledged: ALARM: Dry cure bag at CB-14 (Bag 2, room 2), pour P-100",
    );
  });

  it("puts the caution on a strength milestone e-mail", () => {
    const body = emailBody(
      {
        ...facts,
        kind: "pour_strip",
        ruleName: "Strip strength reached",
        sensorId: null,
        value: 24.1,
      },
      "first",
      "us",
    );
    expect(body).toContain("estimate 3,495 psi");
    expect(body).toContain("engineer of record");
    expect(body).toContain("Reached: Mar 2, 02:14");
  });
});
