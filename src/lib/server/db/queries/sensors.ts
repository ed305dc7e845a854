import { asc, eq } from "drizzle-orm";
import type { SeriesPoint } from "@/domain/thin";
import { foldExtremes, planWindow, type WindowPlan } from "@/domain/thinning";
import { log } from "../../log";
import { getDb, getSqlite } from "../client";
import { areas, sensors } from "../schema";
import {
  rawReadings,
  rollupExtremes,
  rollupMarks,
  rollupRows,
  rollUpBehindMs,
  rollUpSensor,
} from "./rollup";

export type SensorRow = typeof sensors.$inferSelect;
export type SensorWithArea = SensorRow & { areaName: string | null };

export function listSensorsWithArea(): SensorWithArea[] {
  return getDb()
    .select({ sensor: sensors, areaName: areas.name })
    .from(sensors)
    .leftJoin(areas, eq(areas.id, sensors.areaId))
    .orderBy(asc(sensors.id))
    .all()
    .map((r) => ({ ...r.sensor, areaName: r.areaName }));
}

export function getSensorWithArea(id: string): SensorWithArea | undefined {
  const r = getDb()
    .select({ sensor: sensors, areaName: areas.name })
    .from(sensors)
    .leftJoin(areas, eq(areas.id, sensors.areaId))
    .where(eq(sensors.id, id))
    .get();
  return r ? { ...r.sensor, areaName: r.areaName } : undefined;
}

export type SensorPatch = Partial<
  Pick<SensorRow, "label" | "kind" | "areaId" | "status" | "material" | "retiredAt">
>;

export function updateSensor(id: string, patch: SensorPatch): SensorRow | undefined {
  return getDb().update(sensors).set(patch).where(eq(sensors.id, id)).returning().get();
}

export function listAreas() {
  return getDb().select().from(areas).orderBy(asc(areas.sortOrder), asc(areas.name)).all();
}

export function findAreaByName(name: string) {
  return getDb().select().from(areas).where(eq(areas.name, name)).get();
}

/**
 * One sensor's readings in [fromMs, toMs], oldest first, read straight off the
 * (sensor_id, ts) primary key.
 */
export function readingsWindow(sensorId: string, fromMs: number, toMs: number): SeriesPoint[] {
  const rows = getSqlite()
    .prepare<[string, number, number], [number, number, number | null]>(
      "select ts, temp_c, rh_pct from readings where sensor_id = ? and ts between ? and ? order by ts",
    )
    .raw()
    .all(sensorId, fromMs, toMs);
  return rows.map(([tsMs, tempC, rhPct]) => ({ tsMs, tempC, rhPct }));
}

/**
 * A long window thinned for a chart: cut into `buckets` time buckets, each keeping the
 * readings holding its lowest and highest temperature and humidity (thinSeries's rule), so
 * no peak or dip is hidden; a window with no more than 4 × buckets readings comes back whole.
 * Buckets at least half an hour wide lie on the quarter hours, at least two hours wide on the
 * hours (src/domain/thinning.ts), and are answered from the readings rollup
 * (queries/rollup.ts): a month of minutes reads about 720 hourly rows instead of 43,200
 * readings, and raw readings only at the window's ragged edges and where the rollup has not
 * reached yet. Oldest first, each reading once.
 */
export function thinnedWindow(
  sensorId: string,
  fromMs: number,
  toMs: number,
  buckets: number,
  nowMs: number = Date.now(),
): SeriesPoint[] {
  const planNow = () => {
    const marks = rollupMarks(sensorId);
    return planWindow(fromMs, toMs, buckets, marks.quarterMs, marks.hourMs);
  };
  let plan = planNow();
  // Far behind (a logger file's backfill the background roll-up has not reached yet): roll
  // this sensor up first, once, rather than read a long stretch raw. Should that fail (the
  // database busy with another writer), the answer is read raw, only slower.
  if (
    plan.layout.gridStartsMs !== null &&
    rawSpanMs(plan) > LAZY_ROLL_UP_AFTER_MS &&
    rollUpBehindMs(sensorId, nowMs) > LAZY_ROLL_UP_AFTER_MS
  ) {
    try {
      rollUpSensor(sensorId, nowMs);
    } catch (err) {
      log.warn("chart query: rolling the sensor up failed; reading it raw", { sensorId, err });
    }
    plan = planNow();
  }
  const fold = foldExtremes(plan.layout);
  const addRaw = (lo: number, hi: number) => {
    for (const [tsMs, tempC, rhPct] of rawReadings(sensorId, lo, hi)) fold.add(tsMs, tempC, rhPct);
  };
  for (const range of plan.raw) addRaw(range.fromMs, range.toMs);
  for (const range of plan.rollup)
    for (const row of rollupRows(sensorId, range.fromMs, range.toMs, range.spanMs))
      if (!fold.addRollup(row[0], range.spanMs, row[1], rollupExtremes(row)))
        addRaw(row[0], row[0] + range.spanMs);
  if (fold.readings() <= plan.layout.count * 4) return readingsWindow(sensorId, fromMs, toMs);
  return fold.points();
}

/** A chart query rolls its sensor up first when it would otherwise read this much raw. */
const LAZY_ROLL_UP_AFTER_MS = 6 * 3_600_000;

const rawSpanMs = (plan: WindowPlan) =>
  plan.raw.reduce((sum, r) => sum + Math.max(0, r.toMs - r.fromMs), 0);

/** The last `sinceMs` of several sensors' temperatures (for sparklines), oldest first per sensor. */
export function recentTemps(
  sensorIds: readonly string[],
  sinceMs: number,
): Map<string, SeriesPoint[]> {
  const out = new Map<string, SeriesPoint[]>();
  const stmt = getSqlite()
    .prepare<[string, number], [number, number, number | null]>(
      "select ts, temp_c, rh_pct from readings where sensor_id = ? and ts >= ? order by ts",
    )
    .raw();
  for (const id of sensorIds)
    out.set(
      id,
      stmt.all(id, sinceMs).map(([tsMs, tempC, rhPct]) => ({ tsMs, tempC, rhPct })),
    );
  return out;
}
