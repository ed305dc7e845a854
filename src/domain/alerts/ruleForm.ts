/**
 * Alert rules as people read and write them: a rule's limits in the reader's own units, the
 * checks a rule must pass for its kind, and the words a list of rules shows.
 *
 * Storage and the API stay SI (°C, °C/h, % RH, minutes, % battery). A person with units "us"
 * reads and types °F and °F/h; relative humidity, minutes and battery are the same in both.
 * °F = 1.8·°C + 32 is exact: the Fahrenheit degree is defined as 5/9 of a kelvin, with water
 * freezing at 32 °F (so 0 °C). A rate or a difference (°C/h, a clearing margin in °C) scales by
 * 1.8 alone, without the 32 offset (domain.md §8.3).
 */
import { cToF, deltaCToF, deltaFToC, fToC, type UnitSystem } from "../units";
import type { RuleKind } from "./episode";
import {
  describeLimit,
  ruleKinds,
  unitSymbols,
  type Audience,
  type SensorKind,
  type Severity,
  type ThresholdUnit,
} from "./rules";

/** What a rule watches: all null is plant-wide; each non-null field narrows it further. */
export interface RuleScopeDraft {
  areaId: number | null;
  sensorKind: SensorKind | null;
  sensorId: string | null;
  pourId: number | null;
}

/** The parts of a rule that must agree with its kind, in SI. */
export interface RuleDraft {
  kind: RuleKind;
  /** The limit in the kind's unit (°C, % RH, °C/h, minutes, % battery); null for a pour milestone. */
  threshold: number | null;
  /** The upper limit of a range rule, °C. */
  thresholdHigh: number | null;
  /** Minutes a condition must last before it opens (and be gone before it clears). */
  holdMin: number;
  /** How far back inside the limit a value must come to clear, in the kind's unit (a difference). */
  clearMargin: number;
  audience: Audience;
  /** Minutes an open episode may go unacknowledged before the next person is told; null: never. */
  escalateAfterMin: number | null;
  scope: RuleScopeDraft;
}

/** A whole rule as a form edits it, in SI. */
export interface RuleFields extends RuleDraft {
  name: string;
  severity: Severity;
  enabled: boolean;
  source: string | null;
}

/** One offending field, named as the API names it ("threshold", "scope.sensor_id"). */
export interface RuleProblem {
  field: string;
  error: string;
}

/** Plinth policy for the unit-free fields. */
export const ruleBounds = {
  nameMaxChars: 80,
  /** A day: a condition held longer than that is a standing fault, not a hold. */
  holdMaxMin: 1440,
  escalateMinMin: 1,
  escalateMaxMin: 1440,
  sourceMaxChars: 300,
} as const;

interface UnitBounds {
  min: number;
  max: number;
  /** The threshold must be above `min`, not equal to it. */
  minOpen: boolean;
  /** The largest clearing margin (a difference in the unit). */
  marginMax: number;
}

type MeasuredUnit = Exclude<ThresholdUnit, "none">;

/**
 * Where a threshold may lie, in SI. Temperatures: the range a reading may have at all
 * (the readings contract: −40 to 120 °C). Humidity and battery: 0 to 100 %. A rate and a
 * silence must be above zero; rates stop at 100 °C/h and silence at a week (Plinth policy).
 */
export const thresholdBounds: Record<MeasuredUnit, UnitBounds> = {
  c: { min: -40, max: 120, minOpen: false, marginMax: 20 },
  pct_rh: { min: 0, max: 100, minOpen: false, marginMax: 20 },
  c_per_h: { min: 0, max: 100, minOpen: true, marginMax: 50 },
  min: { min: 0, max: 10_080, minOpen: true, marginMax: 1440 },
  pct_battery: { min: 0, max: 100, minOpen: false, marginMax: 50 },
};

const round = (v: number, digits: number) => {
  const f = 10 ** digits;
  const r = Math.round(v * f) / f;
  return Object.is(r, -0) ? 0 : r;
};

