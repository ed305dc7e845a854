/**
 * The readings rollup: fixed 15-minute buckets of each sensor's readings with each bucket's
 * extreme readings (table readings_rollup, migration 0005), complete up to each sensor's mark
 * in readings_rollup_marks; and whole hours rolled up from those quarter hours
 * (readings_rollup_hours, migration 0006), complete up to the sensor's hours mark, which never
 * passes the quarter-hour mark. Ingest lowers both marks when a reading lands before them
 * (queries/ingest.ts); rollUpSensor() rolls the closed quarter hours from the mark on, then
 * the hours, and raises the marks. Long chart windows are thinned from here
 * (queries/sensors.ts, src/domain/thinning.ts).
 */
import type Database from "better-sqlite3";
import {
  bucketStart,
  ROLLUP_BUCKET_MS,
  ROLLUP_HOUR_MS,
  rollupBucketStart,
  type RollupExtremes,
} from "@/domain/thinning";
import { getSqlite } from "../client";

/**
 * A bucket is rolled up once it ended this long ago: a reading that comes later still is
 * handled (ingest lowers the mark), only at the cost of rolling that bucket again.
 */
export const ROLLUP_GRACE_MS = 5 * 60_000;

/** The most one roll-up transaction covers, so ingest never waits long behind one. */
export const ROLLUP_STEP_MS = 86_400_000;

/** The end of the buckets closed at `nowMs`: every bucket ending at or before it may be rolled. */
export function closedBefore(nowMs: number): number {
  return rollupBucketStart(nowMs - ROLLUP_GRACE_MS);
}

// The roll-up of one sensor's readings in [from, to) (both on bucket boundaries): the same
// statement as migration 0005's backfill, for one sensor and range. min() and max() give each
// bucket's extreme values; the earliest reading holding each is then looked up on the
// (sensor_id, ts) key, so a tie keeps the same reading as thinSeries does.
const EXTREME_TS = (column: string, value: string) =>
  `(select min(x.ts) from readings x where x.sensor_id = g.sensor_id
      and x.ts >= g.bucket_ms and x.ts < g.bucket_ms + ${ROLLUP_BUCKET_MS} and x.${column} = g.${value})`;
const ROLL_UP_SQL = `
insert into readings_rollup
select g.sensor_id, g.bucket_ms, g.n,
  lt.ts, lt.temp_c, lt.rh_pct, ht.ts, ht.temp_c, ht.rh_pct,
  lh.ts, lh.temp_c, lh.rh_pct, hh.ts, hh.temp_c, hh.rh_pct
from (
  select r.sensor_id,
    r.ts - ((r.ts % ${ROLLUP_BUCKET_MS}) + ${ROLLUP_BUCKET_MS}) % ${ROLLUP_BUCKET_MS} as bucket_ms,
    count(*) as n, min(r.temp_c) as lo_t, max(r.temp_c) as hi_t,
    min(r.rh_pct) as lo_h, max(r.rh_pct) as hi_h
  from readings r
  where r.sensor_id = @sensorId and r.ts >= @fromMs and r.ts < @toMs
  group by r.sensor_id, bucket_ms
) g
join readings lt on lt.sensor_id = g.sensor_id and lt.ts = ${EXTREME_TS("temp_c", "lo_t")}
join readings ht on ht.sensor_id = g.sensor_id and ht.ts = ${EXTREME_TS("temp_c", "hi_t")}
left join readings lh on lh.sensor_id = g.sensor_id and lh.ts = ${EXTREME_TS("rh_pct", "lo_h")}
left join readings hh on hh.sensor_id = g.sensor_id and hh.ts = ${EXTREME_TS("rh_pct", "hi_h")}`;

// An hour from its four quarter hours: min() and max() of their extremes give the hour's, and
// the earliest quarter holding each value holds the hour's earliest reading with it (each
// quarter's extreme is its own earliest), so ties keep the same reading as above.
const EXTREME_QUARTER = (column: string, value: string) =>
  `(select min(x.bucket_ms) from readings_rollup x where x.sensor_id = g.sensor_id
      and x.bucket_ms >= g.hour_ms and x.bucket_ms < g.hour_ms + ${ROLLUP_HOUR_MS}
      and x.${column} = g.${value})`;
