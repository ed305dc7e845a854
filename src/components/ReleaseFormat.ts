/**
 * How the strength page, the release panel and the ready list word figures and times: strengths
 * in the person's units (psi whole, MPa to 0.1), times in the plant's time zone, with how long
 * ago or how soon. Shared by islands and pages; no server code.
 */
import { formatDuration } from "@/domain/sensorState";
import { cToF, psiToMpa, type UnitSystem } from "@/domain/units";

/** A strength given in psi (as the API has it), in the person's units. */
export function strengthText(psi: number | null, units: UnitSystem): string {
  if (psi === null) return "—";
  if (units === "us") return `${Math.round(psi).toLocaleString("en-US")} psi`;
  return `${psiToMpa(psi).toFixed(1)} MPa`;
}

/** A temperature in the person's units, °C beside °F for US units (the datum is set in °C). */
export function datumText(c: number, units: UnitSystem): string {
  const sign = (v: number) => (v < 0 ? `−${Math.abs(v)}` : `${v}`);
  const cText = `${sign(Math.round(c * 10) / 10)} °C`;
  return units === "us" ? `${sign(Math.round(cToF(c) * 10) / 10)} °F (${cText})` : cText;
}

/** A moment in the plant's time zone: weekday and time within a week of now, else the date too. */
export function whenText(ms: number, timeZone: string, nowMs: number): string {
  const near = Math.abs(ms - nowMs) < 6 * 24 * 3_600_000;
  return new Date(ms).toLocaleString("en-US", {
    timeZone,
    ...(near
      ? { weekday: "short", hour: "numeric", minute: "2-digit" }
      : { month: "short", day: "numeric", hour: "numeric", minute: "2-digit" }),
  });
}

/** "in 1 h 20 min", "3 h ago", or "now". */
export function relativeText(ms: number, nowMs: number): string {
  const d = ms - nowMs;
  if (Math.abs(d) < 60_000) return "now";
  return d > 0 ? `in ${formatDuration(d)}` : `${formatDuration(-d)} ago`;
}

/** Both at once: "Tue 1:27 AM (in 1 h 20 min)". */
export function whenWithRelative(ms: number, timeZone: string, nowMs: number): string {
  return `${whenText(ms, timeZone, nowMs)} (${relativeText(ms, nowMs)})`;
}

export const toneClasses = {
  ok: "bg-ok-bg text-ok",
  warn: "bg-warn-bg text-warn",
  alarm: "bg-alarm-bg text-alarm",
  info: "bg-info-bg text-accent",
  muted: "bg-surface-2 text-muted",
} as const;
/** Marks that go with each tone, so a state never rests on colour alone (StateBadge.astro). */
export const toneMarks = { ok: "●", warn: "▲", alarm: "■", info: "◆", muted: "○" } as const;
export type Tone = keyof typeof toneClasses;
