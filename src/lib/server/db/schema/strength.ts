import { index, integer, real, sqliteTable, text } from "drizzle-orm/sqlite-core";
import { users } from "./auth";
import { bool, createdAtMs, epochMs } from "./columns";
import { sensors } from "./plant";

export const curveModelValues = ["log", "hyperbolic", "exponential"] as const;
export const pourStatusValues = ["curing", "stripped", "ready_to_ship", "shipped", "void"] as const;
export const releaseKindValues = ["strip", "ship"] as const;

/**
 * A concrete mix design. Strengths in MPa, proportions in kg per cubic metre,
 * temperatures in °C; the view converts to psi, lb/yd³ and °F for those who want them.
 */
export const mixes = sqliteTable("mixes", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  name: text("name").notNull().unique(),
  description: text("description"),
  designStrengthMpa: real("design_strength_mpa").notNull(),
  stripStrengthMpa: real("strip_strength_mpa").notNull(),
  shipStrengthMpa: real("ship_strength_mpa").notNull(),
  datumTempC: real("datum_temp_c").notNull().default(-10),
  activationEnergyJMol: real("activation_energy_j_mol").notNull().default(41_570),
  placingTempMinC: real("placing_temp_min_c"),
  placingTempMaxC: real("placing_temp_max_c"),
  cementKgM3: real("cement_kg_m3"),
  scmKgM3: real("scm_kg_m3"),
  waterKgM3: real("water_kg_m3"),
  fineAggKgM3: real("fine_agg_kg_m3"),
  coarseAggKgM3: real("coarse_agg_kg_m3"),
  fineAggMoisturePct: real("fine_agg_moisture_pct"),
  coarseAggMoisturePct: real("coarse_agg_moisture_pct"),
  /** The fit now in force (mix_calibrations.id); null until QC calibrates the mix. */
  currentCalibrationId: integer("current_calibration_id"),
  active: bool("active").notNull().default(true),
  createdBy: integer("created_by").references(() => users.id),
  createdAt: createdAtMs(),
  updatedAt: epochMs("updated_at"),
});

/** One fitted strength-maturity curve of a mix; earlier fits stay for the record. */
export const mixCalibrations = sqliteTable(
  "mix_calibrations",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    mixId: integer("mix_id")
      .notNull()
      .references(() => mixes.id),
    model: text("model", { enum: curveModelValues }).notNull(),
    /** Curve parameters as JSON; their meaning depends on the model. Strength in MPa. */
    paramsJson: text("params_json").notNull(),
    r2: real("r2"),
    pointCount: integer("point_count").notNull(),
    warningsJson: text("warnings_json"),
    createdBy: integer("created_by").references(() => users.id),
    createdAt: createdAtMs(),
  },
  (t) => [index("mix_calibrations_mix_idx").on(t.mixId)],
);

/** A calibration point: mean strength of the cylinders broken at one age, with their maturity. */
export const calibrationPoints = sqliteTable(
  "calibration_points",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    mixId: integer("mix_id")
      .notNull()
      .references(() => mixes.id),
    ageH: real("age_h"),
    ttfCH: real("ttf_c_h").notNull(),
    equivalentAgeH: real("equivalent_age_h"),
    strengthMpa: real("strength_mpa").notNull(),
    specimens: text("specimens"),
    brokenAt: epochMs("broken_at"),
    uploadId: integer("upload_id"),
    createdBy: integer("created_by").references(() => users.id),
    createdAt: createdAtMs(),
  },
  (t) => [index("calibration_points_mix_idx").on(t.mixId)],
);

/** A casting: one mix placed into forms at one time, cured under watched sensors. */
export const pours = sqliteTable(
  "pours",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    code: text("code").notNull().unique(),
    mixId: integer("mix_id")
      .notNull()
      .references(() => mixes.id),
    castAt: epochMs("cast_at").notNull(),
    status: text("status", { enum: pourStatusValues }).notNull().default("curing"),
    bed: text("bed"),
    dischargeTempC: real("discharge_temp_c"),
    slumpMm: real("slump_mm"),
    spreadMm: real("spread_mm"),
    airPct: real("air_pct"),
    unitWeightKgM3: real("unit_weight_kg_m3"),
    cylinderIds: text("cylinder_ids"),
    notes: text("notes"),
    strippedAt: epochMs("stripped_at"),
    shippedAt: epochMs("shipped_at"),
    createdBy: integer("created_by").references(() => users.id),
    createdAt: createdAtMs(),
    updatedAt: epochMs("updated_at"),
  },
  (t) => [index("pours_status_idx").on(t.status, t.castAt), index("pours_mix_idx").on(t.mixId)],
);

