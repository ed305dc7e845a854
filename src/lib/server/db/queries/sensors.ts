import { asc, eq } from "drizzle-orm";
import type { SeriesPoint } from "@/domain/thin";
import { getDb, getSqlite } from "../client";
import { areas, sensors } from "../schema";

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
 * A long window thinned inside SQLite: the window is cut into `buckets` equal time buckets
 * and each keeps the readings holding its lowest and highest temperature and humidity (the
 * rule of `thinSeries`). Each bucket's extremes come from one small aggregate over the
 * clustered key (SQLite's min()/max() bare-column rule gives the row), so only the kept rows
 * ever cross into JavaScript. Oldest first, each reading once.
 */
export function thinnedWindow(
  sensorId: string,
  fromMs: number,
  toMs: number,
  buckets: number,
): SeriesPoint[] {
  const width = (toMs + 1 - fromMs) / buckets;
  const statements = extremesStatements();
  const kept = new Map<number, SeriesPoint>();
  for (let b = 0; b < buckets; b++) {
    const lo = fromMs + b * width;
    const hi = b === buckets - 1 ? toMs + 1 : fromMs + (b + 1) * width;
    for (const stmt of statements) {
      const row = stmt.get(sensorId, lo, hi);
      if (row && row[0] !== null) kept.set(row[0], { tsMs: row[0], tempC: row[1], rhPct: row[2] });
    }
  }
  return [...kept.values()].sort((x, y) => x.tsMs - y.tsMs);
}

type ExtremeRow = [number, number, number | null, number | null];
const EXTREMES = Symbol.for("plinth.extremes.statements");
const g = globalThis as unknown as {
  [EXTREMES]?: { db: object; list: ReturnType<typeof prepareExtremes> };
};

function prepareExtremes() {
  const sqlite = getSqlite();
  const range = "from readings where sensor_id = ? and ts >= ? and ts < ?";
  return [
    `select ts, temp_c, rh_pct, min(temp_c) ${range}`,
    `select ts, temp_c, rh_pct, max(temp_c) ${range}`,
    `select ts, temp_c, rh_pct, min(rh_pct) ${range} and rh_pct is not null`,
    `select ts, temp_c, rh_pct, max(rh_pct) ${range} and rh_pct is not null`,
  ].map((q) => sqlite.prepare<[string, number, number], ExtremeRow>(q).raw());
}

function extremesStatements() {
  const db = getSqlite();
  if (!g[EXTREMES] || g[EXTREMES].db !== db) g[EXTREMES] = { db, list: prepareExtremes() };
  return g[EXTREMES].list;
}

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
