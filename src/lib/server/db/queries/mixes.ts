/**
 * Mixes, their calibration points and their fitted strength-maturity curves. Stored in SI
 * (MPa, kg/m³, °C) and epoch ms. Each fit's own points, RMSE and datum are kept in the
 * `mix.calibrated` audit entry written with it, since the calibration row holds only the curve.
 */
import { and, asc, desc, eq, gt, sql } from "drizzle-orm";
import { rebasePointMaturity } from "@/domain/calibrationPoints";
import type { FitWarning, StrengthModel } from "@/domain/strength/curves";
import { getDb, getSqlite } from "../client";
import { auditLog, calibrationPoints, mixCalibrations, mixes, uploads, users } from "../schema";
import { writeAudit, type AuditActor, type AuditEntryInput } from "./audit";

export type MixRow = typeof mixes.$inferSelect;
export type NewMix = typeof mixes.$inferInsert;
export type PointRow = typeof calibrationPoints.$inferSelect;
export type CalibrationRow = typeof mixCalibrations.$inferSelect;

/** A mix with how many calibration points it has and its current fit's row. */
export interface MixListItem {
  mix: MixRow;
  pointCount: number;
  calibration: CalibrationRow | null;
}

function pointCounts(): Map<number, number> {
  const rows = getDb()
    .select({ mixId: calibrationPoints.mixId, n: sql<number>`count(*)` })
    .from(calibrationPoints)
    .groupBy(calibrationPoints.mixId)
    .all();
  return new Map(rows.map((r) => [r.mixId, r.n]));
}

/** Every mix, by name, with its point count and current fit. */
export function listMixes(): MixListItem[] {
  const counts = pointCounts();
  return getDb()
    .select({ mix: mixes, calibration: mixCalibrations })
    .from(mixes)
    .leftJoin(mixCalibrations, eq(mixCalibrations.id, mixes.currentCalibrationId))
    .orderBy(asc(mixes.name))
    .all()
    .map((r) => ({ ...r, pointCount: counts.get(r.mix.id) ?? 0 }));
}

export function getMix(id: number): MixRow | undefined {
  return getDb().select().from(mixes).where(eq(mixes.id, id)).get();
}

/** One mix with its point count and current fit. */
export function getMixItem(id: number): MixListItem | undefined {
  const r = getDb()
    .select({ mix: mixes, calibration: mixCalibrations })
    .from(mixes)
    .leftJoin(mixCalibrations, eq(mixCalibrations.id, mixes.currentCalibrationId))
    .where(eq(mixes.id, id))
    .get();
  if (!r) return undefined;
  const n =
    getDb()
      .select({ n: sql<number>`count(*)` })
      .from(calibrationPoints)
      .where(eq(calibrationPoints.mixId, id))
      .get()?.n ?? 0;
  return { ...r, pointCount: n };
}

/** The mix of that name, whatever its case. */
export function findMixByName(name: string): MixRow | undefined {
  return getDb()
    .select()
    .from(mixes)
    .where(eq(sql`lower(${mixes.name})`, name.trim().toLowerCase()))
    .get();
}

/** Adds a mix and writes `mix.created` in one transaction. */
export function insertMix(
  values: NewMix,
  actor: AuditActor,
  detail: Record<string, unknown>,
): MixRow {
  return getSqlite().transaction(() => {
    const row = getDb().insert(mixes).values(values).returning().get();
    writeAudit(actor, { action: "mix.created", entityType: "mix", entityId: row.id, detail });
    return row;
  })();
}

export type MixPatch = Partial<Omit<NewMix, "id" | "createdAt" | "createdBy">>;

/**
 * Changes a mix and writes the audit entry in one transaction. When the datum temperature or the
 * activation energy changes, every stored point with an age is moved to the new values
 * (`rebasePointMaturity`); points without an age are left as they are. Returns the new row and
 * how many points were moved and left.
 */
export function updateMix(
  before: MixRow,
  patch: MixPatch,
  actor: AuditActor,
  audit: (moved: { rebased: number; kept: number }) => AuditEntryInput,
): { mix: MixRow; rebased: number; kept: number } {
  return getSqlite().transaction(() => {
    const db = getDb();
    const mix = db
      .update(mixes)
      .set({ ...patch, updatedAt: Date.now() })
      .where(eq(mixes.id, before.id))
      .returning()
      .get();
    let rebased = 0;
    let kept = 0;
    if (
      mix.datumTempC !== before.datumTempC ||
      mix.activationEnergyJMol !== before.activationEnergyJMol
    ) {
      for (const p of listPoints(before.id)) {
        const moved = rebasePointMaturity(
          p,
          before.datumTempC,
          mix.datumTempC,
          mix.activationEnergyJMol,
        );
        if (!moved) {
          kept++;
          continue;
        }
        db.update(calibrationPoints)
          .set({ ttfCH: moved.ttfCH, equivalentAgeH: moved.equivalentAgeH })
          .where(eq(calibrationPoints.id, p.id))
          .run();
        rebased++;
      }
    }
    writeAudit(actor, audit({ rebased, kept }));
    return { mix, rebased, kept };
  })();
}