/** A threshold (an absolute value, or a rate for °C/h) from SI to the reader's units. */
export function thresholdToDisplay(valueSi: number, unit: ThresholdUnit, system: UnitSystem) {
  if (system === "si") return valueSi;
  if (unit === "c") return cToF(valueSi);
  if (unit === "c_per_h") return deltaCToF(valueSi);
  return valueSi;
}

/** A threshold typed in the reader's units, to SI (kept to 4 decimals). */
export function thresholdFromDisplay(shown: number, unit: ThresholdUnit, system: UnitSystem) {
  if (system === "si") return shown;
  if (unit === "c") return round(fToC(shown), 4);
  if (unit === "c_per_h") return round(deltaFToC(shown), 4);
  return shown;
}

/** A clearing margin is a difference: °C to °F by 1.8 alone. */
export function marginToDisplay(marginSi: number, unit: ThresholdUnit, system: UnitSystem) {
  if (system === "us" && (unit === "c" || unit === "c_per_h")) return deltaCToF(marginSi);
  return marginSi;
}

export function marginFromDisplay(shown: number, unit: ThresholdUnit, system: UnitSystem) {
  if (system === "us" && (unit === "c" || unit === "c_per_h")) return round(deltaFToC(shown), 4);
  return shown;
}

/** The unit's symbol as the reader sees it: "°F/h" for a "us" reader of a rate. */
export function displaySymbol(unit: ThresholdUnit, system: UnitSystem): string {
  const si = unitSymbols[unit];
  return system === "us" ? si.replace("°C", "°F") : si;
}

/** A number as an input holds it: at most two decimals, no trailing zeros. */
export function numberText(v: number): string {
  return String(round(v, 2));
}

const shownWithUnit = (v: number, unit: ThresholdUnit, system: UnitSystem) => {
  const sym = displaySymbol(unit, system);
  return `${numberText(v)}${sym ? ` ${sym}` : ""}`;
};
const limitText = (si: number, unit: ThresholdUnit, system: UnitSystem) =>
  shownWithUnit(thresholdToDisplay(si, unit, system), unit, system);
const marginText = (si: number, unit: ThresholdUnit, system: UnitSystem) =>
  shownWithUnit(marginToDisplay(si, unit, system), unit, system);

const thresholdNames: Record<MeasuredUnit, string> = {
  c: "the temperature",
  pct_rh: "the humidity",
  c_per_h: "the rate",
  min: "the minutes",
  pct_battery: "the battery level",
};

function checkBounds(
  field: string,
  v: number,
  unit: MeasuredUnit,
  system: UnitSystem,
  out: RuleProblem[],
): boolean {
  const b = thresholdBounds[unit];
  if (b.minOpen ? v <= b.min : v < b.min) {
    out.push({
      field,
      error: b.minOpen
        ? `Above ${limitText(b.min, unit, system)}`
        : `At least ${limitText(b.min, unit, system)}`,
    });
    return false;
  }
  if (v > b.max) {
    out.push({ field, error: `At most ${limitText(b.max, unit, system)}` });
    return false;
  }
  return true;
}

/**
 * Everything wrong with a rule for its kind, one entry per field, with limits written in the
 * reader's units (`system`; the API answers in SI). A pour milestone takes no threshold, hold,
 * margin or sensor scope (it uses the mix's strip or ship strength); a range takes a low and a
 * high with low < high; every other kind takes one threshold within its unit's bounds. The
 * clearing margin must leave room to clear: a value can never come back past a margin that
 * reaches beyond the unit's range (or, for a range, past its middle).
 */
