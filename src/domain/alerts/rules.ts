/**
 * What each kind of alert rule watches, in which unit, and the plant-wide defaults Plinth
 * starts with, each with its source. Thresholds are SI: °C, % RH, °C per hour, minutes of
 * silence, % battery; pour milestones use the mix's own strip or ship strength.
 */
import type { RuleKind } from "./episode";

export type Severity = "info" | "warning" | "critical";
export type Audience = "on_call" | "quality" | "digest";
export type SensorKind = "bag" | "embedded" | "bin" | "ambient";

/** The unit a rule's threshold is in, as the API names it. */
export type ThresholdUnit = "c" | "pct_rh" | "c_per_h" | "min" | "pct_battery" | "none";

export interface RuleKindInfo {
  label: string;
  /** What the threshold means, for a form's hint. */
  meaning: string;
  unit: ThresholdUnit;
  /** A range rule uses both thresholds. */
  range: boolean;
  /** Watches a pour's strength rather than a sensor's readings. */
  pour: boolean;
  /** The value must stay above the limit (a "low" rule), else below it. */
  low: boolean;
}

export const ruleKinds: Record<RuleKind, RuleKindInfo> = {
  temp_low: {
    label: "Low temperature",
    meaning: "alert when the temperature falls below",
    unit: "c",
    range: false,
    pour: false,
    low: true,
  },
  temp_high: {
    label: "High temperature",
    meaning: "alert when the temperature rises above",
    unit: "c",
    range: false,
    pour: false,
    low: false,
  },
  rh_low: {
    label: "Dry cure (low humidity)",
    meaning: "alert when relative humidity falls below",
    unit: "pct_rh",
    range: false,
    pour: false,
    low: true,
  },
  rate_rise: {
    label: "Temperature rising fast",
    meaning: "alert when the temperature rises faster than",
    unit: "c_per_h",
    range: false,
    pour: false,
    low: false,
  },
  rate_fall: {
    label: "Temperature falling fast",
    meaning: "alert when the temperature falls faster than",
    unit: "c_per_h",
    range: false,
    pour: false,
    low: false,
  },
  silent: {
    label: "Silent sensor",
    meaning: "alert when no reading has arrived for more than",
    unit: "min",
    range: false,
    pour: false,
    low: false,
  },
  battery_low: {
    label: "Low battery",
    meaning: "alert when the battery falls below",
    unit: "pct_battery",
    range: false,
    pour: false,
    low: true,
  },
  bin_range: {
    label: "Bin outside its range",
    meaning: "alert when a bin's temperature leaves the range",
    unit: "c",
    range: true,
    pour: false,
    low: false,
  },
  pour_strip: {
    label: "Strip strength reached",
    meaning: "tell when a pour's governing estimate reaches its mix's strip strength",
    unit: "none",
    range: false,
    pour: true,
    low: false,
  },
  pour_ship: {
    label: "Ship strength reached",
    meaning: "tell when a pour's governing estimate reaches its mix's ship strength",
    unit: "none",
    range: false,
    pour: true,
    low: false,
  },
};

export const unitSymbols: Record<ThresholdUnit, string> = {
  c: "°C",
  pct_rh: "% RH",
  c_per_h: "°C/h",
  min: "min",
  pct_battery: "% battery",
  none: "",
};

export interface DefaultRule {
  name: string;
  kind: RuleKind;
  threshold: number | null;
  thresholdHigh: number | null;
  holdMin: number;
  clearMargin: number;
  severity: Severity;
  audience: Audience;
  scopeSensorKind: SensorKind | null;
  escalateAfterMin: number | null;
  source: string;
}

/**
 * The rules a new plant starts with, plant-wide on their sensor kinds. QC tunes them to the
 * plant's mixes, sections and specifications; they are starting points, not a specification.
 */
