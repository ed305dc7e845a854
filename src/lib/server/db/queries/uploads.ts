import { and, desc, eq, lt, sql } from "drizzle-orm";
import type { CleanReading } from "@/domain/readings";
import { getDb, getSqlite } from "../client";
import { sensors, uploads, users } from "../schema";
import { writeAudit, type AuditActor } from "./audit";
import { storeReadings, type StoreResult } from "./ingest";

export interface RowError {
  row: number;
  error: string;
}

/** One logger upload as the history shows it. */
export interface UploadListRow {
  id: number;
  fileName: string;
  /** The sensor the file was for (kept even when none of its rows could be stored). */
  sensorId: string | null;
  timeZone: string | null;
  uploadedBy: string | null;
  createdAtMs: number;
  rowsIn: number;
  rowsAccepted: number;
  rowsDuplicate: number;
  rowsRejected: number;
  /** The first per-row errors (at most MAX_KEPT_ERRORS); the count is rowsRejected. */
  errors: RowError[];
}

const listColumns = {
  id: uploads.id,
  fileName: uploads.fileName,
  sensorId: sql<
    string | null
  >`coalesce(${uploads.sensorId}, json_extract(${uploads.mappingJson}, '$.sensor'))`,
  timeZone: uploads.timeZone,
  uploadedBy: sql<
    string | null
  >`coalesce(${users.name}, json_extract(${uploads.mappingJson}, '$.uploaded_via'))`,
  createdAtMs: uploads.createdAt,
  rowsIn: uploads.rowsIn,
  rowsAccepted: uploads.rowsAccepted,
  rowsDuplicate: uploads.rowsDuplicate,
  rowsRejected: uploads.rowsRejected,
  errorsJson: uploads.errorsJson,
};

type ListRaw = { [K in keyof typeof listColumns]: unknown } & Record<string, unknown>;

function toListRow(r: ListRaw): UploadListRow {
  let errors: RowError[] = [];
  if (typeof r.errorsJson === "string") {
    try {
      errors = JSON.parse(r.errorsJson) as RowError[];
    } catch {
      errors = [];
    }
  }
  return {
    id: r.id as number,
    fileName: r.fileName as string,
    sensorId: (r.sensorId as string | null) ?? null,
    timeZone: (r.timeZone as string | null) ?? null,
    uploadedBy: (r.uploadedBy as string | null) ?? null,
    createdAtMs: r.createdAtMs as number,
    rowsIn: r.rowsIn as number,
    rowsAccepted: r.rowsAccepted as number,
    rowsDuplicate: r.rowsDuplicate as number,
    rowsRejected: r.rowsRejected as number,
    errors,
  };
}

/** Logger uploads, newest first, paged by id. */
export function listLoggerUploads({
  limit = 100,
  beforeId,
}: { limit?: number; beforeId?: number } = {}): UploadListRow[] {
  return getDb()
    .select(listColumns)
    .from(uploads)
    .leftJoin(users, eq(users.id, uploads.uploadedBy))
    .where(and(eq(uploads.kind, "logger"), beforeId ? lt(uploads.id, beforeId) : undefined))
    .orderBy(desc(uploads.id))
    .limit(Math.min(Math.max(1, limit), 500))
    .all()
    .map(toListRow);
}

/** The latest logger upload of exactly this content (by SHA-256), if there was one. */
export function findLoggerUploadBySha(fileSha256: string): UploadListRow | undefined {
  const r = getDb()
    .select(listColumns)
    .from(uploads)
    .leftJoin(users, eq(users.id, uploads.uploadedBy))
    .where(and(eq(uploads.kind, "logger"), eq(uploads.fileSha256, fileSha256)))
    .orderBy(desc(uploads.id))
    .limit(1)
    .get();
  return r ? toListRow(r) : undefined;
}

/** How many of these instants already hold a reading of the sensor (point look-ups on the key). */
export function countStoredReadings(sensorId: string, tsMs: readonly number[]): number {
  const stmt = getSqlite()
    .prepare<[string, number], number>("select 1 from readings where sensor_id = ? and ts = ?")
    .pluck();
  let n = 0;
  const read = getSqlite().transaction(() => {
    for (const ts of tsMs) if (stmt.get(sensorId, ts) !== undefined) n++;
  });
  read();
  return n;
}

export interface LoggerUploadInput {
  fileName: string;
  fileSha256: string;
  sensorId: string;
  timeZone: string;
  /** How the file was read (columns, unit, time format, header row), kept for the record. */
  mapping: Record<string, unknown>;
  rowsIn: number;
  rowsRejected: number;
  /** Per-row errors to keep (already capped by the caller). */
  errors: RowError[];
  uploadedBy: number | null;
  /** Who sent it, when not a person (an API token's label). */
  uploadedVia: string | null;
}

/**
 * Stores a logger file's good readings (through `storeReadings`, source "upload": duplicates
 * skipped, unknown sensors registered), records the upload with its counts and kept errors,
 * and writes `upload.imported` to the audit log, all in one transaction: either all of it
 * is committed or none of it.
 */
export function importLoggerUpload(
  readings: readonly CleanReading[],
  input: LoggerUploadInput,
  actor: AuditActor,
  nowMs = Date.now(),
): { upload: UploadListRow; store: StoreResult } {
  const db = getDb();
  const run = getSqlite().transaction(() => {
    const store: StoreResult =
      readings.length > 0
        ? storeReadings(readings, "upload", { nowMs })
        : { accepted: 0, duplicates: 0, newSensors: [], stored: [] };
    const sensorKnown =
      db.select({ id: sensors.id }).from(sensors).where(eq(sensors.id, input.sensorId)).get() !==
      undefined;
    const row = db
      .insert(uploads)
      .values({
        kind: "logger",
        fileName: input.fileName,
        fileSha256: input.fileSha256,
        // A sensor none of whose readings were stored is not registered; the mapping keeps its id.
        sensorId: sensorKnown ? input.sensorId : null,
        timeZone: input.timeZone,
        mappingJson: JSON.stringify({
          ...input.mapping,
          sensor: input.sensorId,
          uploaded_via: input.uploadedVia,
        }),
        rowsIn: input.rowsIn,
        rowsAccepted: store.accepted,
        rowsDuplicate: store.duplicates,
        rowsRejected: input.rowsRejected,
        errorsJson: input.errors.length > 0 ? JSON.stringify(input.errors) : null,
        uploadedBy: input.uploadedBy,
        createdAt: nowMs,
      })
      .returning({ id: uploads.id })
      .get();
    writeAudit(
      actor,
      {
        action: "upload.imported",
        entityType: "upload",
        entityId: row.id,
        detail: {
          file_name: input.fileName,
          sensor: input.sensorId,
          rows_in: input.rowsIn,
          rows_accepted: store.accepted,
          rows_duplicate: store.duplicates,
          rows_rejected: input.rowsRejected,
        },
      },
      nowMs,
    );
    return { id: row.id, store };
  });
  const { id, store } = run();
  const upload = listLoggerUploads({ limit: 1, beforeId: id + 1 })[0]!;
  return { upload, store };
}