export function ruleProblems(d: RuleDraft, system: UnitSystem = "si"): RuleProblem[] {
  const out: RuleProblem[] = [];
  const info = ruleKinds[d.kind];
  if (info.pour) {
    const strength = d.kind === "pour_strip" ? "strip" : "ship";
    if (d.threshold !== null)
      out.push({
        field: "threshold",
        error: `A pour milestone takes no threshold: it uses each mix's ${strength} strength`,
      });
    if (d.thresholdHigh !== null)
      out.push({ field: "threshold_high", error: "A pour milestone takes no threshold" });
    if (d.holdMin !== 0)
      out.push({ field: "hold_min", error: "A pour milestone has no hold time" });
    if (d.clearMargin !== 0)
      out.push({ field: "clear_margin", error: "A pour milestone has no clearing margin" });
    const notSensors = "A pour milestone watches pours, not sensors";
    if (d.scope.areaId !== null) out.push({ field: "scope.area_id", error: notSensors });
    if (d.scope.sensorKind !== null) out.push({ field: "scope.sensor_kind", error: notSensors });
    if (d.scope.sensorId !== null) out.push({ field: "scope.sensor_id", error: notSensors });
  } else {
    const unit = info.unit as MeasuredUnit;
    const b = thresholdBounds[unit];
    let lowOk = false;
    if (d.threshold === null)
      out.push({
        field: "threshold",
        error: info.range ? "Enter the lowest temperature" : `Enter ${thresholdNames[unit]}`,
      });
    else lowOk = checkBounds("threshold", d.threshold, unit, system, out);
    let highOk = false;
    if (!info.range) {
      if (d.thresholdHigh !== null)
        out.push({ field: "threshold_high", error: "Only a range rule takes a highest value" });
    } else if (d.thresholdHigh === null) {
      out.push({ field: "threshold_high", error: "Enter the highest temperature" });
    } else if (checkBounds("threshold_high", d.thresholdHigh, unit, system, out)) {
      highOk = true;
      if (lowOk && d.threshold! >= d.thresholdHigh) {
        out.push({ field: "threshold_high", error: "The highest must be above the lowest" });
        highOk = false;
      }
    }
    if (d.clearMargin < 0) out.push({ field: "clear_margin", error: "Zero or more" });
    else if (d.clearMargin > b.marginMax)
      out.push({
        field: "clear_margin",
        error: `At most ${marginText(b.marginMax, unit, system)}`,
      });
    else if (info.range && lowOk && highOk) {
      const width = d.thresholdHigh! - d.threshold!;
      if (2 * d.clearMargin >= width)
        out.push({
          field: "clear_margin",
          error: `Less than half the range (${marginText(width / 2, unit, system)}), or nothing ever counts as back inside`,
        });
    } else if (!info.range && lowOk) {
      const t = d.threshold!;
      if (info.low && t + d.clearMargin > b.max)
        out.push({
          field: "clear_margin",
          error: `It would clear only at ${limitText(t + d.clearMargin, unit, system)}, past the highest possible ${limitText(b.max, unit, system)}`,
        });
      else if (!info.low && b.minOpen && d.clearMargin >= t)
        out.push({
          field: "clear_margin",
          error: `Less than the limit itself (${marginText(t, unit, system)})`,
        });
      else if (!info.low && !b.minOpen && t - d.clearMargin < b.min)
        out.push({
          field: "clear_margin",
          error: `It would clear only at ${limitText(t - d.clearMargin, unit, system)}, below the lowest possible ${limitText(b.min, unit, system)}`,
        });
    }
    if (d.scope.sensorId !== null && (d.scope.areaId !== null || d.scope.sensorKind !== null))
      out.push({
        field: "scope.sensor_id",
        error: "A rule on one sensor takes no area or sensor kind",
      });
  }
  if (d.holdMin < 0) out.push({ field: "hold_min", error: "Zero or more minutes" });
  else if (d.holdMin > ruleBounds.holdMaxMin)
    out.push({ field: "hold_min", error: `At most ${ruleBounds.holdMaxMin} minutes (a day)` });
  if (d.escalateAfterMin !== null) {
    if (d.audience !== "on_call")
      out.push({
        field: "escalate_after_min",
        error: "Only a rule that texts the operator on call escalates",
      });
    else if (
      d.escalateAfterMin < ruleBounds.escalateMinMin ||
      d.escalateAfterMin > ruleBounds.escalateMaxMin
    )
      out.push({
        field: "escalate_after_min",
        error: `From ${ruleBounds.escalateMinMin} to ${ruleBounds.escalateMaxMin} minutes, or never`,
      });
  }
  return out;
}