const ROLL_UP_HOURS_SQL = `
insert into readings_rollup_hours
select g.sensor_id, g.hour_ms, g.n,
  lt.lo_temp_ts, lt.lo_temp_c, lt.lo_temp_rh_pct, ht.hi_temp_ts, ht.hi_temp_c, ht.hi_temp_rh_pct,
  lh.lo_rh_ts, lh.lo_rh_temp_c, lh.lo_rh_pct, hh.hi_rh_ts, hh.hi_rh_temp_c, hh.hi_rh_pct
from (
  select q.sensor_id,
    q.bucket_ms - ((q.bucket_ms % ${ROLLUP_HOUR_MS}) + ${ROLLUP_HOUR_MS}) % ${ROLLUP_HOUR_MS} as hour_ms,
    sum(q.readings) as n, min(q.lo_temp_c) as lo_t, max(q.hi_temp_c) as hi_t,
    min(q.lo_rh_pct) as lo_h, max(q.hi_rh_pct) as hi_h
  from readings_rollup q
  where q.sensor_id = @sensorId and q.bucket_ms >= @fromMs and q.bucket_ms < @toMs
  group by q.sensor_id, hour_ms
) g
join readings_rollup lt on lt.sensor_id = g.sensor_id and lt.bucket_ms = ${EXTREME_QUARTER("lo_temp_c", "lo_t")}
join readings_rollup ht on ht.sensor_id = g.sensor_id and ht.bucket_ms = ${EXTREME_QUARTER("hi_temp_c", "hi_t")}
left join readings_rollup lh on lh.sensor_id = g.sensor_id and lh.bucket_ms = ${EXTREME_QUARTER("lo_rh_pct", "lo_h")}
left join readings_rollup hh on hh.sensor_id = g.sensor_id and hh.bucket_ms = ${EXTREME_QUARTER("hi_rh_pct", "hi_h")}`;

/** A rollup row (either span): the bucket, its count, then each extreme reading's ts, °C, RH. */
export type RollupRow = [
  bucketMs: number,
  readings: number,
  loTempTs: number,
  loTempC: number,
  loTempRh: number | null,
  hiTempTs: number,
  hiTempC: number,
  hiTempRh: number | null,
  loRhTs: number | null,
  loRhTempC: number | null,
  loRhPct: number | null,
  hiRhTs: number | null,
  hiRhTempC: number | null,
  hiRhPct: number | null,
];
export type RawRow = [tsMs: number, tempC: number, rhPct: number | null];
type Range = { sensorId: string; fromMs: number; toMs: number };

const ROWS_SQL = (table: string) =>
  `select bucket_ms, readings, lo_temp_ts, lo_temp_c, lo_temp_rh_pct,
     hi_temp_ts, hi_temp_c, hi_temp_rh_pct, lo_rh_ts, lo_rh_temp_c, lo_rh_pct,
     hi_rh_ts, hi_rh_temp_c, hi_rh_pct
   from ${table} where sensor_id = ? and bucket_ms >= ? and bucket_ms < ?
   order by bucket_ms`;

function prepare(db: Database.Database) {
  return {
    mark: db
      .prepare<[string], number>("select rolled_ms from readings_rollup_marks where sensor_id = ?")
      .pluck(),
    marks: db
      .prepare<[string], [number, number | null]>(
        "select rolled_ms, hours_rolled_ms from readings_rollup_marks where sensor_id = ?",
      )
      .raw(),
    setHoursMark: db.prepare<[number, string]>(
      "update readings_rollup_marks set hours_rolled_ms = ? where sensor_id = ?",
    ),
    firstQuarterFrom: db
      .prepare<[string, number], number>(
        "select bucket_ms from readings_rollup where sensor_id = ? and bucket_ms >= ? order by bucket_ms limit 1",
      )
      .pluck(),
    clearHours: db.prepare<[string, number, number]>(
      "delete from readings_rollup_hours where sensor_id = ? and bucket_ms >= ? and bucket_ms < ?",
    ),
    rollUpHours: db.prepare<[Range]>(ROLL_UP_HOURS_SQL),
    hourRows: db
      .prepare<[string, number, number], RollupRow>(ROWS_SQL("readings_rollup_hours"))
      .raw(),
    setMark: db.prepare<[string, number]>(
      `insert into readings_rollup_marks (sensor_id, rolled_ms) values (?, ?)
       on conflict (sensor_id) do update set rolled_ms = excluded.rolled_ms`,
    ),
    firstTsFrom: db
      .prepare<[string, number], number>(
        "select ts from readings where sensor_id = ? and ts >= ? order by ts limit 1",
      )
      .pluck(),
    lastTs: db
      .prepare<[string], number>(
        "select ts from readings where sensor_id = ? order by ts desc limit 1",
      )
      .pluck(),
    clear: db.prepare<[string, number, number]>(
      "delete from readings_rollup where sensor_id = ? and bucket_ms >= ? and bucket_ms < ?",
    ),
    rollUp: db.prepare<[Range]>(ROLL_UP_SQL),
    rows: db.prepare<[string, number, number], RollupRow>(ROWS_SQL("readings_rollup")).raw(),
    raw: db
      .prepare<[string, number, number], RawRow>(
        "select ts, temp_c, rh_pct from readings where sensor_id = ? and ts >= ? and ts < ? order by ts",
      )
      .raw(),
    sensors: db.prepare<[], string>("select id from sensors order by id").pluck(),
    // Counting a range walks its pages in SQLite's own code, which leaves them in its cache.
    touchHours: db
      .prepare<[string, number], number>(
        "select count(*) from readings_rollup_hours where sensor_id = ? and bucket_ms >= ?",
      )
      .pluck(),
    touchQuarters: db
      .prepare<[string, number], number>(
        "select count(*) from readings_rollup where sensor_id = ? and bucket_ms >= ?",
      )
      .pluck(),
    touchRaw: db
      .prepare<[string, number], number>(
        "select count(*) from readings where sensor_id = ? and ts >= ?",
      )
      .pluck(),
  };
}

