import { and, asc, eq, ne } from "drizzle-orm";
import type { MixProportions } from "@/domain/batchTemperature";
import { getDb } from "../client";
import { areas, mixes, sensors } from "../schema";

/** An aggregate-bin sensor in service (or new), with its area and last reading. */
export interface BinSensorRow {
  id: string;
  label: string | null;
  status: "new" | "active" | "retired";
  material: string | null;
  areaName: string | null;
  lastSeenAt: number | null;
  lastTempC: number | null;
}

/** Sensors of kind "bin" that are not retired, in id order. */
export function listBinSensors(): BinSensorRow[] {
  return getDb()
    .select({
      id: sensors.id,
      label: sensors.label,
      status: sensors.status,
      material: sensors.material,
      areaName: areas.name,
      lastSeenAt: sensors.lastSeenAt,
      lastTempC: sensors.lastTempC,
    })
    .from(sensors)
    .leftJoin(areas, eq(areas.id, sensors.areaId))
    .where(and(eq(sensors.kind, "bin"), ne(sensors.status, "retired")))
    .orderBy(asc(sensors.id))
    .all();
}

/** A mix's name with what the batch prediction needs of it. */
export interface MixForBatch extends MixProportions {
  id: number;
  name: string;
  active: boolean;
}

const mixColumns = {
  id: mixes.id,
  name: mixes.name,
  active: mixes.active,
  cementKgM3: mixes.cementKgM3,
  scmKgM3: mixes.scmKgM3,
  waterKgM3: mixes.waterKgM3,
  fineAggKgM3: mixes.fineAggKgM3,
  coarseAggKgM3: mixes.coarseAggKgM3,
  fineAggMoisturePct: mixes.fineAggMoisturePct,
  coarseAggMoisturePct: mixes.coarseAggMoisturePct,
  placingTempMinC: mixes.placingTempMinC,
  placingTempMaxC: mixes.placingTempMaxC,
};

/** Mixes in use, by name, with their proportions and placing ranges. */
export function listMixesForBatch(): MixForBatch[] {
  return getDb()
    .select(mixColumns)
    .from(mixes)
    .where(eq(mixes.active, true))
    .orderBy(asc(mixes.name))
    .all();
}

/** One mix (in use or not) with its proportions, or undefined. */
export function getMixForBatch(id: number): MixForBatch | undefined {
  return getDb().select(mixColumns).from(mixes).where(eq(mixes.id, id)).get();
}
