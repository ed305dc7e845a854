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
