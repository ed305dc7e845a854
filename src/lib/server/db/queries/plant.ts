import { asc, desc, eq, inArray, isNull, ne, sql } from "drizzle-orm";
import { getDb } from "../client";
import { areas, mixes, pourProducts, pourSensors, pours, sensors } from "../schema";

export type SensorRow = typeof sensors.$inferSelect;

/** Areas in their display order, each with its sensors that are not retired. */
export function listAreasWithSensors() {
  const db = getDb();
  const areaRows = db.select().from(areas).orderBy(asc(areas.sortOrder), asc(areas.name)).all();
  const sensorRows = db
    .select()
    .from(sensors)
    .where(ne(sensors.status, "retired"))
    .orderBy(asc(sensors.id))
    .all();
  return {
    areas: areaRows.map((a) => ({ ...a, sensors: sensorRows.filter((s) => s.areaId === a.id) })),
    unplaced: sensorRows.filter((s) => s.areaId === null),
  };
}

export interface PourSummary {
  id: number;
  code: string;
  status: string;
  castAt: number;
  bed: string | null;
  mixName: string;
  stripStrengthMpa: number;
  shipStrengthMpa: number;
  products: { product: string; pieceCount: number }[];
  sensors: Pick<SensorRow, "id" | "label" | "kind" | "lastTempC" | "lastRhPct" | "lastSeenAt">[];
}

/** Pours not yet shipped, newest cast first, with their pieces and the sensors now on them. */
export function listOpenPours(): PourSummary[] {
  const db = getDb();
  const rows = db
    .select({
      id: pours.id,
      code: pours.code,
      status: pours.status,
      castAt: pours.castAt,
      bed: pours.bed,
      mixName: mixes.name,
      stripStrengthMpa: mixes.stripStrengthMpa,
      shipStrengthMpa: mixes.shipStrengthMpa,
    })
    .from(pours)
    .innerJoin(mixes, eq(mixes.id, pours.mixId))
    .where(inArray(pours.status, ["curing", "stripped", "ready_to_ship"]))
    .orderBy(desc(pours.castAt))
    .all();
  if (rows.length === 0) return [];
  const ids = rows.map((r) => r.id);
  const products = db.select().from(pourProducts).where(inArray(pourProducts.pourId, ids)).all();
  const assigned = db
    .select({
      pourId: pourSensors.pourId,
      id: sensors.id,
      label: sensors.label,
      kind: sensors.kind,
      lastTempC: sensors.lastTempC,
      lastRhPct: sensors.lastRhPct,
      lastSeenAt: sensors.lastSeenAt,
    })
    .from(pourSensors)
    .innerJoin(sensors, eq(sensors.id, pourSensors.sensorId))
    .where(sql`${inArray(pourSensors.pourId, ids)} and ${isNull(pourSensors.toAt)}`)
    .orderBy(asc(sensors.id))
    .all();
  return rows.map((r) => ({
    ...r,
    products: products
      .filter((p) => p.pourId === r.id)
      .map(({ product, pieceCount }) => ({ product, pieceCount })),
    sensors: assigned.filter((s) => s.pourId === r.id).map(({ pourId: _p, ...s }) => s),
  }));
}

export function listMixes() {
  return getDb().select().from(mixes).where(eq(mixes.active, true)).orderBy(asc(mixes.name)).all();
}

/** When the pour with this code was cast (epoch ms), if there is one. */
export function pourCastAt(code: string): number | undefined {
  return getDb().select({ castAt: pours.castAt }).from(pours).where(eq(pours.code, code)).get()
    ?.castAt;
}

/** The newest reading's time over all sensors, or null with none. */
export function latestReadingTs(): number | null {
  return (
    getDb()
      .select({ ts: sql<number | null>`max(${sensors.lastSeenAt})` })
      .from(sensors)
      .get()?.ts ?? null
  );
}
