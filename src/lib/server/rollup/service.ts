/**
 * The background roll-up: once soon after start and then every minute, each sensor's closed
 * 15-minute buckets from its rollup mark on are rolled up (queries/rollup.ts), a bounded step
 * per transaction with a turn of the event loop between steps, so ingest and pages never wait
 * long behind it. Started by services.ts; it stops by itself once the database it started on
 * is closed (stopServices), and never opens another. A chart query also rolls its own sensor
 * up when far behind (queries/sensors.ts), so this pass only keeps that rare. Each pass also
 * reads every sensor's recent chart rows (warmSensor), which keeps them in SQLite's page cache
 * (SQLITE_CACHE_MIB): a chart then does not wait on the disk, whatever the OS has evicted.
 */
import type Database from "better-sqlite3";
import { getSqlite } from "../db/client";
import { listSensorIds, rollUpBehindMs, rollUpStep, warmSensor } from "../db/queries/rollup";
import { log } from "../log";

/** How often the pass runs. A 15-minute bucket closes every 15 minutes. */
export const ROLLUP_INTERVAL_MS = 60_000;

interface RollupState {
  db: Database.Database;
  timer: NodeJS.Timeout;
  running: boolean;
  stopped: boolean;
}

const KEY = Symbol.for("plinth.rollup.service");
const g = globalThis as unknown as { [KEY]?: RollupState };

const live = (state: RollupState) => !state.stopped && state.db.open;
const nextTurn = () => new Promise<void>((resolve) => setImmediate(resolve));

/** One pass over every sensor; returns the buckets rewritten. */
async function pass(state: RollupState): Promise<number> {
  if (state.running || !live(state)) return 0;
  state.running = true;
  let written = 0;
  let warmed = 0;
  const started = Date.now();
  try {
    for (const sensorId of listSensorIds(state.db)) {
      while (live(state) && rollUpBehindMs(sensorId, Date.now(), state.db) > 0) {
        const step = rollUpStep(sensorId, Date.now(), state.db);
        if (step === null) break;
        written += step;
        await nextTurn();
      }
      if (!live(state)) break;
      warmed += warmSensor(sensorId, state.db);
      await nextTurn();
    }
    log.debug("readings rolled up", { buckets: written, warmed, ms: Date.now() - started });
  } catch (err) {
    // A failed step rolled back whole; the marks still say what is complete. Next pass retries.
    if (live(state)) log.error("readings roll-up failed; the next pass retries", { err });
  } finally {
    state.running = false;
  }
  if (!state.db.open) stopReadingsRollup();
  return written;
}

/** Starts the background roll-up on the process's database (once; again after a stop). */
export function startReadingsRollup(intervalMs: number = ROLLUP_INTERVAL_MS): void {
  const current = g[KEY];
  if (current && live(current)) return;
  const db = getSqlite();
  const state: RollupState = {
    db,
    timer: setInterval(() => void pass(state), intervalMs),
    running: false,
    stopped: false,
  };
  state.timer.unref();
  g[KEY] = state;
  setImmediate(() => void pass(state));
}

/** Stops the background roll-up; a pass under way ends after its current step. */
export function stopReadingsRollup(): void {
  const state = g[KEY];
  if (!state) return;
  state.stopped = true;
  clearInterval(state.timer);
}

/** Runs a pass now and resolves with the buckets rewritten (0 when one is already running). */
export function rollUpNow(): Promise<number> {
  const state = g[KEY];
  return state ? pass(state) : Promise.resolve(0);
}
