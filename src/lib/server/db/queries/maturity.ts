import { and, eq, inArray } from "drizzle-orm";
import type { MaturityState } from "@/domain/maturity/accumulator";
import { getDb, getSqlite } from "../client";
import { mixes, pourSensorMaturity, pourSensors, pours } from "../schema";

/** Pour statuses whose sensors still add maturity. */
export const OPEN_POUR_STATUSES = ["curing", "stripped", "ready_to_ship"] as const;

/** One sensor's assignment to an open pour, with what maturity needs of the pour and mix. */
export interface MaturityAssignment {
  id: number;
  pourId: number;
  sensorId: string;
  /** Readings count from max(cast, assignment start) to the assignment's end (null: open). */
  fromMs: number;
  toMs: number | null;
  castAtMs: number;
  datumC: number;
  activationEnergyJMol: number;
}

const assignmentColumns = {
  id: pourSensors.id,
  pourId: pourSensors.pourId,
  sensorId: pourSensors.sensorId,
  fromAt: pourSensors.fromAt,
  toAt: pourSensors.toAt,
  castAt: pours.castAt,
  datumC: mixes.datumTempC,
  activationEnergyJMol: mixes.activationEnergyJMol,
};

type AssignmentRow = {
  id: number;
  pourId: number;
  sensorId: string;
  fromAt: number;
  toAt: number | null;
  castAt: number;
  datumC: number;
  activationEnergyJMol: number;
};

const toAssignment = (r: AssignmentRow): MaturityAssignment => ({
  id: r.id,
  pourId: r.pourId,
  sensorId: r.sensorId,
  fromMs: Math.max(r.castAt, r.fromAt),
  toMs: r.toAt,
  castAtMs: r.castAt,
  datumC: r.datumC,
  activationEnergyJMol: r.activationEnergyJMol,
});

/** Every assignment of every open pour. */
export function listOpenAssignments(): MaturityAssignment[] {
  return getDb()
    .select(assignmentColumns)
    .from(pourSensors)
    .innerJoin(pours, eq(pours.id, pourSensors.pourId))
    .innerJoin(mixes, eq(mixes.id, pours.mixId))
    .where(inArray(pours.status, [...OPEN_POUR_STATUSES]))
    .all()
    .map(toAssignment);
}

/** The assignments of one pour while it is open (none once it is shipped or void). */
export function listOpenPourAssignments(pourId: number): MaturityAssignment[] {
  return getDb()
    .select(assignmentColumns)
    .from(pourSensors)
    .innerJoin(pours, eq(pours.id, pourSensors.pourId))
    .innerJoin(mixes, eq(mixes.id, pours.mixId))
    .where(and(eq(pourSensors.pourId, pourId), inArray(pours.status, [...OPEN_POUR_STATUSES])))
    .all()
    .map(toAssignment);
}

/** The assignments of one pour (open or not). */
export function listPourAssignments(pourId: number): MaturityAssignment[] {
  return getDb()
    .select(assignmentColumns)
    .from(pourSensors)
    .innerJoin(pours, eq(pours.id, pourSensors.pourId))
    .innerJoin(mixes, eq(mixes.id, pours.mixId))
    .where(eq(pourSensors.pourId, pourId))
    .all()
    .map(toAssignment);
}

export interface StoredMaturity extends MaturityState {
  assignmentId: number;
  datumC: number;
  activationEnergyJMol: number;
  updatedAtMs: number;
}

export function loadMaturityStates(assignmentIds: readonly number[]): Map<number, StoredMaturity> {
  const out = new Map<number, StoredMaturity>();
  if (assignmentIds.length === 0) return out;
  const rows = getDb()
    .select({ m: pourSensorMaturity, castAt: pours.castAt })
    .from(pourSensorMaturity)
    .innerJoin(pours, eq(pours.id, pourSensorMaturity.pourId))
    .where(inArray(pourSensorMaturity.assignmentId, [...assignmentIds]))
    .all();
  for (const { m, castAt } of rows) {
    out.set(m.assignmentId, {
      assignmentId: m.assignmentId,
      castAtMs: castAt,
      firstTsMs: m.firstTs,
      lastTsMs: m.lastTs,
      lastTempC: m.lastTempC,
      ttfCH: m.ttfCH,
      equivalentAgeH: m.equivalentAgeH,
      complete: m.complete,
      readingCount: m.readingCount,
      datumC: m.datumTempC,
      activationEnergyJMol: m.activationEnergyJMol,
      updatedAtMs: m.updatedAt,
    });
  }
  return out;
}

/** Writes states (insert or replace) in one transaction. */
export function saveMaturityStates(
  items: readonly { a: MaturityAssignment; state: MaturityState }[],
  nowMs = Date.now(),
): void {
  if (items.length === 0) return;
  const sqlite = getSqlite();
  const stmt = sqlite.prepare(
    `insert into pour_sensor_maturity (assignment_id, pour_id, sensor_id, datum_temp_c, activation_energy_j_mol,
       first_ts, last_ts, last_temp_c, ttf_c_h, equivalent_age_h, complete, reading_count, updated_at)
     values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)
     on conflict (assignment_id) do update set datum_temp_c = excluded.datum_temp_c,
       activation_energy_j_mol = excluded.activation_energy_j_mol, first_ts = excluded.first_ts,
       last_ts = excluded.last_ts, last_temp_c = excluded.last_temp_c, ttf_c_h = excluded.ttf_c_h,
       equivalent_age_h = excluded.equivalent_age_h, complete = excluded.complete,
       reading_count = excluded.reading_count, updated_at = excluded.updated_at`,
  );
  sqlite.transaction(() => {
    for (const { a, state: s } of items) {
      stmt.run(
        a.id,
        a.pourId,
        a.sensorId,
        a.datumC,
        a.activationEnergyJMol,
        s.firstTsMs,
        s.lastTsMs,
        s.lastTempC,
        s.ttfCH,
        s.equivalentAgeH,
        s.complete ? 1 : 0,
        s.readingCount,
        nowMs,
      );
    }
  })();
}

/** A sensor's readings inside an assignment's window (and after `afterMs`, when given), oldest first. */
export function readingsForAssignment(
  a: MaturityAssignment,
  afterMs?: number,
): { tsMs: number; tempC: number }[] {
  const from = afterMs === undefined ? a.fromMs : Math.max(a.fromMs, afterMs + 1);
  const to = a.toMs ?? Number.MAX_SAFE_INTEGER;
  return getSqlite()
    .prepare<[string, number, number], [number, number]>(
      "select ts, temp_c from readings where sensor_id = ? and ts between ? and ? order by ts",
    )
    .raw()
    .all(a.sensorId, from, to)
    .map(([tsMs, tempC]) => ({ tsMs, tempC }));
}

/** True when a reading in the window at or before `lastTsMs` was stored after `sinceMs` (a late arrival). */
export function lateReadingSince(
  a: MaturityAssignment,
  lastTsMs: number,
  sinceMs: number,
): boolean {
  return (
    getSqlite()
      .prepare<[string, number, number, number], { n: number }>(
        "select 1 as n from readings where sensor_id = ? and ts between ? and ? and received_at > ? limit 1",
      )
      .get(a.sensorId, a.fromMs, lastTsMs, sinceMs) !== undefined
  );
}

/** Drops every stored state: they are rebuilt from the readings on next use. */
export function clearMaturityStates(): void {
  getDb().delete(pourSensorMaturity).run();
}
