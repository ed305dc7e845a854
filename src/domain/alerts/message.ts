/**
 * The words of alert texts and e-mails, in each reader's own units. A text stays short
 * enough for one or two SMS segments and says what to do next (reply ACK); an e-mail says
 * the same at more length, with a link.
 */
import { cToF, deltaCToF, mpaToPsi, type UnitSystem } from "../units";
import type { RuleKind } from "./episode";
import { ruleKinds, type Severity } from "./rules";

const one = (v: number) => (Math.round(v * 10) / 10).toFixed(1);

/** A rule's value in the reader's units: "54.3 °F", "93.8 % RH", "41.4 °F/h", "42 min". */
export function formatValue(kind: RuleKind, valueSi: number, units: UnitSystem): string {
  switch (ruleKinds[kind].unit) {
    case "c":
      return units === "us" ? `${one(cToF(valueSi))} °F` : `${one(valueSi)} °C`;
    case "c_per_h":
      return units === "us" ? `${one(deltaCToF(valueSi))} °F/h` : `${one(valueSi)} °C/h`;
    case "pct_rh":
      return `${one(valueSi)} % RH`;
    case "min":
      return `${Math.round(valueSi)} min`;
    case "pct_battery":
      return `${Math.round(valueSi)} % battery`;
    case "none":
      return units === "us"
        ? `${Math.round(mpaToPsi(valueSi)).toLocaleString("en-US")} psi`
        : `${one(valueSi)} MPa`;
  }
}

/** The limit in words and the reader's units: "below 95.0 % RH", "above 158.0 °F". */
export function formatLimit(
  rule: { kind: RuleKind; threshold: number | null; thresholdHigh: number | null },
  units: UnitSystem,
): string {
  const v = (x: number | null) => (x === null ? "?" : formatValue(rule.kind, x, units));
  switch (rule.kind) {
    case "temp_low":
    case "rh_low":
    case "battery_low":
      return `below ${v(rule.threshold)}`;
    case "temp_high":
      return `above ${v(rule.threshold)}`;
    case "rate_rise":
      return `rising faster than ${v(rule.threshold)}`;
    case "rate_fall":
      return `falling faster than ${v(rule.threshold)}`;
    case "silent":
      return `silent over ${v(rule.threshold)}`;
    case "bin_range":
      return `outside ${v(rule.threshold)} to ${v(rule.thresholdHigh)}`;
    case "pour_strip":
      return "at strip strength";
    case "pour_ship":
      return "at ship strength";
  }
}

export interface NoticeFacts {
  plantName: string;
  ruleName: string;
  kind: RuleKind;
  severity: Severity;
  threshold: number | null;
  thresholdHigh: number | null;
  /** The sensor's id and name, or null for a pour milestone. */
  sensorId: string | null;
  sensorLabel: string | null;
  pourCode: string | null;
  /** The value that opened it, and the worst so far, in SI. */
  value: number | null;
  worst: number | null;
  /** "02:14" (plant time) when the condition began, by the readings' own time. */
  startedAtText: string;
  /** For escalations: how long it has gone unacknowledged, "15 min". */
  unackedFor?: string;
  /** A link to the episode's page, when the public address is known. */
  link?: string | null;
}

export type NoticeReason = "first" | "escalate" | "cleared";

const severityWord: Record<Severity, string> = {
  critical: "ALARM",
  warning: "WARNING",
  info: "NOTE",
};

function where(f: NoticeFacts): string {
  const sensor = f.sensorId
    ? f.sensorLabel && f.sensorLabel !== f.sensorId
      ? `${f.sensorId} (${f.sensorLabel})`
      : f.sensorId
    : null;
  const pour = f.pourCode ? `pour ${f.pourCode}` : null;
  return [sensor, pour].filter(Boolean).join(", ");
}

function what(f: NoticeFacts, units: UnitSystem): string {
  if (ruleKinds[f.kind].pour) {
    const est = f.value === null ? "" : `: estimate ${formatValue(f.kind, f.value, units)}`;
    return `${f.ruleName}${est}`;
  }
  const value = f.value === null ? "" : ` ${formatValue(f.kind, f.value, units)},`;
  return `${f.ruleName}:${value} ${formatLimit(f, units)}`;
}

/** The text message. */
export function smsBody(f: NoticeFacts, reason: NoticeReason, units: UnitSystem): string {
  const place = where(f);
  if (reason === "cleared")
    return `Plinth ${f.plantName}: cleared by itself: ${f.ruleName} at ${place}. No reply needed.`;
  const head =
    reason === "escalate"
      ? `Plinth ${severityWord[f.severity]} (not acknowledged for ${f.unackedFor ?? "a while"})`
      : `Plinth ${severityWord[f.severity]}`;
  return `${head}: ${place}: ${what(f, units)}, since ${f.startedAtText}. Reply ACK when handled, or ACK and a note.`;
}

/** The e-mail's subject line. */
export function emailSubject(f: NoticeFacts, reason: NoticeReason): string {
  const place = where(f);
  if (reason === "cleared") return `Cleared: ${f.ruleName} at ${place}`;
  const pre = reason === "escalate" ? "Not acknowledged: " : "";
  return `${pre}${severityWord[f.severity]}: ${f.ruleName} at ${place}`;
}

/** The e-mail's body, plain text. */
export function emailBody(f: NoticeFacts, reason: NoticeReason, units: UnitSystem): string {
  const lines: string[] = [];
  const place = where(f);
  if (reason === "cleared") {
    lines.push(`${f.ruleName} at ${place} has cleared by itself before anyone acknowledged it.`);
  } else {
    if (reason === "escalate")
      lines.push(
        `Nobody has acknowledged this alert for ${f.unackedFor ?? "a while"}; you are next on the rota.`,
        "",
      );
    const when = ruleKinds[f.kind].pour ? "Reached" : "Since";
    lines.push(
      `${what(f, units)}.`,
      `Where: ${place}.`,
      `${when}: ${f.startedAtText} (plant time).`,
    );
    if (f.worst !== null && f.value !== null && f.worst !== f.value && !ruleKinds[f.kind].pour)
      lines.push(`Worst so far: ${formatValue(f.kind, f.worst, units)}.`);
    if (ruleKinds[f.kind].pour)
      lines.push(
        "",
        "The estimate supports the release decision; it does not replace cylinder breaks, the engineer of record's judgement, or local codes.",
      );
    else lines.push("", "Acknowledge it in Plinth with a note of what was done.");
  }
  if (f.link) lines.push("", f.link);
  lines.push("", `Plinth, ${f.plantName}`);
  return lines.join("\n");
}

/** The digest e-mail: information-level episodes of the period, one line each. */
export function digestBody(
  plantName: string,
  periodText: string,
  items: readonly (NoticeFacts & { openedAtText: string; state: string })[],
  units: UnitSystem,
): { subject: string; body: string } {
  const subject = `Plinth digest for ${plantName}: ${items.length} note${items.length === 1 ? "" : "s"} (${periodText})`;
  const lines = items.map(
    (i) => `- ${i.openedAtText}  ${where(i)}: ${what(i, units)} [${i.state}]`,
  );
  return {
    subject,
    body: [
      `Information-level alerts, ${periodText}:`,
      "",
      ...lines,
      "",
      `Plinth, ${plantName}`,
    ].join("\n"),
  };
}
