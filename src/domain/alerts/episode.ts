/**
 * Alert episodes as a pure step function, with time passed in. A rule's condition must hold
 * for `holdMs`, measured on the readings' own timestamps (so a late backlog still raises what
 * it shows), before an episode opens; it clears when the value has been back within limits,
 * past a clearing margin, for `holdMs` too, so a value hovering at the limit makes one episode.
 */

export type RuleKind =
  | "temp_low"
  | "temp_high"
  | "rh_low"
  | "rate_rise"
  | "rate_fall"
  | "silent"
  | "battery_low"
  | "bin_range"
  | "pour_strip"
  | "pour_ship";

export interface RuleLimits {
  kind: RuleKind;
  /** The limit, in the rule's unit: °C, % RH, °C/h, minutes of silence, % battery. */
  threshold: number | null;
  /** Upper limit of a range rule (bin_range), °C. */
  thresholdHigh: number | null;
  /** How long the condition must last (and, to clear, be gone), ms of reading time. */
  holdMs: number;
  /** How far back inside the limit a value must come to count as clear. */
  clearMargin: number;
}

export type Judgement = "breach" | "clear" | "between";

/** Rules whose value must stay above the limit. */
const lowKinds = new Set<RuleKind>(["temp_low", "rh_low", "battery_low"]);

/**
 * Whether a value breaks the rule, is clear of it (inside by the margin), or sits between
 * (inside the limit but not by the margin: it neither opens nor clears an episode).
 */
export function judge(rule: RuleLimits, value: number): Judgement {
  const m = Math.max(0, rule.clearMargin);
  if (rule.kind === "bin_range") {
    const lo = rule.threshold ?? -Infinity;
    const hi = rule.thresholdHigh ?? Infinity;
    if (value < lo || value > hi) return "breach";
    return value >= lo + m && value <= hi - m ? "clear" : "between";
  }
  if (rule.threshold === null) return "clear";
  if (lowKinds.has(rule.kind)) {
    if (value < rule.threshold) return "breach";
    return value >= rule.threshold + m ? "clear" : "between";
  }
  if (value > rule.threshold) return "breach";
  return value <= rule.threshold - m ? "clear" : "between";
}

/** Where one rule stands for one sensor (or pour). */
export type Track =
  | { phase: "quiet"; lastTsMs: number | null }
  | { phase: "pending"; lastTsMs: number; sinceMs: number; worst: number }
  | {
      phase: "active";
      lastTsMs: number;
      startedAtMs: number;
      openedAtMs: number;
      worst: number;
      clearingSinceMs: number | null;
    };

export const quietTrack: Track = { phase: "quiet", lastTsMs: null };

export type EpisodeEvent =
  | { type: "opened"; startedAtMs: number; openedAtMs: number; value: number; worst: number }
  | { type: "worsened"; atMs: number; worst: number }
  | { type: "cleared"; clearedAtMs: number; worst: number };

export interface Observation {
  tsMs: number;
  value: number;
}

const worse = (kind: RuleKind, a: number, b: number) =>
  lowKinds.has(kind) ? Math.min(a, b) : Math.max(a, b);

/**
 * One observation's effect on a rule's track: the next track and what happened. An
 * observation older than the last one seen is ignored (tracks move forward in reading time).
 */
export function stepEpisode(
  prev: Track,
  obs: Observation,
  rule: RuleLimits,
): { track: Track; events: EpisodeEvent[] } {
  if (prev.lastTsMs !== null && obs.tsMs <= prev.lastTsMs) return { track: prev, events: [] };
  const j = judge(rule, obs.value);
  const hold = Math.max(0, rule.holdMs);
  switch (prev.phase) {
    case "quiet": {
      if (j !== "breach") return { track: { phase: "quiet", lastTsMs: obs.tsMs }, events: [] };
      if (hold === 0) return openAt(obs.tsMs, obs.tsMs, obs.value, obs.value);
      return {
        track: { phase: "pending", lastTsMs: obs.tsMs, sinceMs: obs.tsMs, worst: obs.value },
        events: [],
      };
    }
    case "pending": {
      if (j !== "breach") return { track: { phase: "quiet", lastTsMs: obs.tsMs }, events: [] };
      const w = worse(rule.kind, prev.worst, obs.value);
      if (obs.tsMs - prev.sinceMs >= hold) return openAt(prev.sinceMs, obs.tsMs, obs.value, w);
      return { track: { ...prev, lastTsMs: obs.tsMs, worst: w }, events: [] };
    }
    case "active": {
      if (j === "breach") {
        const w = worse(rule.kind, prev.worst, obs.value);
        const events: EpisodeEvent[] =
          w !== prev.worst ? [{ type: "worsened", atMs: obs.tsMs, worst: w }] : [];
        return { track: { ...prev, lastTsMs: obs.tsMs, worst: w, clearingSinceMs: null }, events };
      }
      if (j === "between")
        return { track: { ...prev, lastTsMs: obs.tsMs, clearingSinceMs: null }, events: [] };
      const since = prev.clearingSinceMs ?? obs.tsMs;
      if (obs.tsMs - since >= hold) {
        return {
          track: { phase: "quiet", lastTsMs: obs.tsMs },
          events: [{ type: "cleared", clearedAtMs: obs.tsMs, worst: prev.worst }],
        };
      }
      return { track: { ...prev, lastTsMs: obs.tsMs, clearingSinceMs: since }, events: [] };
    }
  }
}

function openAt(
  startedAtMs: number,
  openedAtMs: number,
  value: number,
  worst: number,
): { track: Track; events: EpisodeEvent[] } {
  return {
    track: {
      phase: "active",
      lastTsMs: openedAtMs,
      startedAtMs,
      openedAtMs,
      worst,
      clearingSinceMs: null,
    },
    events: [{ type: "opened", startedAtMs, openedAtMs, value, worst }],
  };
}

/** Folds observations (in any order; they are sorted by time) through {@link stepEpisode}. */
export function runEpisodes(
  start: Track,
  observations: readonly Observation[],
  rule: RuleLimits,
): { track: Track; events: EpisodeEvent[] } {
  let track = start;
  const events: EpisodeEvent[] = [];
  for (const o of [...observations].sort((a, b) => a.tsMs - b.tsMs)) {
    const r = stepEpisode(track, o, rule);
    track = r.track;
    events.push(...r.events);
  }
  return { track, events };
}

export type NoticeReason = "first" | "escalate" | "repeat" | "cleared" | "none";

/**
 * Whether an episode's news should reach someone, and why. An episode that opened and cleared
 * within the same backlog is recorded without waking anyone; an open one left unacknowledged
 * past `escalateAfterMs` since the last notice goes to the next person.
 */
export function decideNotice(input: {
  event: "opened" | "cleared" | "tick";
  state: "open" | "acknowledged" | "cleared";
  clearedInSameBatch?: boolean;
  severity: "info" | "warning" | "critical";
  nowMs: number;
  lastNotifiedAtMs: number | null;
  escalateAfterMs: number | null;
  notifiedOnOpen: boolean;
}): NoticeReason {
  const { event, state } = input;
  if (event === "opened") return input.clearedInSameBatch ? "none" : "first";
  if (event === "cleared")
    return input.notifiedOnOpen && input.severity !== "info" ? "cleared" : "none";
  if (state !== "open" || input.escalateAfterMs === null || input.lastNotifiedAtMs === null)
    return "none";
  return input.nowMs - input.lastNotifiedAtMs >= input.escalateAfterMs ? "escalate" : "none";
}
