/**
 * A cylinder break held against the in-place estimate of its pour at the moment of the break:
 * the maturity each sensor had reached by then (ASTM C1074 Eq. 1, same interval, clip and gap
 * policy as the running estimate), the governing (lowest) one, the strength the mix's curve
 * gives for it, and whether the break came in low enough to call for a recalibration.
 * Pure; SI units (°C, °C·h, MPa) and epoch ms.
 */
import { maturityFromHistory, type MaturityParams } from "./maturity/accumulator";
import type { Reading } from "./maturity/readings";
import { strengthAt, type StrengthCurve } from "./strength/curves";

/**
 * A break below this share of the estimate warns QC to recalibrate the mix. Plinth's rule (the
 * product owner's): a break that low says the curve over-estimates the in-place strength, which
 * errs on the unsafe side for stripping and shipping. ASTM C1074 §5.3 asks that maturity
 * estimates be supplemented by other evidence of the concrete's potential strength (domain.md
 * §1.1, source 1); the cylinder break is that evidence.
 */
export const RECALIBRATE_BELOW_RATIO = 0.9;

export const RECALIBRATE_WARNING = "below 90 % of the estimate: recalibrate the mix";

/** One sensor's assignment to the pour with its stored readings. */
export interface AssignmentHistory {
  sensorId: string;
  /** Readings count from here (max of cast and the assignment's start), epoch ms. */
  fromMs: number;
  /** The assignment's end (null: still on the pour). */
  toMs: number | null;
  readings: readonly Reading[];
}

export interface EstimateAtTime {
  governingSensor: string;
  ttfCH: number;
  /** The governing sensor's record had no gap over 2 h up to the break (ASTM C1074 gap policy of Plinth). */
  completeRecord: boolean;
  /** From the mix's curve; null when the mix has no curve. */
  estimateMpa: number | null;
}

/**
 * The pour's estimate at `atMs`: for each assignment that had started by then, the maturity of
 * its readings from its start to `atMs` (or its end, if earlier); the governing sensor is the
 * one with the lowest temperature-time factor, preferring those still on the pour at `atMs`
 * (decisions follow the coldest place in the pour). Null when no assignment had started.
 */
export function estimateAtTime(
  assignments: readonly AssignmentHistory[],
  castAtMs: number,
  atMs: number,
  params: MaturityParams,
  curve: StrengthCurve | null,
): EstimateAtTime | null {
  const started = assignments.filter((a) => a.fromMs <= atMs);
  if (started.length === 0) return null;
  const covering = started.filter((a) => a.toMs === null || a.toMs >= atMs);
  const used = covering.length > 0 ? covering : started;
  let best: { sensorId: string; ttfCH: number; complete: boolean } | null = null;
  for (const a of used) {
    const endMs = a.toMs === null ? atMs : Math.min(a.toMs, atMs);
    const window = a.readings.filter((r) => r.tsMs >= a.fromMs && r.tsMs <= endMs);
    const state = maturityFromHistory(window, castAtMs, params);
    if (best === null || state.ttfCH < best.ttfCH)
      best = { sensorId: a.sensorId, ttfCH: state.ttfCH, complete: state.complete };
  }
  if (best === null) return null;
  return {
    governingSensor: best.sensorId,
    ttfCH: best.ttfCH,
    completeRecord: best.complete,
    estimateMpa: curve ? strengthAt(curve, best.ttfCH) : null,
  };
}

export interface BreakComparison {
  /** Break strength over estimate; null without an estimate above zero. */
  ratio: number | null;
  /** The recalibration warning, or null. */
  warning: string | null;
}

/**
 * Compares a break with the estimate: the ratio, and the warning when the break is below
 * {@link RECALIBRATE_BELOW_RATIO} of the estimate (strictly below: exactly 90 % does not warn).
 */
export function compareBreak(strengthMpa: number, estimateMpa: number | null): BreakComparison {
  if (estimateMpa === null || !(estimateMpa > 0)) return { ratio: null, warning: null };
  const ratio = strengthMpa / estimateMpa;
  return {
    ratio,
    warning: strengthMpa < RECALIBRATE_BELOW_RATIO * estimateMpa ? RECALIBRATE_WARNING : null,
  };
}