export const defaultRules: readonly DefaultRule[] = [
  {
    name: "Dry cure bag",
    kind: "rh_low",
    threshold: 95,
    thresholdHigh: null,
    // No hold: the text must go out as soon as a bag reads dry. The clearing margin keeps a
    // bag hovering at 95 % to one episode.
    holdMin: 0,
    clearMargin: 1.5,
    severity: "critical",
    audience: "on_call",
    scopeSensorKind: "bag",
    escalateAfterMin: 15,
    source: "ASTM C511: moist curing at 95 % relative humidity or more",
  },
  {
    name: "Cold cure bag",
    kind: "temp_low",
    threshold: 10,
    thresholdHigh: null,
    holdMin: 15,
    clearMargin: 1,
    severity: "warning",
    audience: "on_call",
    scopeSensorKind: "bag",
    escalateAfterMin: 30,
    source:
      "Keep at least 10 °C (50 °F) next to the forms while curing (UFGS); ACI 318 keeps concrete above 10 °C for the first 7 days (from memory)",
  },
  {
    name: "Concrete near freezing",
    kind: "temp_low",
    threshold: 2,
    thresholdHigh: null,
    holdMin: 5,
    clearMargin: 1,
    severity: "critical",
    audience: "on_call",
    scopeSensorKind: "embedded",
    escalateAfterMin: 10,
    source:
      "Protect fresh concrete from freezing until about 500 psi (3.5 MPa): Powers 1962 in PCA EB001 ch. 14; NPCA discards precast frozen before 500 psi",
  },
  {
    name: "Concrete too hot",
    kind: "temp_high",
    threshold: 70,
    thresholdHigh: null,
    holdMin: 5,
    clearMargin: 2,
    severity: "critical",
    audience: "on_call",
    scopeSensorKind: "embedded",
    escalateAfterMin: 15,
    source:
      "PCI MNL-116 §4.19.3: maximum 88 °C, with 70 °C widely recommended against delayed ettringite formation (from memory)",
  },
  {
    name: "Concrete heating too fast",
    kind: "rate_rise",
    threshold: 22,
    thresholdHigh: null,
    holdMin: 10,
    clearMargin: 2,
    severity: "warning",
    audience: "on_call",
    scopeSensorKind: "embedded",
    escalateAfterMin: 30,
    source: "PCI MNL-116 §4.19.3: rate of rise at most 22 °C/h (40 °F/h) (from memory)",
  },
  {
    name: "Concrete cooling too fast",
    kind: "rate_fall",
    threshold: 22,
    thresholdHigh: null,
    holdMin: 10,
    clearMargin: 2,
    severity: "warning",
    audience: "on_call",
    scopeSensorKind: "embedded",
    escalateAfterMin: 30,
    source:
      "PCI MNL-116: cool at a rate as limited as the rise (from memory); in cold weather UFGS limits cooling to 3 °C/h after heating",
  },
  {
    name: "Sensor silent",
    kind: "silent",
    threshold: 30,
    thresholdHigh: null,
    holdMin: 0,
    clearMargin: 0,
    severity: "warning",
    audience: "on_call",
    scopeSensorKind: null,
    escalateAfterMin: 60,
    source:
      "ASTM C1074 asks for a reading every ½ h or less in the first 48 h (from memory); a gap over 2 h leaves the maturity record incomplete",
  },
  {
    name: "Battery low",
    kind: "battery_low",
    threshold: 20,
    thresholdHigh: null,
    holdMin: 0,
    clearMargin: 5,
    severity: "info",
    audience: "digest",
    scopeSensorKind: null,
    escalateAfterMin: null,
    source: "Common practice: change batteries before a sensor falls silent",
  },
  {
    name: "Aggregate bin out of range",
    kind: "bin_range",
    threshold: 2,
    thresholdHigh: 35,
    holdMin: 30,
    clearMargin: 1,
    severity: "warning",
    audience: "quality",
    scopeSensorKind: "bin",
    escalateAfterMin: null,
    source:
      "ACI 301 and ACI 305.1: concrete at most 35 °C at discharge; frozen aggregate must not go into a batch (ACI 306R, common practice)",
  },
  {
    name: "Strip strength reached",
    kind: "pour_strip",
    threshold: null,
    thresholdHigh: null,
    holdMin: 0,
    clearMargin: 0,
    severity: "info",
    audience: "quality",
    scopeSensorKind: null,
    escalateAfterMin: null,
    source: "The mix's strip strength, by the maturity method (ASTM C1074)",
  },
  {
    name: "Ship strength reached",
    kind: "pour_ship",
    threshold: null,
    thresholdHigh: null,
    holdMin: 0,
    clearMargin: 0,
    severity: "info",
    audience: "quality",
    scopeSensorKind: null,
    escalateAfterMin: null,
    source: "The mix's ship strength, by the maturity method (ASTM C1074)",
  },
];

/** "RH below 95 % RH", "temperature above 70 °C", for messages and lists (SI units). */
export function describeLimit(rule: {
  kind: RuleKind;
  threshold: number | null;
  thresholdHigh: number | null;
}): string {
  const info = ruleKinds[rule.kind];
  const u = unitSymbols[info.unit];
  const n = (v: number | null) => (v === null ? "?" : `${Math.round(v * 10) / 10}`);
  switch (rule.kind) {
    case "temp_low":
      return `temperature below ${n(rule.threshold)} ${u}`;
    case "temp_high":
      return `temperature above ${n(rule.threshold)} ${u}`;
    case "rh_low":
      return `humidity below ${n(rule.threshold)} % RH`;
    case "rate_rise":
      return `rising faster than ${n(rule.threshold)} ${u}`;
    case "rate_fall":
      return `falling faster than ${n(rule.threshold)} ${u}`;
    case "silent":
      return `no reading for over ${n(rule.threshold)} min`;
    case "battery_low":
      return `battery below ${n(rule.threshold)} %`;
    case "bin_range":
      return `outside ${n(rule.threshold)} to ${n(rule.thresholdHigh)} ${u}`;
    case "pour_strip":
      return "strip strength reached";
    case "pour_ship":
      return "ship strength reached";
  }
}