// ---------------------------------------------------------------------------------------
// The form: every input is text in the reader's units.

/** A rule form's inputs. Scope fields are "" for "any". */
export interface RuleFormValues {
  name: string;
  kind: RuleKind;
  threshold: string;
  threshold_high: string;
  hold_min: string;
  clear_margin: string;
  severity: Severity;
  audience: Audience;
  /** "" for never. */
  escalate_after_min: string;
  area_id: string;
  sensor_kind: string;
  sensor_id: string;
  pour_id: string;
  source: string;
  enabled: boolean;
}

/** The form field of an API field name ("scope.area_id" → "area_id"). */
export function formFieldOf(apiField: string): keyof RuleFormValues | null {
  const f = apiField.startsWith("scope.") ? apiField.slice("scope.".length) : apiField;
  const known: (keyof RuleFormValues)[] = [
    "name",
    "kind",
    "threshold",
    "threshold_high",
    "hold_min",
    "clear_margin",
    "severity",
    "audience",
    "escalate_after_min",
    "area_id",
    "sensor_kind",
    "sensor_id",
    "pour_id",
    "source",
    "enabled",
  ];
  return (known as string[]).includes(f) ? (f as keyof RuleFormValues) : null;
}

/** A new rule's starting values: the first default's shape, cold cure-bag temperature. */
export const blankRule: RuleFields = {
  name: "",
  kind: "temp_low",
  threshold: 10,
  thresholdHigh: null,
  holdMin: 15,
  clearMargin: 1,
  severity: "warning",
  audience: "on_call",
  escalateAfterMin: 30,
  scope: { areaId: null, sensorKind: null, sensorId: null, pourId: null },
  enabled: true,
  source: null,
};

/** What a form shows for a rule, in the reader's units. */
export function formValuesOf(r: RuleFields, system: UnitSystem): RuleFormValues {
  const unit = ruleKinds[r.kind].unit;
  const lim = (v: number | null) =>
    v === null ? "" : numberText(thresholdToDisplay(v, unit, system));
  return {
    name: r.name,
    kind: r.kind,
    threshold: lim(r.threshold),
    threshold_high: lim(r.thresholdHigh),
    hold_min: numberText(r.holdMin),
    clear_margin: numberText(marginToDisplay(r.clearMargin, unit, system)),
    severity: r.severity,
    audience: r.audience,
    escalate_after_min: r.escalateAfterMin === null ? "" : numberText(r.escalateAfterMin),
    area_id: r.scope.areaId === null ? "" : String(r.scope.areaId),
    sensor_kind: r.scope.sensorKind ?? "",
    sensor_id: r.scope.sensorId ?? "",
    pour_id: r.scope.pourId === null ? "" : String(r.scope.pourId),
    source: r.source ?? "",
    enabled: r.enabled,
  };
}

/** Reads a number as people type it: "1,5" or "−3" are taken too. */
export function readNumber(text: string): number | null {
  const t = text
    .trim()
    .replace(/\u2212/g, "-")
    .replace(",", ".");
  if (t === "" || !/^[-+]?(\d+\.?\d*|\.\d+)$/.test(t)) return null;
  return Number(t);
}

/**
 * A form's values as a rule in SI, or what is wrong with them (named by form field). Inputs the
 * kind does not use are left out: a pour milestone sends no threshold, hold, margin or sensor
 * scope; a rule that does not text the operator on call does not escalate.
 */
