/**
 * Keeps every open pour's maturity current as readings arrive. Each sensor's assignment to
 * a pour holds a running state (temperature-time factor, equivalent age, completeness) that
 * one new reading advances in constant time; a late or out-of-order reading, a pour recorded
 * after the fact, or a change of the mix's datum or activation energy rebuilds that state
 * from the stored readings. States are cached in memory and written to pour_sensor_maturity.
 *
 * Beside each cached state the cache keeps what the strength view would otherwise read back
 * from the whole history on every refresh: when the state crossed each strip or ship target
 * (it cannot move while readings only append), and the readings of the last hours for the
 * forecast's mean temperature (appended as readings arrive). Both are dropped with the state
 * whenever it is rebuilt or forgotten, and read again from the stored readings when next asked.
 */
import {
  advanceMaturity,
  maturityFromHistory,
  type MaturityParams,
  type MaturityState,
} from "@/domain/maturity/accumulator";
import { ttfReachedAt } from "@/domain/maturity/crossing";
import { MS_PER_H, type Reading } from "@/domain/maturity/readings";
import { FORECAST_WINDOW_H } from "@/domain/strength/curves";
import {
  clearMaturityStates,
  lateReadingSince,
  listOpenAssignments,
  listOpenPourAssignments,
  listPourAssignments,
  loadMaturityStates,
  readingsForAssignment,
  saveMaturityStates,
  type MaturityAssignment,
} from "../db/queries/maturity";
import { log } from "../log";

/** How far back the cache keeps an assignment's recent readings: the forecast window and 2 h. */
export const RECENT_WINDOW_MS = (FORECAST_WINDOW_H + 2) * MS_PER_H;

/** The open assignments, by sensor (for incoming readings) and by pour (for the views). */
interface OpenIndex {
  bySensor: Map<string, MaturityAssignment[]>;
  byPour: Map<number, MaturityAssignment[]>;
}

/**
 * What follows from an assignment's readings as long as its state only advances: the time each
 * target factor (°C·h) was reached, and every reading after `afterMs` (when loaded).
 */
interface Derived {
  crossings: Map<number, number>;
  recent: { afterMs: number; readings: Reading[] } | null;
}

interface Cache {
  open: OpenIndex | null;
  states: Map<number, MaturityState>;
  derived: Map<number, Derived>;
}

// Named anew with the cache's shape, so a dev server's hot reload never meets the old one.
const KEY = Symbol.for("plinth.maturity.running");
const g = globalThis as unknown as { [KEY]?: Cache };
const cache = (): Cache => (g[KEY] ??= { open: null, states: new Map(), derived: new Map() });

const paramsOf = (a: MaturityAssignment): MaturityParams => ({
  datumC: a.datumC,
  activationEnergyJMol: a.activationEnergyJMol,
});

function addToIndex(index: OpenIndex, a: MaturityAssignment): void {
  index.bySensor.set(a.sensorId, [...(index.bySensor.get(a.sensorId) ?? []), a]);
  index.byPour.set(a.pourId, [...(index.byPour.get(a.pourId) ?? []), a]);
}

function openIndex(): OpenIndex {
  const c = cache();
  if (!c.open) {
    const index: OpenIndex = { bySensor: new Map(), byPour: new Map() };
    for (const a of listOpenAssignments()) addToIndex(index, a);
    c.open = index;
  }
  return c.open;
}

/** Sets an assignment's state as rebuilt or loaded: what was derived from the old one goes. */
function setState(id: number, state: MaturityState): void {
  const c = cache();
  c.states.set(id, state);
  c.derived.delete(id);
}

/** Forgets one assignment's state and what was derived from it. */
function dropState(id: number): void {
  const c = cache();
  c.states.delete(id);
  c.derived.delete(id);
}

/** Rebuilds one assignment's state from the stored readings. */
export function recomputeAssignment(a: MaturityAssignment): MaturityState {
  return maturityFromHistory(readingsForAssignment(a), a.castAtMs, paramsOf(a));
}

