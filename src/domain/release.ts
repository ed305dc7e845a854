/**
 * Strip and ship releases: whether QC may sign one off, and where each open pour stands on the
 * floor's "ready" list. Pure: every fact (the pour's status, its releases, the governing estimate,
 * the threshold, the record's completeness, the time) is passed in.
 *
 * Policy (Plinth contract, POST /api/v1/pours/{id}/releases, and the product owner's brief):
 * - A release below the threshold, without an estimate (mix not calibrated, no sensor), or a ship
 *   release before any strip release, needs an override reason; with one it is allowed and the
 *   overridden reasons are recorded.
 * - A second release of the same kind, or any release of a shipped or void pour, is refused.
 * - An incomplete record does not block a release at or above the threshold (the estimate then
 *   errs low, never high), but the release says so.
 * - Every release carries {@link RELEASE_CAUTION}: the estimate supports, and never replaces,
 *   the engineer of record, the project specifications and local codes.
 */
import { isGap, MS_PER_H } from "./maturity/readings";

export const releaseKinds = ["strip", "ship"] as const;
export type ReleaseKind = (typeof releaseKinds)[number];

/** The pour statuses of the data model (src/lib/server/db/schema/strength.ts). */
export type PourStatus = "curing" | "stripped" | "ready_to_ship" | "shipped" | "void";

/** Stored with every release and shown wherever a release is made or read. Plinth's own words. */
export const RELEASE_CAUTION =
  "Maturity estimates support, and never replace, the judgement of the engineer of record, " +
  "the project specifications and local codes. Confirm with cylinder breaks where they are required.";

export const releaseKindLabels: Record<ReleaseKind, string> = { strip: "Strip", ship: "Ship" };

/** A reason a release may go ahead only with an override reason. */
export type OverridableCode = "not-calibrated" | "no-estimate" | "below-threshold" | "not-stripped";
/** A reason no override can lift. */
export type BlockingCode = "already-released" | "pour-closed";
/** Something the person signing must see, that does not stop the release. */
export type WarningCode = "incomplete-record" | "override";

export interface ReleaseIssue<C extends string> {
  code: C;
  message: string;
}

/** What the decision needs to know. Strengths in MPa. */
export interface ReleaseFacts {
  kind: ReleaseKind;
  pourStatus: PourStatus;
  /** The kinds already released for this pour. */
  released: readonly ReleaseKind[];
  /** True when the mix has a strength-maturity curve in force. */
  calibrated: boolean;
  /** The governing (weakest) sensor's estimated strength, MPa; null when there is none. */
  estimateMpa: number | null;
  thresholdMpa: number;
  /** Every sensor's record complete up to now (no gap over 2 h, none silent). */
  completeRecord: boolean;
  /** As the person gave it; blank counts as none. */
  overrideReason?: string | null | undefined;
}

export type ReleaseDecision =
  | {
      outcome: "allowed";
      /** The reasons the override reason lifted (empty when none was needed). */
      overridden: ReleaseIssue<OverridableCode>[];
      warnings: ReleaseIssue<WarningCode>[];
      /** The pour's status after the release. */
      nextStatus: PourStatus;
    }
  | {
      outcome: "needs-override";
      reasons: ReleaseIssue<OverridableCode>[];
      warnings: ReleaseIssue<WarningCode>[];
    }
  | { outcome: "refused"; reason: ReleaseIssue<BlockingCode> };

const INCOMPLETE: ReleaseIssue<WarningCode> = {
  code: "incomplete-record",
  message:
    "The temperature record is incomplete (a gap over 2 hours, or a silent sensor). Intervals " +
    "without readings add no maturity, so the estimate errs low; check what is missing.",
};

/** The override reason as given, trimmed; null when blank or absent. */
export function normalizeOverrideReason(reason: string | null | undefined): string | null {
  const r = reason?.trim() ?? "";
  return r === "" ? null : r;
}

/** The status a pour takes after a release of `kind`: strip → stripped, ship → ready to ship. */
export function statusAfterRelease(kind: ReleaseKind, status: PourStatus): PourStatus {
  if (kind === "strip") return status === "curing" ? "stripped" : status;
  return status === "curing" || status === "stripped" ? "ready_to_ship" : status;
}

/**
 * Whether a strip or ship release may be signed off, needs an override reason, or is refused.
 * See the module comment for the policy. The comparison is at or above the threshold, in MPa.
 */
export function decideRelease(f: ReleaseFacts): ReleaseDecision {
  const label = f.kind === "strip" ? "strip" : "ship";
  if (f.pourStatus === "shipped" || f.pourStatus === "void") {
    return {
      outcome: "refused",
      reason: {
        code: "pour-closed",
        message: `The pour is ${f.pourStatus === "void" ? "void" : "already shipped"}; it takes no more releases.`,
      },
    };
  }
  if (f.released.includes(f.kind)) {
    return {
      outcome: "refused",
      reason: {
        code: "already-released",
        message: `The pour already has a ${label} release; a release is never made twice.`,
      },
    };
  }
  const reasons: ReleaseIssue<OverridableCode>[] = [];
  if (!f.calibrated) {
    reasons.push({
      code: "not-calibrated",
      message: "The mix is not calibrated, so there is no strength estimate.",
    });
  } else if (f.estimateMpa === null) {
    reasons.push({
      code: "no-estimate",
      message: "No sensor on the pour gives a strength estimate.",
    });
  } else if (!(f.estimateMpa >= f.thresholdMpa)) {
    reasons.push({
      code: "below-threshold",
      message: `The governing estimate is below the ${label} strength.`,
    });
  }
  if (f.kind === "ship" && !f.released.includes("strip")) {
    reasons.push({
      code: "not-stripped",
      message: "The pour has no strip release yet.",
    });
  }
  const warnings: ReleaseIssue<WarningCode>[] = f.completeRecord ? [] : [INCOMPLETE];
  const override = normalizeOverrideReason(f.overrideReason);
  if (reasons.length > 0 && override === null) {
    return { outcome: "needs-override", reasons, warnings };
  }
  if (reasons.length > 0) {
    warnings.push({
      code: "override",
      message: "Released on an override reason, against what the estimate shows.",
    });
  }
  return {
    outcome: "allowed",
    overridden: reasons,
    warnings,
    nextStatus: statusAfterRelease(f.kind, f.pourStatus),
  };
}

