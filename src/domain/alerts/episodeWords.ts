/**
 * How an alert episode reads on a screen, in the reader's own units: what is wrong
 * ("Humidity 93.8 % RH, below 95 % RH"), its severity and state by word and mark, and the
 * order in which the open ones are shown. Pure: values in, words out.
 *
 * Values and limits are stored SI, in the rule kind's unit: °C, % RH, °C per hour, minutes of
 * silence, % battery, MPa for a pour milestone. °F = 1.8·°C + 32 for a temperature; a rate is
 * a difference per hour and scales by 1.8 alone, without the 32 offset (domain.md §8.3).
 */
import { cToF, deltaCToF, mpaToPsi, type UnitSystem } from "../units";
import type { RuleKind } from "./episode";
import type { Severity } from "./rules";

export type EpisodeState = "open" | "acknowledged" | "cleared";

/** A number with one decimal, or none when it is whole: 95 → "95", 93.84 → "93.8". */
function num(v: number): string {
  const r = Math.round(v * 10) / 10;
  return Number.isInteger(r) ? String(r) : r.toFixed(1);
}

/**
 * A value of a rule's kind in the reader's units: "54.5 °F", "93.8 % RH", "39.6 °F/h",
 * "42 min", "15 %", "3,510 psi".
 */
export function alertValueText(kind: RuleKind, valueSi: number, units: UnitSystem): string {
  switch (kind) {
    case "temp_low":
    case "temp_high":
    case "bin_range":
      return units === "us" ? `${num(cToF(valueSi))} °F` : `${num(valueSi)} °C`;
    case "rate_rise":
    case "rate_fall":
      return units === "us" ? `${num(deltaCToF(valueSi))} °F/h` : `${num(valueSi)} °C/h`;
    case "rh_low":
      return `${num(valueSi)} % RH`;
    case "silent":
      return `${Math.round(valueSi)} min`;
    case "battery_low":
      return `${Math.round(valueSi)} %`;
    case "pour_strip":
    case "pour_ship":
      return units === "us"
        ? `${(Math.round(mpaToPsi(valueSi) / 10) * 10).toLocaleString("en-US")} psi`
        : `${num(valueSi)} MPa`;
  }
}

export interface RuleLimitsSi {
  kind: RuleKind;
  threshold: number | null;
  thresholdHigh: number | null;
}

/** The limit in words: "below 95 % RH", "above 158 °F", "faster than 39.6 °F/h". */
export function alertLimitText(rule: RuleLimitsSi, units: UnitSystem): string {
  const v = (x: number | null) => (x === null ? "the limit" : alertValueText(rule.kind, x, units));
  switch (rule.kind) {
    case "temp_low":
    case "rh_low":
    case "battery_low":
      return `below ${v(rule.threshold)}`;
    case "temp_high":
      return `above ${v(rule.threshold)}`;
    case "rate_rise":
    case "rate_fall":
      return `faster than ${v(rule.threshold)}`;
    case "silent":
      return `limit ${v(rule.threshold)}`;
    case "bin_range": {
      if (rule.threshold === null || rule.thresholdHigh === null)
        return `outside ${v(rule.threshold)} to ${v(rule.thresholdHigh)}`;
      const lo = alertValueText(rule.kind, rule.threshold, units).split(" ")[0];
      return `outside ${lo} to ${v(rule.thresholdHigh)}`;
    }
    case "pour_strip":
      return "the mix's strip strength";
    case "pour_ship":
      return "the mix's ship strength";
  }
}

const quantity: Record<RuleKind, string> = {
  temp_low: "Temperature",
  temp_high: "Temperature",
  rh_low: "Humidity",
  rate_rise: "Rising",
  rate_fall: "Falling",
  silent: "No reading for",
  battery_low: "Battery",
  bin_range: "Temperature",
  pour_strip: "Strip strength reached",
  pour_ship: "Ship strength reached",
};

/**
 * True when a value breaks the rule's limit itself (not counting the clearing margin): below
 * a low limit, above a high one, outside a range. Unknown limits count as broken.
 */
export function breaksLimit(rule: RuleLimitsSi, valueSi: number): boolean {
  if (rule.threshold === null) return true;
  switch (rule.kind) {
    case "temp_low":
    case "rh_low":
    case "battery_low":
      return valueSi < rule.threshold;
    case "bin_range":
      return (
        valueSi < rule.threshold || (rule.thresholdHigh !== null && valueSi > rule.thresholdHigh)
      );
    default:
      return valueSi > rule.threshold;
  }
}

/** How a value back inside the limit reads: "back above 95 % RH". */
function backText(rule: RuleLimitsSi, units: UnitSystem): string {
  const v = (x: number | null) => (x === null ? "the limit" : alertValueText(rule.kind, x, units));
  switch (rule.kind) {
    case "temp_low":
    case "rh_low":
    case "battery_low":
      return `back above ${v(rule.threshold)}`;
    case "bin_range":
      return `back within ${alertLimitText(rule, units).replace(/^outside /, "")}`;
    case "silent":
      return "reporting again";
    default:
      return `back under ${v(rule.threshold)}`;
  }
}