/** The pieces made in a pour: a product and how many. */
export const pourProducts = sqliteTable(
  "pour_products",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    pourId: integer("pour_id")
      .notNull()
      .references(() => pours.id, { onDelete: "cascade" }),
    product: text("product").notNull(),
    pieceCount: integer("piece_count").notNull(),
    marks: text("marks"),
  },
  (t) => [index("pour_products_pour_idx").on(t.pourId)],
);

/** Which sensor watched which pour, and when (to_at null: still assigned). */
export const pourSensors = sqliteTable(
  "pour_sensors",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    pourId: integer("pour_id")
      .notNull()
      .references(() => pours.id, { onDelete: "cascade" }),
    sensorId: text("sensor_id")
      .notNull()
      .references(() => sensors.id),
    fromAt: epochMs("from_at").notNull(),
    toAt: epochMs("to_at"),
    location: text("location"),
    createdBy: integer("created_by").references(() => users.id),
    createdAt: createdAtMs(),
  },
  (t) => [
    index("pour_sensors_pour_idx").on(t.pourId),
    index("pour_sensors_sensor_idx").on(t.sensorId, t.fromAt),
  ],
);

/** A cylinder (or cube) broken in the lab, against a pour or for a mix's calibration. */
export const cylinderBreaks = sqliteTable(
  "cylinder_breaks",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    pourId: integer("pour_id").references(() => pours.id),
    mixId: integer("mix_id").references(() => mixes.id),
    specimenId: text("specimen_id"),
    brokenAt: epochMs("broken_at").notNull(),
    ageH: real("age_h"),
    strengthMpa: real("strength_mpa").notNull(),
    /** The in-place estimate at the time of the break, for comparison. */
    estimateMpa: real("estimate_mpa"),
    lab: text("lab"),
    note: text("note"),
    enteredBy: integer("entered_by").references(() => users.id),
    createdAt: createdAtMs(),
  },
  (t) => [
    index("cylinder_breaks_pour_idx").on(t.pourId),
    index("cylinder_breaks_mix_idx").on(t.mixId),
  ],
);

/** A strip or ship sign-off, with what it rested on. Never edited once made. */
export const releases = sqliteTable(
  "releases",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    pourId: integer("pour_id")
      .notNull()
      .references(() => pours.id),
    kind: text("kind", { enum: releaseKindValues }).notNull(),
    releasedBy: integer("released_by")
      .notNull()
      .references(() => users.id),
    releasedAt: epochMs("released_at").notNull(),
    thresholdMpa: real("threshold_mpa").notNull(),
    estimateMpa: real("estimate_mpa"),
    governingSensorId: text("governing_sensor_id"),
    ttfCH: real("ttf_c_h"),
    equivalentAgeH: real("equivalent_age_h"),
    completeRecord: bool("complete_record"),
    basisJson: text("basis_json"),
    overrideReason: text("override_reason"),
    note: text("note"),
    caution: text("caution").notNull(),
  },
  (t) => [index("releases_pour_idx").on(t.pourId)],
);

/**
 * The running maturity of one sensor's assignment to a pour, advanced as each reading
 * arrives (see src/domain/maturity/accumulator.ts). A cache of what the readings say:
 * it can always be rebuilt from them, and is when a late reading arrives.
 */
export const pourSensorMaturity = sqliteTable(
  "pour_sensor_maturity",
  {
    assignmentId: integer("assignment_id")
      .primaryKey()
      .references(() => pourSensors.id, { onDelete: "cascade" }),
    pourId: integer("pour_id")
      .notNull()
      .references(() => pours.id, { onDelete: "cascade" }),
    sensorId: text("sensor_id").notNull(),
    datumTempC: real("datum_temp_c").notNull(),
    activationEnergyJMol: real("activation_energy_j_mol").notNull(),
    firstTs: epochMs("first_ts"),
    lastTs: epochMs("last_ts"),
    lastTempC: real("last_temp_c"),
    ttfCH: real("ttf_c_h").notNull().default(0),
    equivalentAgeH: real("equivalent_age_h").notNull().default(0),
    complete: bool("complete").notNull().default(false),
    readingCount: integer("reading_count").notNull().default(0),
    updatedAt: epochMs("updated_at").notNull(),
  },
  (t) => [
    index("pour_sensor_maturity_pour_idx").on(t.pourId),
    index("pour_sensor_maturity_sensor_idx").on(t.sensorId),
  ],
);