/** The assignment's state from the cache, the table, or (when neither fits) the readings. */
function stateOf(a: MaturityAssignment): { state: MaturityState; rebuilt: boolean } {
  const c = cache();
  const cached = c.states.get(a.id);
  if (cached) return { state: cached, rebuilt: false };
  const stored = loadMaturityStates([a.id]).get(a.id);
  const usable =
    stored &&
    stored.datumC === a.datumC &&
    stored.activationEnergyJMol === a.activationEnergyJMol &&
    stored.castAtMs === a.castAtMs;
  const state = usable ? stored : recomputeAssignment(a);
  setState(a.id, state);
  return { state, rebuilt: !usable };
}

/** Keeps a reading just folded into the state among the assignment's recent ones, if kept. */
function rememberReading(id: number, reading: Reading): void {
  const recent = cache().derived.get(id)?.recent;
  if (!recent) return;
  recent.readings.push(reading);
  // Older readings are let go an hour at a time, not one by one as each new one comes.
  const afterMs = reading.tsMs - RECENT_WINDOW_MS;
  if (recent.readings[0]!.tsMs > afterMs - MS_PER_H) return;
  recent.readings = recent.readings.filter((r) => r.tsMs > afterMs);
  recent.afterMs = Math.max(recent.afterMs, afterMs);
}

/**
 * Folds newly committed readings into the maturity of every open pour their sensors are on.
 * Returns the ids of the pours whose maturity moved.
 */
export function advanceOpenPours(
  readings: readonly { sensorId: string; tsMs: number; tempC: number }[],
  nowMs = Date.now(),
): number[] {
  const bySensor = openIndex().bySensor;
  const touched = new Map<number, { a: MaturityAssignment; state: MaturityState }>();
  const sorted = [...readings].sort((x, y) => x.tsMs - y.tsMs);
  for (const r of sorted) {
    const list = bySensor.get(r.sensorId);
    if (!list) continue;
    for (const a of list) {
      if (r.tsMs < a.fromMs || (a.toMs !== null && r.tsMs > a.toMs)) continue;
      const known = touched.get(a.id);
      const from = known ? { state: known.state, rebuilt: false } : stateOf(a);
      const prev = from.state;
      const reading = { tsMs: r.tsMs, tempC: r.tempC };
      const step = advanceMaturity(prev, reading, paramsOf(a));
      if (step.needsRecompute) {
        // A late reading is already committed, so the rebuilt state includes it.
        setState(a.id, recomputeAssignment(a));
      } else {
        if (step.state === prev && !from.rebuilt) continue;
        cache().states.set(a.id, step.state);
        if (step.ignored === null) rememberReading(a.id, reading);
      }
      touched.set(a.id, { a, state: cache().states.get(a.id)! });
    }
  }
  saveMaturityStates([...touched.values()], nowMs);
  return [...new Set([...touched.values()].map((t) => t.a.pourId))];
}

/**
 * Brings stored states up to date at start: readings that arrived while the process was
 * down (or between a commit and its state update) are folded in; a late one rebuilds.
 */
export function reconcileMaturity(nowMs = Date.now()): { advanced: number; rebuilt: number } {
  forgetAssignments();
  const all = listOpenAssignments();
  const stored = loadMaturityStates(all.map((a) => a.id));
  let advanced = 0;
  let rebuilt = 0;
  const out: { a: MaturityAssignment; state: MaturityState }[] = [];
  for (const a of all) {
    const s = stored.get(a.id);
    const sameParams =
      s &&
      s.datumC === a.datumC &&
      s.activationEnergyJMol === a.activationEnergyJMol &&
      s.castAtMs === a.castAtMs;
    if (
      !s ||
      !sameParams ||
      (s.lastTsMs !== null && lateReadingSince(a, s.lastTsMs, s.updatedAtMs))
    ) {
      out.push({ a, state: recomputeAssignment(a) });
      rebuilt++;
      continue;
    }
    let state: MaturityState = s;
    for (const r of readingsForAssignment(a, s.lastTsMs ?? undefined)) {
      const step = advanceMaturity(state, r, paramsOf(a));
      state = step.needsRecompute ? recomputeAssignment(a) : step.state;
    }
    if (state !== s) {
      out.push({ a, state });
      advanced++;
    }
  }
  saveMaturityStates(out, nowMs);
  for (const { a, state } of out) setState(a.id, state);
  if (rebuilt || advanced) log.info("maturity reconciled", { rebuilt, advanced });
  return { advanced, rebuilt };
}