type Statements = ReturnType<typeof prepare>;
const KEY = Symbol.for("plinth.rollup.statements");
const g = globalThis as unknown as { [KEY]?: { db: object; s: Statements } };

function statements(db: Database.Database = getSqlite()): Statements {
  const cached = g[KEY];
  if (cached && cached.db === db) return cached.s;
  const s = prepare(db);
  g[KEY] = { db, s };
  return s;
}

/** How far the sensor's rollup is complete (epoch ms, a bucket boundary); null: not at all. */
export function rolledThrough(sensorId: string, db?: Database.Database): number | null {
  return statements(db).mark.get(sensorId) ?? null;
}

/** How far each span of the sensor's rollup is complete (epoch ms; null: not at all). */
export function rollupMarks(
  sensorId: string,
  db?: Database.Database,
): { quarterMs: number | null; hourMs: number | null } {
  const row = statements(db).marks.get(sensorId);
  return { quarterMs: row?.[0] ?? null, hourMs: row?.[1] ?? null };
}

/**
 * The sensor's rollup rows of `spanMs` (ROLLUP_BUCKET_MS or ROLLUP_HOUR_MS) whose bucket
 * starts in [fromMs, toMs), in time order, as the table's columns (RollupRow). Only rows
 * before that span's mark are complete: the caller keeps to them.
 */
export function rollupRows(
  sensorId: string,
  fromMs: number,
  toMs: number,
  spanMs: number = ROLLUP_BUCKET_MS,
): RollupRow[] {
  if (toMs <= fromMs) return [];
  const s = statements();
  if (spanMs === ROLLUP_HOUR_MS) return s.hourRows.all(sensorId, fromMs, toMs);
  if (spanMs === ROLLUP_BUCKET_MS) return s.rows.all(sensorId, fromMs, toMs);
  throw new Error(`no rollup of ${spanMs} ms buckets`);
}

/** The extreme readings of a rollup row. */
export function rollupExtremes(row: RollupRow): RollupExtremes {
  return {
    loTemp: { tsMs: row[2], tempC: row[3], rhPct: row[4] },
    hiTemp: { tsMs: row[5], tempC: row[6], rhPct: row[7] },
    loRh: row[8] === null ? null : { tsMs: row[8], tempC: row[9]!, rhPct: row[10] },
    hiRh: row[11] === null ? null : { tsMs: row[11], tempC: row[12]!, rhPct: row[13] },
  };
}

/** The sensor's raw readings in [fromMs, toMs), oldest first, as [ts, temp_c, rh_pct]. */
export function rawReadings(sensorId: string, fromMs: number, toMs: number): RawRow[] {
  if (toMs <= fromMs) return [];
  return statements().raw.all(sensorId, fromMs, toMs);
}

/**
 * Where the sensor's roll-up should reach at `nowMs`: the closed buckets before the bucket
 * of its newest reading (more may still come into that one). Null when it has no readings.
 */
function rollUpTarget(s: Statements, sensorId: string, nowMs: number): number | null {
  const lastTs = s.lastTs.get(sensorId);
  if (lastTs === undefined) return null;
  return Math.min(closedBefore(nowMs), rollupBucketStart(lastTs));
}

/** Where the next roll-up of the sensor starts: its mark, or its first reading's bucket. */
function rollUpStart(s: Statements, sensorId: string): number | null {
  const mark = s.mark.get(sensorId);
  if (mark !== undefined) return mark;
  const first = s.firstTsFrom.get(sensorId, Number.MIN_SAFE_INTEGER);
  return first === undefined ? null : rollupBucketStart(first);
}

/**
 * The hours the sensor's hourly rollup still lacks: [start, target), from its hours mark (or
 * its first quarter hour's hour) to the last whole hour of its complete quarter hours. Null
 * when there are no quarter hours to roll up from.
 */
