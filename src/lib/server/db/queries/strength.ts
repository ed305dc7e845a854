import { eq } from "drizzle-orm";
import type { StrengthCurve } from "@/domain/strength/curves";
import { getDb } from "../client";
import { mixCalibrations, mixes, pours } from "../schema";

export type PourRow = typeof pours.$inferSelect;
export type MixRow = typeof mixes.$inferSelect;

export function getPourWithMix(pourId: number): { pour: PourRow; mix: MixRow } | undefined {
  return getDb()
    .select({ pour: pours, mix: mixes })
    .from(pours)
    .innerJoin(mixes, eq(mixes.id, pours.mixId))
    .where(eq(pours.id, pourId))
    .get();
}

/** The mix's strength-maturity curve now in force, or null before QC calibrates it. */
export function currentCurve(
  mix: MixRow,
): { calibrationId: number; curve: StrengthCurve; r2: number | null } | null {
  if (mix.currentCalibrationId === null) return null;
  const row = getDb()
    .select()
    .from(mixCalibrations)
    .where(eq(mixCalibrations.id, mix.currentCalibrationId))
    .get();
  if (!row) return null;
  return {
    calibrationId: row.id,
    curve: { model: row.model, ...JSON.parse(row.paramsJson) } as StrengthCurve,
    r2: row.r2,
  };
}
