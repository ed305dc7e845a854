/**
 * Incremental maturity of one sensor in one pour: the temperature-time factor and the equivalent
 * age advance as each reading arrives, without re-reading the history.
 *
 * Policies (the Plinth contract, GET /api/v1/pours/{id}/strength, plus the choices below):
 * - Cast time: readings before `castAtMs` are ignored. The first reading at or after cast starts
 *   the record; the time from cast to that reading adds nothing (the estimate errs low). If that
 *   first reading is more than 2 h after cast, the record is incomplete.
 * - Intervals: each interval between consecutive readings adds per `nurseSaulStep` and
 *   `equivalentAgeStep` (trapezoid mean; below datum adds nothing to the temperature-time factor).
 * - Gaps: an interval longer than 2 h adds nothing to either sum and makes the record incomplete.
 * - Duplicates: a reading at the timestamp of the last one is ignored; the first value stands.
 * - Late readings: a reading older than the last one cannot be folded in without changing earlier
 *   intervals, so `advanceMaturity` answers `{ needsRecompute: true }` with the state unchanged,
 *   and the caller recomputes with `maturityFromHistory` over the stored history (which then
 *   includes the late reading). Both paths give the same state for the same set of readings.
 */
import { equivalentAgeStep, type ArrheniusParams } from "./arrhenius";
import { nurseSaulStep } from "./nurseSaul";
import { assertReading, isGap, MS_PER_H, normalizeReadings, type Reading } from "./readings";

/** What maturity needs to know about the pour's mix. Temperatures °C, energy J/mol. */
export interface MaturityParams extends ArrheniusParams {
  datumC: number;
}

/** The running maturity of one sensor in one pour. Times are epoch ms. */
export interface MaturityState {
  castAtMs: number;
  /** The reading that started the record (first at or after cast), or null before it. */
  firstTsMs: number | null;
  lastTsMs: number | null;
  lastTempC: number | null;
  /** Nurse-Saul temperature-time factor since the first reading, °C·h. */
  ttfCH: number;
  /** Equivalent age at the reference temperature since the first reading, hours. */
  equivalentAgeH: number;
  /** False once a gap over 2 h was met, or the record started over 2 h after cast; false before any reading. */
  complete: boolean;
  /** Readings folded in. */
  readingCount: number;
}

/** What {@link advanceMaturity} did with a reading. */
export type AdvanceResult =
  | { needsRecompute: false; state: MaturityState; ignored: "before-cast" | "duplicate" | null }
  | { needsRecompute: true; state: MaturityState };

/** The state of a pour cast at `castAtMs` before any reading: zero maturity, not yet complete. */
export function initialMaturity(castAtMs: number): MaturityState {
  return {
    castAtMs,
    firstTsMs: null,
    lastTsMs: null,
    lastTempC: null,
    ttfCH: 0,
    equivalentAgeH: 0,
    complete: false,
    readingCount: 0,
  };
}

/**
 * Folds one reading into the state; pure (the input state is not changed). See the module comment
 * for the cast-time, gap, duplicate and late-reading policies. Invariant: `ttfCH` and
 * `equivalentAgeH` never fall. Units: °C, °C·h, hours, epoch ms.
 *
 * Source: ASTM C1074 Eq. 1 and Eq. 2, with the Plinth contract's interval and gap policy. Throws a
 * RangeError on a non-finite reading.
 */
export function advanceMaturity(
  state: MaturityState,
  reading: Reading,
  params: MaturityParams,
): AdvanceResult {
  assertReading(reading);
  const { tsMs, tempC } = reading;
  if (tsMs < state.castAtMs) return { needsRecompute: false, state, ignored: "before-cast" };
  if (state.lastTsMs === null || state.lastTempC === null) {
    const state1: MaturityState = {
      ...state,
      firstTsMs: tsMs,
      lastTsMs: tsMs,
      lastTempC: tempC,
      complete: !isGap((tsMs - state.castAtMs) / MS_PER_H),
      readingCount: 1,
    };
    return { needsRecompute: false, state: state1, ignored: null };
  }
  if (tsMs === state.lastTsMs) return { needsRecompute: false, state, ignored: "duplicate" };
  if (tsMs < state.lastTsMs) return { needsRecompute: true, state };
  const hours = (tsMs - state.lastTsMs) / MS_PER_H;
  const next: MaturityState = {
    ...state,
    lastTsMs: tsMs,
    lastTempC: tempC,
    ttfCH: nurseSaulStep(state.ttfCH, state.lastTempC, tempC, hours, params.datumC),
    equivalentAgeH: equivalentAgeStep(state.equivalentAgeH, state.lastTempC, tempC, hours, params),
    complete: state.complete && !isGap(hours),
    readingCount: state.readingCount + 1,
  };
  return { needsRecompute: false, state: next, ignored: null };
}

/**
 * The maturity of a whole stored history, in any order and with duplicates (first stands): the
 * recompute path after a late reading. Equal to feeding the readings one by one in time order to
 * {@link advanceMaturity}. Pure; the input array is not changed.
 */
export function maturityFromHistory(
  readings: readonly Reading[],
  castAtMs: number,
  params: MaturityParams,
): MaturityState {
  let state = initialMaturity(castAtMs);
  for (const reading of normalizeReadings(readings))
    state = advanceMaturity(state, reading, params).state;
  return state;
}

/**
 * Whether the record is complete up to `asOfMs`: complete so far, and the last reading no more
 * than 2 h before `asOfMs` (a silent sensor is an open gap; contract gap rule). False with no reading.
 */
export function recordCompleteAsOf(state: MaturityState, asOfMs: number): boolean {
  return state.complete && state.lastTsMs !== null && !isGap((asOfMs - state.lastTsMs) / MS_PER_H);
}
