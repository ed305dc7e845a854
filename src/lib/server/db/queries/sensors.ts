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