/** A stretch of a sensor's record that adds no maturity. */
export interface RecordGap {
  /** "late-start": first reading over 2 h after cast; "gap": two readings over 2 h apart;
   *  "silent": no reading for over 2 h up to now; "no-readings": none since cast. */
  kind: "late-start" | "gap" | "silent" | "no-readings";
  fromMs: number;
  toMs: number;
}

/**
 * What is missing from one sensor's record between cast and `asOfMs`: every stretch over 2 h with
 * no reading (Plinth contract: such a gap adds nothing and makes the record incomplete). Readings
 * before cast and after `asOfMs` are not used; input order does not matter. Times epoch ms.
 */
export function recordGaps(
  readingTimesMs: readonly number[],
  castAtMs: number,
  asOfMs: number,
): RecordGap[] {
  const ts = [...new Set(readingTimesMs)]
    .filter((t) => t >= castAtMs && t <= asOfMs)
    .sort((a, b) => a - b);
  const long = (fromMs: number, toMs: number) => isGap((toMs - fromMs) / MS_PER_H);
  const first = ts[0];
  const last = ts[ts.length - 1];
  if (first === undefined || last === undefined) {
    return long(castAtMs, asOfMs) ? [{ kind: "no-readings", fromMs: castAtMs, toMs: asOfMs }] : [];
  }
  const out: RecordGap[] = [];
  if (long(castAtMs, first)) out.push({ kind: "late-start", fromMs: castAtMs, toMs: first });
  for (let i = 1; i < ts.length; i++) {
    const a = ts[i - 1]!;
    const b = ts[i]!;
    if (long(a, b)) out.push({ kind: "gap", fromMs: a, toMs: b });
  }
  if (long(last, asOfMs)) out.push({ kind: "silent", fromMs: last, toMs: asOfMs });
  return out;
}

/** Where a pour stands for the next step on the floor. */
export interface ReadyFacts {
  status: PourStatus;
  /** The pour's releases so far, with when they were made (epoch ms). */
  releases: readonly { kind: ReleaseKind; atMs: number }[];
  calibrated: boolean;
  /** True when at least one sensor is on the pour. */
  hasSensors: boolean;
  strip: { reachedAtMs: number | null; forecastAtMs: number | null };
  ship: { reachedAtMs: number | null; forecastAtMs: number | null };
}

export type ReadyList = "ready_to_strip" | "ready_to_ship" | "coming_up" | "cannot_estimate";

export type ReadyPlace =
  | {
      list: "ready_to_strip" | "ready_to_ship";
      next: ReleaseKind;
      /** When it became ready: reached the strength, or was released on an override. */
      sinceMs: number | null;
      /** The release of `next`, once QC has signed it off (ready to ship only). */
      releasedAtMs: number | null;
    }
  | { list: "coming_up"; next: ReleaseKind; dueAtMs: number | null }
  | { list: "cannot_estimate"; next: ReleaseKind; reason: string }
  | { list: null };

/**
 * Which list of the floor's ready view a pour belongs on. The next step is the strip until a strip
 * release exists (or the pour is past curing), then the ship. A pour signed off to ship stays
 * "ready to ship" until it ships. Shipped and void pours are on no list.
 */
export function placeOnReadyList(f: ReadyFacts): ReadyPlace {
  if (f.status === "shipped" || f.status === "void") return { list: null };
  const releaseOf = (k: ReleaseKind) => f.releases.find((r) => r.kind === k);
  const stripDone = releaseOf("strip") !== undefined || f.status !== "curing";
  const next: ReleaseKind = stripDone ? "ship" : "strip";
  const shipRelease = releaseOf("ship");
  if (next === "ship" && (shipRelease || f.status === "ready_to_ship")) {
    const reached = f.ship.reachedAtMs;
    const at = shipRelease?.atMs ?? null;
    const since = reached === null ? at : at === null ? reached : Math.min(reached, at);
    return { list: "ready_to_ship", next, sinceMs: since, releasedAtMs: at };
  }
  if (!f.calibrated)
    return { list: "cannot_estimate", next, reason: "Cannot estimate: mix not calibrated" };
  if (!f.hasSensors)
    return { list: "cannot_estimate", next, reason: "Cannot estimate: no sensor on the pour" };
  const m = f[next];
  if (m.reachedAtMs !== null) {
    return {
      list: next === "strip" ? "ready_to_strip" : "ready_to_ship",
      next,
      sinceMs: m.reachedAtMs,
      releasedAtMs: null,
    };
  }
  return { list: "coming_up", next, dueAtMs: m.forecastAtMs };
}

/**
 * Soonest first: on the ready lists, the pour ready longest comes first; coming up, the earliest
 * forecast first, and a pour with no forecast last. Ties keep their order (sort is stable).
 */
export function compareReadyTimes(a: number | null, b: number | null): number {
  if (a === null && b === null) return 0;
  if (a === null) return 1;
  if (b === null) return -1;
  return a - b;
}