// ---------------------------------------------------------------------------------------
// Calibration points

/** A mix's points in order of maturity. */
export function listPoints(mixId: number): PointRow[] {
  return getDb()
    .select()
    .from(calibrationPoints)
    .where(eq(calibrationPoints.mixId, mixId))
    .orderBy(asc(calibrationPoints.ttfCH), asc(calibrationPoints.id))
    .all();
}

export function getPoint(mixId: number, pointId: number): PointRow | undefined {
  return getDb()
    .select()
    .from(calibrationPoints)
    .where(and(eq(calibrationPoints.mixId, mixId), eq(calibrationPoints.id, pointId)))
    .get();
}

export type NewPoint = Omit<typeof calibrationPoints.$inferInsert, "id" | "createdAt">;

/** Adds one point and writes its audit entry in one transaction. */
export function insertPoint(values: NewPoint, actor: AuditActor, mixName: string): PointRow {
  return getSqlite().transaction(() => {
    const row = getDb().insert(calibrationPoints).values(values).returning().get();
    writeAudit(actor, {
      action: "mix.point_added",
      entityType: "mix",
      entityId: values.mixId,
      detail: { mix: mixName, point: pointDetail(row) },
    });
    return row;
  })();
}

/** What the audit keeps of a point, in the API's words. */
export function pointDetail(p: PointRow) {
  return {
    id: p.id,
    age_h: p.ageH,
    ttf_c_h: p.ttfCH,
    strength_mpa: p.strengthMpa,
    specimens: p.specimens,
    broken_at: p.brokenAt,
  };
}

/** Removes a point and writes its audit entry (with what it was) in one transaction. */
export function deletePoint(point: PointRow, actor: AuditActor, mixName: string): void {
  getSqlite().transaction(() => {
    getDb().delete(calibrationPoints).where(eq(calibrationPoints.id, point.id)).run();
    writeAudit(actor, {
      action: "mix.point_removed",
      entityType: "mix",
      entityId: point.mixId,
      detail: { mix: mixName, point: pointDetail(point) },
    });
  })();
}

/** The latest lab upload of exactly this content for this mix, if there was one. */
export function findLabUpload(
  mixId: number,
  fileSha256: string,
): { id: number; fileName: string; createdAtMs: number } | undefined {
  return getDb()
    .select({ id: uploads.id, fileName: uploads.fileName, createdAtMs: uploads.createdAt })
    .from(uploads)
    .where(
      and(
        eq(uploads.kind, "lab"),
        eq(uploads.fileSha256, fileSha256),
        eq(sql`json_extract(${uploads.mappingJson}, '$.mix_id')`, mixId),
      ),
    )
    .orderBy(desc(uploads.id))
    .limit(1)
    .get();
}

export interface LabImport {
  mixId: number;
  mixName: string;
  fileName: string;
  fileSha256: string;
  mapping: Record<string, unknown>;
  rowsIn: number;
  rowsRejected: number;
  errors: { row: number; error: string }[];
  uploadedBy: number | null;
  points: Omit<NewPoint, "mixId" | "uploadId" | "createdBy">[];
}

/**
 * Stores a lab file's points, its `uploads` record (kind "lab") and the `mix.points_imported`
 * audit entry in one transaction: all of it or none.
 */
export function importLabPoints(
  input: LabImport,
  actor: AuditActor,
): { uploadId: number; points: PointRow[] } {
  return getSqlite().transaction(() => {
    const db = getDb();
    const upload = db
      .insert(uploads)
      .values({
        kind: "lab",
        fileName: input.fileName,
        fileSha256: input.fileSha256,
        mappingJson: JSON.stringify({ ...input.mapping, mix_id: input.mixId }),
        rowsIn: input.rowsIn,
        rowsAccepted: input.rowsIn - input.rowsRejected,
        rowsRejected: input.rowsRejected,
        errorsJson: input.errors.length > 0 ? JSON.stringify(input.errors.slice(0, 200)) : null,
        uploadedBy: input.uploadedBy,
      })
      .returning({ id: uploads.id })
      .get();
    const points = input.points.map((p) =>
      db
        .insert(calibrationPoints)
        .values({ ...p, mixId: input.mixId, uploadId: upload.id, createdBy: input.uploadedBy })
        .returning()
        .get(),
    );
    writeAudit(actor, {
      action: "mix.points_imported",
      entityType: "mix",
      entityId: input.mixId,
      detail: {
        mix: input.mixName,
        upload_id: upload.id,
        file_name: input.fileName,
        rows_in: input.rowsIn,
        rows_rejected: input.rowsRejected,
        points: points.map(pointDetail),
      },
    });
    return { uploadId: upload.id, points };
  })();
}

// ---------------------------------------------------------------------------------------
// Fits

/** What a fit rested on, as its audit entry keeps it. */
export interface FitRecord {
  datumC: number | null;
  rmseMpa: number | null;
  points: { ttfCH: number; strengthMpa: number }[];
  source: "stored_points" | "request" | null;
}