/** Call after pours, assignments or mix parameters change: the next reading re-reads them. */
export function forgetAssignments(pourId?: number): void {
  const c = cache();
  if (pourId === undefined) {
    c.states.clear();
    c.derived.clear();
  } else {
    for (const a of c.open?.byPour.get(pourId) ?? []) dropState(a.id);
    for (const a of listPourAssignments(pourId)) dropState(a.id);
  }
  c.open = null;
}

/**
 * The current maturity of each of a pour's assignments. An open pour's states come from the
 * running cache (rebuilt when missing); a closed pour's from its stored readings.
 */
export function pourMaturity(pourId: number): { a: MaturityAssignment; state: MaturityState }[] {
  const open = openIndex().byPour.get(pourId) ?? [];
  if (open.length > 0) return open.map((a) => ({ a, state: stateOf(a).state }));
  return listPourAssignments(pourId).map((a) => ({ a, state: recomputeAssignment(a) }));
}

/** The cached facts of an open assignment whose state is cached, or null. */
function derivedOf(a: MaturityAssignment): Derived | null {
  const c = cache();
  if (!c.states.has(a.id)) return null;
  let d = c.derived.get(a.id);
  if (!d) {
    d = { crossings: new Map(), recent: null };
    c.derived.set(a.id, d);
  }
  return d;
}

/**
 * When the assignment's temperature-time factor reached `targetTtfCH` (°C·h), epoch ms, or null
 * if it has not: found in the stored readings once, then kept while the state only advances.
 */
export function ttfReachedAtFor(a: MaturityAssignment, targetTtfCH: number): number | null {
  const d = derivedOf(a);
  const known = d?.crossings.get(targetTtfCH);
  if (known !== undefined) return known;
  const at = ttfReachedAt(readingsForAssignment(a), a.castAtMs, paramsOf(a), targetTtfCH);
  if (d && at !== null) d.crossings.set(targetTtfCH, at);
  return at;
}

/**
 * The assignment's readings after `afterMs`, oldest first: as readingsForAssignment(a, afterMs)
 * reads them, served from the cache for an open assignment once loaded (afterMs at most
 * {@link RECENT_WINDOW_MS} before its newest reading).
 */
export function recentReadingsFor(a: MaturityAssignment, afterMs: number): Reading[] {
  const d = derivedOf(a);
  if (d?.recent && afterMs >= d.recent.afterMs) {
    const kept = d.recent.readings;
    let lo = 0;
    let hi = kept.length;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (kept[mid]!.tsMs > afterMs) hi = mid;
      else lo = mid + 1;
    }
    return kept.slice(lo);
  }
  const readings = readingsForAssignment(a, afterMs);
  const lastTsMs = cache().states.get(a.id)?.lastTsMs ?? null;
  // Kept only when it reaches the state's newest reading (then every later one is appended).
  if (d && (readings.at(-1)?.tsMs ?? null) === lastTsMs && lastTsMs !== null)
    d.recent = { afterMs, readings };
  return readings;
}

/** Forgets every state, cached and stored, so each is rebuilt from the readings on next use. */
export function dropMaturityStates(): void {
  forgetAssignments();
  clearMaturityStates();
}

/**
 * Rebuilds every assignment of one pour now (a pour recorded after the fact, or edited), and
 * re-reads that pour's open assignments. A sensor moved from another pour leaves that pour's
 * assignments changed too: callers rebuild it as well.
 */
export function rebuildPour(pourId: number, nowMs = Date.now()): void {
  const c = cache();
  const fresh = listOpenPourAssignments(pourId);
  for (const a of c.open?.byPour.get(pourId) ?? []) dropState(a.id);
  for (const a of fresh) dropState(a.id);
  if (c.open) {
    for (const a of c.open.byPour.get(pourId) ?? []) {
      const others = (c.open.bySensor.get(a.sensorId) ?? []).filter((x) => x.pourId !== pourId);
      if (others.length > 0) c.open.bySensor.set(a.sensorId, others);
      else c.open.bySensor.delete(a.sensorId);
    }
    c.open.byPour.delete(pourId);
    for (const a of fresh) addToIndex(c.open, a);
  }
  const items = fresh.map((a) => ({ a, state: recomputeAssignment(a) }));
  saveMaturityStates(items, nowMs);
  for (const { a, state } of items) setState(a.id, state);
}
