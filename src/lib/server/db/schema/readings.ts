import { index, integer, primaryKey, real, sqliteTable, text } from "drizzle-orm/sqlite-core";
import { gateways, users } from "./auth";
import { createdAtMs, epochMs } from "./columns";
import { sensors } from "./plant";

export const readingSourceValues = ["http", "mqtt", "upload", "demo"] as const;

/**
 * One reading of one sensor. (sensor_id, ts) is the primary key: a reading sent twice
 * is stored once and the first value stands. The table is WITHOUT ROWID (migration 0003),
 * clustered on that key, so a sensor's time window is one sequential range.
 * temp_c and rh_pct are as corrected by the sensor's offsets at ingest.
 */
export const readings = sqliteTable(
  "readings",
  {
    sensorId: text("sensor_id")
      .notNull()
      .references(() => sensors.id),
    ts: epochMs("ts").notNull(),
    tempC: real("temp_c").notNull(),
    rhPct: real("rh_pct"),
    source: text("source", { enum: readingSourceValues }).notNull(),
    receivedAt: epochMs("received_at").notNull(),
  },
  (t) => [primaryKey({ columns: [t.sensorId, t.ts] }), index("readings_ts_idx").on(t.ts)],
);

/**
 * Each sensor's readings in fixed 15-minute buckets (bucket_ms: the bucket's start, epoch ms,
 * a multiple of 900,000), each row holding the bucket's extreme readings whole (time, °C and
 * RH of the reading with the lowest temperature, the highest temperature, the lowest RH and
 * the highest RH; the earliest such reading on a tie) and how many readings it has. Long
 * chart windows are thinned from it (src/domain/thinning.ts). A bucket without readings has
 * no row. Only buckets before the sensor's mark in readings_rollup_marks are complete; rows
 * at or after it are stale and rewritten by the next roll-up. WITHOUT ROWID (migration 0005).
 */
const rollupColumns = {
  sensorId: text("sensor_id")
    .notNull()
    .references(() => sensors.id),
  bucketMs: epochMs("bucket_ms").notNull(),
  readings: integer("readings").notNull(),
  loTempTs: epochMs("lo_temp_ts").notNull(),
  loTempC: real("lo_temp_c").notNull(),
  loTempRhPct: real("lo_temp_rh_pct"),
  hiTempTs: epochMs("hi_temp_ts").notNull(),
  hiTempC: real("hi_temp_c").notNull(),
  hiTempRhPct: real("hi_temp_rh_pct"),
  loRhTs: epochMs("lo_rh_ts"),
  loRhTempC: real("lo_rh_temp_c"),
  loRhPct: real("lo_rh_pct"),
  hiRhTs: epochMs("hi_rh_ts"),
  hiRhTempC: real("hi_rh_temp_c"),
  hiRhPct: real("hi_rh_pct"),
};

export const readingsRollup = sqliteTable("readings_rollup", rollupColumns, (t) => [
  primaryKey({ columns: [t.sensorId, t.bucketMs] }),
]);

/**
 * The same for whole hours (bucket_ms a multiple of 3,600,000), rolled up from the hour's
 * four quarter-hour rows, so a month's chart reads 720 rows a sensor instead of 2,880. Only
 * hours before the sensor's hours_rolled_ms are complete. WITHOUT ROWID (migration 0006).
 */
export const readingsRollupHours = sqliteTable("readings_rollup_hours", rollupColumns, (t) => [
  primaryKey({ columns: [t.sensorId, t.bucketMs] }),
]);

/**
 * How far each sensor's rollup is complete: every 15-minute bucket ending at or before
 * rolled_ms matches the readings. Ingest lowers it when a reading lands before it (a late
 * reading, a logger file's backfill); the roll-up (src/lib/server/rollup/) raises it. No row:
 * nothing rolled up yet.
 */
export const readingsRollupMarks = sqliteTable("readings_rollup_marks", {
  sensorId: text("sensor_id")
    .primaryKey()
    .references(() => sensors.id),
  rolledMs: epochMs("rolled_ms").notNull(),
  /**
   * How far the hourly rollup is complete: an hour boundary never past rolled_ms (hours are
   * rolled up from complete quarter hours; ingest lowers both). Null: no hour rolled up yet.
   */
  hoursRolledMs: epochMs("hours_rolled_ms"),
});

/** Logger files uploaded by hand, and lab files of cylinder breaks. */
export const uploads = sqliteTable(
  "uploads",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    kind: text("kind", { enum: ["logger", "lab"] }).notNull(),
    fileName: text("file_name").notNull(),
    fileSha256: text("file_sha256").notNull(),
    sensorId: text("sensor_id").references(() => sensors.id),
    timeZone: text("time_zone"),
    mappingJson: text("mapping_json"),
    rowsIn: integer("rows_in").notNull().default(0),
    rowsAccepted: integer("rows_accepted").notNull().default(0),
    rowsDuplicate: integer("rows_duplicate").notNull().default(0),
    rowsRejected: integer("rows_rejected").notNull().default(0),
    errorsJson: text("errors_json"),
    uploadedBy: integer("uploaded_by").references(() => users.id),
    gatewayId: integer("gateway_id").references(() => gateways.id),
    createdAt: createdAtMs(),
  },
  (t) => [index("uploads_created_idx").on(t.createdAt)],
);