export interface NewFit {
  mixId: number;
  mixName: string;
  model: StrengthModel;
  params: Record<string, number>;
  r2: number;
  rmseMpa: number;
  warnings: FitWarning[];
  points: { ttfCH: number; strengthMpa: number }[];
  source: "stored_points" | "request";
  datumC: number;
  previousCalibrationId: number | null;
  createdBy: number | null;
}

/**
 * Stores a new fit, makes it the mix's current one, and writes `mix.calibrated` (with the points
 * it rested on, its RMSE and the datum of their maturity) in one transaction. Earlier fits stay.
 */
export function insertFit(fit: NewFit, actor: AuditActor): CalibrationRow {
  return getSqlite().transaction(() => {
    const db = getDb();
    const row = db
      .insert(mixCalibrations)
      .values({
        mixId: fit.mixId,
        model: fit.model,
        paramsJson: JSON.stringify(fit.params),
        r2: fit.r2,
        pointCount: fit.points.length,
        warningsJson: JSON.stringify(fit.warnings),
        createdBy: fit.createdBy,
      })
      .returning()
      .get();
    db.update(mixes)
      .set({ currentCalibrationId: row.id, updatedAt: Date.now() })
      .where(eq(mixes.id, fit.mixId))
      .run();
    writeAudit(actor, {
      action: "mix.calibrated",
      entityType: "mix_calibration",
      entityId: row.id,
      detail: {
        mix_id: fit.mixId,
        mix: fit.mixName,
        model: fit.model,
        params: fit.params,
        r2: fit.r2,
        rmse_mpa: fit.rmseMpa,
        datum_temp_c: fit.datumC,
        source: fit.source,
        previous_calibration_id: fit.previousCalibrationId,
        warnings: fit.warnings.map((w) => w.code),
        points: fit.points.map((p) => ({ ttf_c_h: p.ttfCH, strength_mpa: p.strengthMpa })),
      },
    });
    return row;
  })();
}

export type CalibrationWithAuthor = CalibrationRow & { createdByName: string | null };

/** A mix's fits, newest first, with who made each. */
export function listFits(mixId: number): CalibrationWithAuthor[] {
  return getDb()
    .select({ c: mixCalibrations, createdByName: users.name })
    .from(mixCalibrations)
    .leftJoin(users, eq(users.id, mixCalibrations.createdBy))
    .where(eq(mixCalibrations.mixId, mixId))
    .orderBy(desc(mixCalibrations.createdAt), desc(mixCalibrations.id))
    .all()
    .map((r) => ({ ...r.c, createdByName: r.createdByName }));
}

const num = (v: unknown): number | null => (typeof v === "number" && Number.isFinite(v) ? v : null);

/** The points, RMSE and datum a fit rested on, from its audit entry (null when it has none). */
export function fitRecord(calibrationId: number): FitRecord | null {
  const row = getDb()
    .select({ detailJson: auditLog.detailJson })
    .from(auditLog)
    .where(
      and(
        eq(auditLog.entityType, "mix_calibration"),
        eq(auditLog.entityId, String(calibrationId)),
        eq(auditLog.action, "mix.calibrated"),
      ),
    )
    .orderBy(asc(auditLog.id))
    .limit(1)
    .get();
  if (!row?.detailJson) return null;
  try {
    const d = JSON.parse(row.detailJson) as Record<string, unknown>;
    const pts = Array.isArray(d.points) ? (d.points as Record<string, unknown>[]) : [];
    return {
      datumC: num(d.datum_temp_c),
      rmseMpa: num(d.rmse_mpa),
      points: pts
        .map((p) => ({ ttfCH: num(p.ttf_c_h), strengthMpa: num(p.strength_mpa) }))
        .filter(
          (p): p is { ttfCH: number; strengthMpa: number } =>
            p.ttfCH !== null && p.strengthMpa !== null,
        ),
      source: d.source === "stored_points" || d.source === "request" ? d.source : null,
    };
  } catch {
    return null;
  }
}

/**
 * The mix's datum temperature at `atMs`: the "before" of the first change of it recorded after
 * then (`mix.updated` entries), or the datum it has now when none was.
 */
export function datumAt(mix: MixRow, atMs: number): number {
  const rows = getDb()
    .select({ detailJson: auditLog.detailJson })
    .from(auditLog)
    .where(
      and(
        eq(auditLog.entityType, "mix"),
        eq(auditLog.entityId, String(mix.id)),
        eq(auditLog.action, "mix.updated"),
        gt(auditLog.at, atMs),
      ),
    )
    .orderBy(asc(auditLog.id))
    .all();
  for (const r of rows) {
    try {
      const d = JSON.parse(r.detailJson ?? "{}") as { before?: Record<string, unknown> };
      const before = num(d.before?.datum_temp_c);
      if (before !== null) return before;
    } catch {
      // an entry that cannot be read says nothing about the datum
    }
  }
  return mix.datumTempC;
}