function hoursToRollUp(s: Statements, sensorId: string): { start: number; target: number } | null {
  const row = s.marks.get(sensorId);
  if (row === undefined) return null;
  const [quarterMark, hourMark] = row;
  const target = bucketStart(quarterMark, ROLLUP_HOUR_MS);
  if (hourMark !== null) return { start: hourMark, target };
  const first = s.firstQuarterFrom.get(sensorId, Number.MIN_SAFE_INTEGER);
  return first === undefined ? null : { start: bucketStart(first, ROLLUP_HOUR_MS), target };
}

/** How much of the sensor's closed readings is not rolled up yet, either span, in ms (0: none). */
export function rollUpBehindMs(sensorId: string, nowMs: number, db?: Database.Database): number {
  const s = statements(db);
  const target = rollUpTarget(s, sensorId, nowMs);
  const start = rollUpStart(s, sensorId);
  const quarters = target === null || start === null ? 0 : Math.max(0, target - start);
  const hours = hoursToRollUp(s, sensorId);
  return Math.max(quarters, hours === null ? 0 : hours.target - hours.start);
}

/** One step of quarter hours (see rollUpStep); null when they are complete. */
function quarterStep(s: Statements, sensorId: string, nowMs: number): number | null {
  const target = rollUpTarget(s, sensorId, nowMs);
  const start = rollUpStart(s, sensorId);
  if (target === null || start === null || start >= target) return null;
  // A silent stretch is skipped in the same step: the step's span starts at the next reading.
  const next = s.firstTsFrom.get(sensorId, start) ?? target;
  const end = Math.min(target, Math.max(start, rollupBucketStart(next)) + ROLLUP_STEP_MS);
  s.clear.run(sensorId, start, end);
  const written = s.rollUp.run({ sensorId, fromMs: start, toMs: end }).changes;
  s.setMark.run(sensorId, end);
  return written;
}

/** One step of hours from complete quarter hours (see rollUpStep); null when they are complete. */
function hourStep(s: Statements, sensorId: string): number | null {
  const span = hoursToRollUp(s, sensorId);
  if (span === null || span.start >= span.target) return null;
  const { start, target } = span;
  const next = s.firstQuarterFrom.get(sensorId, start) ?? target;
  const end = Math.min(target, Math.max(start, bucketStart(next, ROLLUP_HOUR_MS)) + ROLLUP_STEP_MS);
  s.clearHours.run(sensorId, start, end);
  const written = s.rollUpHours.run({ sensorId, fromMs: start, toMs: end }).changes;
  s.setHoursMark.run(end, sensorId);
  return written;
}

/**
 * Rolls up one step of the sensor's closed buckets (at most ROLLUP_STEP_MS of time that has
 * readings) in one transaction: the quarter hours from their mark on while any are due, then
 * the hours from theirs; rewrites the step's buckets and raises that mark. Returns the
 * buckets rewritten, or null when the sensor was already complete.
 */
export function rollUpStep(
  sensorId: string,
  nowMs: number,
  db: Database.Database = getSqlite(),
): number | null {
  const s = statements(db);
  const step = db.transaction(
    (): number | null => quarterStep(s, sensorId, nowMs) ?? hourStep(s, sensorId),
  );
  return step.immediate();
}

/** Rolls up all of the sensor's closed buckets now; returns the buckets rewritten. */
export function rollUpSensor(
  sensorId: string,
  nowMs: number,
  db: Database.Database = getSqlite(),
): number {
  let total = 0;
  for (;;) {
    const written = rollUpStep(sensorId, nowMs, db);
    if (written === null) return total;
    total += written;
  }
}

/**
 * How much of a sensor's recent history the roll-up keeps in SQLite's page cache, back from
 * its newest reading: the hours a month's chart reads, the quarter hours a week's reads, and
 * the raw readings past the rollup's marks. About 0.2 MiB a sensor (SQLITE_CACHE_MIB).
 */
export const WARM_HOURS_MS = 32 * 86_400_000;
export const WARM_QUARTERS_MS = 8 * 86_400_000;
export const WARM_RAW_MS = 2 * 3_600_000;

/**
 * Reads the sensor's recent chart rows (WARM_*), so they are in SQLite's page cache when a
 * chart asks: a chart then never waits on the disk, however eagerly the machine drops its
 * file cache. Returns the rows touched.
 */
export function warmSensor(sensorId: string, db?: Database.Database): number {
  const s = statements(db);
  const newest = s.lastTs.get(sensorId);
  if (newest === undefined) return 0;
  return (
    s.touchHours.get(sensorId, newest - WARM_HOURS_MS)! +
    s.touchQuarters.get(sensorId, newest - WARM_QUARTERS_MS)! +
    s.touchRaw.get(sensorId, newest - WARM_RAW_MS)!
  );
}

/** Every sensor's id (the background roll-up walks them). */
export function listSensorIds(db?: Database.Database): string[] {
  return statements(db).sensors.all();
}