/**
 * What is wrong in one line: the quantity, its value and the limit it broke.
 * "Humidity 93.8 % RH, below 95 % RH"; a pour milestone: "Estimate 3,510 psi, at the mix's
 * strip strength". Without a value, the limit alone: "Humidity below 95 % RH". A value back
 * inside the limit (an episode not yet cleared, waiting out its margin) says so: "Humidity
 * 95.6 % RH, back above 95 % RH".
 */
export function alertWhatText(
  rule: RuleLimitsSi,
  valueSi: number | null,
  units: UnitSystem,
): string {
  const q = quantity[rule.kind];
  if (rule.kind === "pour_strip" || rule.kind === "pour_ship")
    return valueSi === null
      ? q
      : `Estimate ${alertValueText(rule.kind, valueSi, units)}, at ${alertLimitText(rule, units)}`;
  if (valueSi === null) {
    if (rule.kind === "silent") return `No reading, ${alertLimitText(rule, units)}`;
    return `${q} ${alertLimitText(rule, units)}`;
  }
  const valueText = `${q} ${alertValueText(rule.kind, valueSi, units)}`;
  return breaksLimit(rule, valueSi)
    ? `${valueText}, ${alertLimitText(rule, units)}`
    : `${valueText}, ${backText(rule, units)}`;
}

/**
 * The same words with each number held to its unit by a no-break space, so a narrow screen
 * never leaves "95" at a line's end and "% RH" on the next.
 */
export function keepUnitsTogether(text: string): string {
  return text.replace(/(\d) (?=°|%|min\b|psi\b|MPa\b)/g, "$1\u00a0");
}

/** Severity by word and mark (never colour alone), and the tone the page colours it with. */
export const severityLook: Record<
  Severity,
  { word: string; mark: string; tone: "alarm" | "warn" | "info" }
> = {
  critical: { word: "Critical", mark: "■", tone: "alarm" },
  warning: { word: "Warning", mark: "▲", tone: "warn" },
  info: { word: "Note", mark: "◆", tone: "info" },
};

/** State by word and mark: open needs someone, acknowledged is in hand, cleared is over. */
export const stateLook: Record<
  EpisodeState,
  { word: string; mark: string; tone: "alarm" | "warn" | "ok" }
> = {
  open: { word: "Needs someone", mark: "■", tone: "alarm" },
  acknowledged: { word: "Acknowledged", mark: "▲", tone: "warn" },
  cleared: { word: "Cleared", mark: "●", tone: "ok" },
};

const severityRank: Record<Severity, number> = { critical: 0, warning: 1, info: 2 };
const stateRank: Record<EpisodeState, number> = { open: 0, acknowledged: 1, cleared: 2 };

/**
 * The order of what needs someone: open before acknowledged before cleared; within each,
 * critical before warning before note; then the one waiting longest first.
 */
export function compareForAttention(
  a: { state: EpisodeState; severity: Severity; openedAtMs: number; id: number },
  b: { state: EpisodeState; severity: Severity; openedAtMs: number; id: number },
): number {
  return (
    stateRank[a.state] - stateRank[b.state] ||
    severityRank[a.severity] - severityRank[b.severity] ||
    a.openedAtMs - b.openedAtMs ||
    a.id - b.id
  );
}

/** How an acknowledgement came: in Plinth, or by a reply to the text. */
export const ackViaWords: Record<"web" | "sms", string> = {
  web: "in Plinth",
  sms: "by text reply",
};

/** Why a notice went out, in words. */
export function noticeReasonText(reason: string | null): string {
  switch (reason) {
    case "first":
      return "First notice";
    case "escalate":
      return "Escalation: not acknowledged";
    case "repeat":
      return "Reminder";
    case "cleared":
      return "Cleared by itself";
    case "digest":
      return "Digest";
    default:
      return reason ?? "—";
  }
}

/** "Humidity", "Temperature": which reading a chart of the episode should draw. */
export function chartedQuantity(kind: RuleKind): "temp" | "rh" | null {
  switch (kind) {
    case "rh_low":
      return "rh";
    case "pour_strip":
    case "pour_ship":
      return null;
    default:
      return "temp";
  }
}

/**
 * The window an episode's chart shows: from before it started to after it ended (now, while
 * it lasts, never past now), a margin of half its length and at least two hours on each side,
 * so the readings on either side of the spell show too. Whole epoch milliseconds: the readings
 * endpoint takes no fractions.
 */
export function episodeChartWindow(
  startedAtMs: number,
  endMs: number,
  nowMs: number,
): { fromMs: number; toMs: number } {
  const marginMs = Math.max(2 * 3_600_000, Math.round((endMs - startedAtMs) / 2));
  return {
    fromMs: Math.round(startedAtMs) - marginMs,
    toMs: Math.round(Math.min(nowMs, endMs + marginMs)),
  };
}
