/**
 * Keeps every open pour's maturity current as readings arrive. Each sensor's assignment to
 * a pour holds a running state (temperature-time factor, equivalent age, completeness) that
 * one new reading advances in constant time; a late or out-of-order reading, a pour recorded
 * after the fact, or a change of the mix's datum or activation energy rebuilds that state
 * from the stored readings. States are cached in memory and written to pour_sensor_maturity.
 */
import {
  advanceMaturity,
  maturityFromHistory,
  type MaturityParams,
  type MaturityState,
} from "@/domain/maturity/accumulator";
import {
  clearMaturityStates,
  lateReadingSince,
  listOpenAssignments,
  listPourAssignments,
  loadMaturityStates,
  readingsForAssignment,
  saveMaturityStates,
  type MaturityAssignment,
} from "../db/queries/maturity";
import { log } from "../log";

interface Cache {
  bySensor: Map<string, MaturityAssignment[]> | null;
  states: Map<number, MaturityState>;
}

const KEY = Symbol.for("plinth.maturity");
const g = globalThis as unknown as { [KEY]?: Cache };
const cache = (): Cache => (g[KEY] ??= { bySensor: null, states: new Map() });

const paramsOf = (a: MaturityAssignment): MaturityParams => ({
  datumC: a.datumC,
  activationEnergyJMol: a.activationEnergyJMol,
});

function assignmentsBySensor(): Map<string, MaturityAssignment[]> {
  const c = cache();
  if (!c.bySensor) {
    c.bySensor = new Map();
    for (const a of listOpenAssignments())
      c.bySensor.set(a.sensorId, [...(c.bySensor.get(a.sensorId) ?? []), a]);
  }
  return c.bySensor;
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
  c.states.set(a.id, state);
  return { state, rebuilt: !usable };
}

/**
 * Folds newly committed readings into the maturity of every open pour their sensors are on.
 * Returns the ids of the pours whose maturity moved.
 */
export function advanceOpenPours(
  readings: readonly { sensorId: string; tsMs: number; tempC: number }[],
  nowMs = Date.now(),
): number[] {
  const bySensor = assignmentsBySensor();
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
      const step = advanceMaturity(prev, { tsMs: r.tsMs, tempC: r.tempC }, paramsOf(a));
      // A late reading is already committed, so the rebuilt state includes it.
      const next = step.needsRecompute ? recomputeAssignment(a) : step.state;
      if (next === prev && !from.rebuilt) continue;
      cache().states.set(a.id, next);
      touched.set(a.id, { a, state: next });
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
  for (const { a, state } of out) cache().states.set(a.id, state);
  if (rebuilt || advanced) log.info("maturity reconciled", { rebuilt, advanced });
  return { advanced, rebuilt };
}

/** Call after pours, assignments or mix parameters change: the next reading re-reads them. */
export function forgetAssignments(pourId?: number): void {
  const c = cache();
  c.bySensor = null;
  if (pourId === undefined) c.states.clear();
  else {
    for (const a of listOpenAssignments()) if (a.pourId === pourId) c.states.delete(a.id);
  }
}

/**
 * The current maturity of each of a pour's assignments. An open pour's states come from the
 * running cache (rebuilt when missing); a closed pour's from its stored readings.
 */
export function pourMaturity(pourId: number): { a: MaturityAssignment; state: MaturityState }[] {
  const open = [...assignmentsBySensor().values()].flat().filter((a) => a.pourId === pourId);
  if (open.length > 0) return open.map((a) => ({ a, state: stateOf(a).state }));
  return listPourAssignments(pourId).map((a) => ({ a, state: recomputeAssignment(a) }));
}

/** Forgets every state, cached and stored, so each is rebuilt from the readings on next use. */
export function dropMaturityStates(): void {
  forgetAssignments();
  clearMaturityStates();
}

/** Rebuilds every assignment of one pour now (a pour recorded after the fact, or edited). */
export function rebuildPour(pourId: number, nowMs = Date.now()): void {
  forgetAssignments(pourId);
  const items = listOpenAssignments()
    .filter((a) => a.pourId === pourId)
    .map((a) => ({ a, state: recomputeAssignment(a) }));
  saveMaturityStates(items, nowMs);
  for (const { a, state } of items) cache().states.set(a.id, state);
}