export function readRuleForm(
  v: RuleFormValues,
  system: UnitSystem,
): { ok: true; rule: RuleFields } | { ok: false; errors: RuleProblem[] } {
  const info = ruleKinds[v.kind];
  const errors: RuleProblem[] = [];
  const num = (field: keyof RuleFormValues, text: string, required: boolean) => {
    if (text.trim() === "") {
      if (required) errors.push({ field, error: "Enter a number" });
      return null;
    }
    const n = readNumber(text);
    if (n === null) errors.push({ field, error: "Enter a number" });
    return n;
  };
  const name = v.name.trim();
  if (name === "") errors.push({ field: "name", error: "Enter a name" });
  else if (name.length > ruleBounds.nameMaxChars)
    errors.push({ field: "name", error: `At most ${ruleBounds.nameMaxChars} characters` });
  const source = v.source.trim();
  if (source.length > ruleBounds.sourceMaxChars)
    errors.push({ field: "source", error: `At most ${ruleBounds.sourceMaxChars} characters` });

  let threshold: number | null = null;
  let thresholdHigh: number | null = null;
  let holdMin = 0;
  let clearMargin = 0;
  if (!info.pour) {
    const t = num("threshold", v.threshold, true);
    threshold = t === null ? null : thresholdFromDisplay(t, info.unit, system);
    if (info.range) {
      const h = num("threshold_high", v.threshold_high, true);
      thresholdHigh = h === null ? null : thresholdFromDisplay(h, info.unit, system);
    }
    holdMin = num("hold_min", v.hold_min, false) ?? 0;
    const m = num("clear_margin", v.clear_margin, false);
    clearMargin = m === null ? 0 : marginFromDisplay(m, info.unit, system);
  }
  const escalateAfterMin =
    v.audience === "on_call" ? num("escalate_after_min", v.escalate_after_min, false) : null;
  const id = (text: string) => (text === "" ? null : Number(text));
  const scope: RuleScopeDraft = info.pour
    ? { areaId: null, sensorKind: null, sensorId: null, pourId: id(v.pour_id) }
    : {
        areaId: v.sensor_id === "" ? id(v.area_id) : null,
        sensorKind:
          v.sensor_id === "" && v.sensor_kind !== "" ? (v.sensor_kind as SensorKind) : null,
        sensorId: v.sensor_id === "" ? null : v.sensor_id,
        pourId: id(v.pour_id),
      };
  const rule: RuleFields = {
    name,
    kind: v.kind,
    threshold,
    thresholdHigh,
    holdMin,
    clearMargin,
    severity: v.severity,
    audience: v.audience,
    escalateAfterMin,
    scope,
    enabled: v.enabled,
    source: source === "" ? null : source,
  };
  const named = new Set(errors.map((e) => e.field));
  for (const p of ruleProblems(rule, system)) {
    const field = formFieldOf(p.field) ?? p.field;
    // A field that could not be read is already named; its range check would only repeat it.
    if (!named.has(field)) {
      errors.push({ field, error: p.error });
      named.add(field);
    }
  }
  return errors.length > 0 ? { ok: false, errors } : { ok: true, rule };
}

// ---------------------------------------------------------------------------------------
// Words for a list of rules.

/** What the rule alerts on, in the reader's units: "temperature below 50 °F". */
export function watchWords(
  r: Pick<RuleDraft, "kind" | "threshold" | "thresholdHigh">,
  system: UnitSystem,
): string {
  if (system === "si") return describeLimit(r);
  const unit = ruleKinds[r.kind].unit;
  const conv = (v: number | null) => (v === null ? null : thresholdToDisplay(v, unit, system));
  return describeLimit({
    kind: r.kind,
    threshold: conv(r.threshold),
    thresholdHigh: conv(r.thresholdHigh),
  }).replace(/°C/g, "°F");
}

/** "15 min", "1 h", "1 h 30 min". */
export function minutesWords(min: number): string {
  const m = round(min, 1);
  if (m < 60) return `${numberText(m)} min`;
  const h = Math.floor(m / 60);
  const rest = round(m - h * 60, 1);
  return rest === 0 ? `${h} h` : `${h} h ${numberText(rest)} min`;
}

