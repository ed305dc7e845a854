import { eq, sql } from "drizzle-orm";
import type { StrengthCurve } from "@/domain/strength/curves";
import { getDb, type Db } from "../client";
import { mixCalibrations, mixes, pours } from "../schema";

export type PourRow = typeof pours.$inferSelect;
export type MixRow = typeof mixes.$inferSelect;

/**
 * The two reads every strength view makes, built once per database handle: a strength view is
 * refreshed for every open pour as readings arrive, and building the query each time would cost
 * more than running it.
 */
function prepareQueries(db: Db) {
  return {
    pourWithMix: db
      .select({ pour: pours, mix: mixes })
      .from(pours)
      .innerJoin(mixes, eq(mixes.id, pours.mixId))
      .where(eq(pours.id, sql.placeholder("pourId")))
      .prepare(),
    calibration: db
      .select()
      .from(mixCalibrations)
      .where(eq(mixCalibrations.id, sql.placeholder("calibrationId")))
      .prepare(),
  };
}

const KEY = Symbol.for("plinth.strength.queries");
const g = globalThis as unknown as {
  [KEY]?: { db: Db; q: ReturnType<typeof prepareQueries> };
};

function queries(): ReturnType<typeof prepareQueries> {
  const db = getDb();
  const cached = g[KEY];
  if (cached && cached.db === db) return cached.q;
  const q = prepareQueries(db);
  g[KEY] = { db, q };
  return q;
}

export function getPourWithMix(pourId: number): { pour: PourRow; mix: MixRow } | undefined {
  return queries().pourWithMix.get({ pourId });
}

/** The mix's strength-maturity curve now in force, or null before QC calibrates it. */
export function currentCurve(
  mix: MixRow,
): { calibrationId: number; curve: StrengthCurve; r2: number | null } | null {
  if (mix.currentCalibrationId === null) return null;
  const row = queries().calibration.get({ calibrationId: mix.currentCalibrationId });
  if (!row) return null;
  return {
    calibrationId: row.id,
    curve: { model: row.model, ...JSON.parse(row.paramsJson) } as StrengthCurve,
    r2: row.r2,
  };
}
