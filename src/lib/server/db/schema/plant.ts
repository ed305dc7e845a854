import { index, integer, real, sqliteTable, text } from "drizzle-orm/sqlite-core";
import { users, gateways } from "./auth";
import { createdAtMs, epochMs } from "./columns";

import { areaKindValues, sensorKindValues, sensorStatusValues } from "../../../vocabulary";

export { areaKindValues, sensorKindValues, sensorStatusValues };

/** Plant-wide settings as key/value pairs (plant name, time zone). */
export const settings = sqliteTable("settings", {
  key: text("key").primaryKey(),
  value: text("value").notNull(),
  updatedAt: epochMs("updated_at"),
  updatedBy: integer("updated_by").references(() => users.id),
});

/** Places sensors live in: cure rooms, the yard, the aggregate bins. */
export const areas = sqliteTable("areas", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  name: text("name").notNull().unique(),
  kind: text("kind", { enum: areaKindValues }).notNull(),
  description: text("description"),
  sortOrder: integer("sort_order").notNull().default(0),
  createdAt: createdAtMs(),
});

/**
 * One temperature (and maybe humidity) sensor, keyed by the id its gateway sends.
 * Calibration offsets are added to incoming values at ingest; each change of offset
 * is recorded in sensor_calibrations so a raw value can always be recovered.
 */
export const sensors = sqliteTable(
  "sensors",
  {
    id: text("id").primaryKey(),
    label: text("label"),
    kind: text("kind", { enum: sensorKindValues }),
    areaId: integer("area_id").references(() => areas.id, { onDelete: "set null" }),
    status: text("status", { enum: sensorStatusValues }).notNull().default("new"),
    tempOffsetC: real("temp_offset_c").notNull().default(0),
    rhOffsetPct: real("rh_offset_pct").notNull().default(0),
    /** Bin sensors: which aggregate the bin holds (e.g. "sand", "coarse"). */
    material: text("material"),
    lastSeenAt: epochMs("last_seen_at"),
    lastTempC: real("last_temp_c"),
    lastRhPct: real("last_rh_pct"),
    batteryPct: real("battery_pct"),
    lastGatewayId: integer("last_gateway_id").references(() => gateways.id, {
      onDelete: "set null",
    }),
    createdAt: createdAtMs(),
    retiredAt: epochMs("retired_at"),
  },
  (t) => [index("sensors_area_idx").on(t.areaId), index("sensors_status_idx").on(t.status)],
);

/**
 * A check of a sensor against a reference thermometer (ASTM C511 asks recording
 * thermometers to be verified at least every six months).
 */
export const sensorCalibrations = sqliteTable(
  "sensor_calibrations",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    sensorId: text("sensor_id")
      .notNull()
      .references(() => sensors.id, { onDelete: "cascade" }),
    checkedAt: epochMs("checked_at").notNull(),
    checkedBy: integer("checked_by").references(() => users.id),
    referenceTempC: real("reference_temp_c"),
    sensorTempC: real("sensor_temp_c"),
    tempOffsetC: real("temp_offset_c").notNull(),
    rhOffsetPct: real("rh_offset_pct").notNull().default(0),
    nextDueAt: epochMs("next_due_at"),
    note: text("note"),
    createdAt: createdAtMs(),
  },
  (t) => [index("sensor_calibrations_sensor_idx").on(t.sensorId, t.checkedAt)],
);