/** How long a condition must last before the rule opens an episode. */
export function holdWords(holdMin: number): string {
  return holdMin === 0 ? "None: at the first reading past the limit" : minutesWords(holdMin);
}

/** When an episode of the rule counts as over, in the reader's units. */
export function clearWords(r: RuleDraft, system: UnitSystem): string {
  const info = ruleKinds[r.kind];
  if (info.pour) return "A milestone: told once for each pour";
  const hold = r.holdMin > 0 ? `, for ${minutesWords(r.holdMin)}` : "";
  if (r.kind === "silent") return `When readings come again${hold}`;
  const t = r.threshold;
  if (t === null) return "—";
  const m = r.clearMargin;
  const at = (si: number) => limitText(si, info.unit, system);
  switch (r.kind) {
    case "bin_range":
      return r.thresholdHigh === null
        ? "—"
        : `Back between ${at(t + m)} and ${at(r.thresholdHigh - m)}${hold}`;
    case "rate_rise":
      return `Once the rise slows to ${at(t - m)} or less${hold}`;
    case "rate_fall":
      return `Once the fall slows to ${at(t - m)} or less${hold}`;
    default:
      return info.low
        ? `Back at ${at(t + m)} or more${hold}`
        : `Back at ${at(t - m)} or less${hold}`;
  }
}

export const audienceWords: Record<Audience, string> = {
  on_call: "Texts the operator on call, e-mails QC and managers",
  quality: "E-mails QC and managers",
  digest: "In the daily digest",
};

export const severityWords: Record<Severity, string> = {
  critical: "Critical",
  warning: "Warning",
  info: "Information",
};

/** Who hears next when nobody acknowledges. */
export function escalationWords(audience: Audience, escalateAfterMin: number | null): string {
  if (audience !== "on_call") return "Does not escalate";
  if (escalateAfterMin === null) return "Never escalates";
  return `Unacknowledged after ${minutesWords(escalateAfterMin)}, the next person on call is texted`;
}

export const sensorKindWords: Record<SensorKind, string> = {
  bag: "cure bag",
  embedded: "in-concrete",
  bin: "bin",
  ambient: "air",
};

/** What the rule watches, in words: "All cure bag sensors in Cure Room 1". */
export function scopeWords(
  kind: RuleKind,
  s: {
    area: string | null;
    sensorKind: SensorKind | null;
    sensorId: string | null;
    pourCode: string | null;
  },
): string {
  if (ruleKinds[kind].pour) return s.pourCode ? `Pour ${s.pourCode}` : "Every pour";
  const pour = s.pourCode ? ` on pour ${s.pourCode}` : "";
  if (s.sensorId) return `Sensor ${s.sensorId}${pour}`;
  const base = s.sensorKind ? `All ${sensorKindWords[s.sensorKind]} sensors` : "All sensors";
  return `${base}${s.area ? ` in ${s.area}` : ""}${pour}`;
}

export type RuleGroup = "curing" | "bins" | "health" | "milestones";

/** The list's sections, in order, with what belongs in each. */
export const ruleGroups: { id: RuleGroup; title: string; blurb: string }[] = [
  {
    id: "curing",
    title: "Curing conditions",
    blurb: "Temperature and humidity of the concrete and its cure bags.",
  },
  {
    id: "bins",
    title: "Aggregate bins",
    blurb: "Aggregate temperature before it goes into a batch.",
  },
  { id: "health", title: "Sensor health", blurb: "Sensors that fall silent or run low." },
  {
    id: "milestones",
    title: "Pour milestones",
    blurb: "Strip and ship strength reached, by the maturity method.",
  },
];

export function ruleGroupOf(kind: RuleKind): RuleGroup {
  if (ruleKinds[kind].pour) return "milestones";
  if (kind === "bin_range") return "bins";
  if (kind === "silent" || kind === "battery_low") return "health";
  return "curing";
}
