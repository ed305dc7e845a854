import { and, desc, eq, gt } from "drizzle-orm";
import { getDb } from "../client";
import { sensorCalibrations, sensors, users } from "../schema";

export type CalibrationRow = typeof sensorCalibrations.$inferSelect;
export type CalibrationWithChecker = CalibrationRow & { checkedByName: string | null };

/** A sensor's calibration checks, newest check first, with the name of who made each. */
export function listCalibrations(sensorId: string): CalibrationWithChecker[] {
  return getDb()
    .select({ c: sensorCalibrations, checkedByName: users.name })
    .from(sensorCalibrations)
    .leftJoin(users, eq(users.id, sensorCalibrations.checkedBy))
    .where(eq(sensorCalibrations.sensorId, sensorId))
    .orderBy(desc(sensorCalibrations.checkedAt), desc(sensorCalibrations.id))
    .all()
    .map((r) => ({ ...r.c, checkedByName: r.checkedByName }));
}

/**
 * Each sensor's newest check (by the time it was made), keyed by sensor id. A plant records
 * a few checks per sensor a year, so reading them all stays small.
 */
export function latestCalibrations(): Map<string, CalibrationRow> {
  const out = new Map<string, CalibrationRow>();
  const rows = getDb()
    .select()
    .from(sensorCalibrations)
    .orderBy(desc(sensorCalibrations.checkedAt), desc(sensorCalibrations.id))
    .all();
  for (const c of rows) if (!out.has(c.sensorId)) out.set(c.sensorId, c);
  return out;
}

export interface CalibrationInput {
  sensorId: string;
  checkedAtMs: number;
  checkedBy: number | null;
  referenceTempC: number;
  sensorTempC: number;
  tempOffsetC: number;
  rhOffsetPct: number;
  nextDueAtMs: number;
  note: string | null;
}

/**
 * Records a check and, when it is the sensor's newest, sets the sensor's offsets to the
 * check's, in one transaction. Ingest adds the offsets to readings from then on; stored
 * readings are not changed. A back-dated check older than one already on record is kept
 * in the history but leaves the offsets as the newer check set them (`applied` false).
 */
export function recordCalibration(input: CalibrationInput): {
  calibration: CalibrationRow;
  applied: boolean;
} {
  const db = getDb();
  return db.transaction((tx) => {
    const newer = tx
      .select({ id: sensorCalibrations.id })
      .from(sensorCalibrations)
      .where(
        and(
          eq(sensorCalibrations.sensorId, input.sensorId),
          gt(sensorCalibrations.checkedAt, input.checkedAtMs),
        ),
      )
      .limit(1)
      .get();
    const calibration = tx
      .insert(sensorCalibrations)
      .values({
        sensorId: input.sensorId,
        checkedAt: input.checkedAtMs,
        checkedBy: input.checkedBy,
        referenceTempC: input.referenceTempC,
        sensorTempC: input.sensorTempC,
        tempOffsetC: input.tempOffsetC,
        rhOffsetPct: input.rhOffsetPct,
        nextDueAt: input.nextDueAtMs,
        note: input.note,
      })
      .returning()
      .get();
    const applied = !newer;
    if (applied) {
      tx.update(sensors)
        .set({ tempOffsetC: input.tempOffsetC, rhOffsetPct: input.rhOffsetPct })
        .where(eq(sensors.id, input.sensorId))
        .run();
    }
    return { calibration, applied };
  });
}
