import { z } from "zod";
import { FRESH_BOUNDS } from "@/domain/freshChecks";
import { MAX_REASON_CHARS, pourStatuses } from "@/domain/pourLifecycle";
import { SENSOR_ID_PATTERN } from "@/domain/readings";
import { instantField } from "./calibrations";

/** A pour's code as the plant writes it on the bed card: "P-2611-06". */
export const pourCodeField = z
  .string({ error: "Enter the pour's code" })
  .trim()
  .min(1, { error: "Enter the pour's code" })
  .max(40, { error: "Use at most 40 characters" })
  .regex(/^[A-Za-z0-9][A-Za-z0-9 ._/#-]*$/, {
    error: "Use letters, digits, spaces and . _ / # -",
  });

export const sensorIdField = z
  .string({ error: "Give a sensor id" })
  .trim()
  .regex(SENSOR_ID_PATTERN, { error: "Not a sensor id" });

const text = (max: number) =>
  z
    .string()
    .trim()
    .max(max, { error: `Use at most ${max} characters` });

const bounded = (label: string, unit: string, b: { min: number; max: number }) =>
  z
    .number({ error: `Enter ${label} as a number` })
    .min(b.min, { error: `${label} below ${b.min} ${unit} is not plausible` })
    .max(b.max, { error: `${label} above ${b.max} ${unit} is not plausible` });

/** A cylinder's id as marked on the mould: letters, digits and . _ / # - (no commas). */
const cylinderIdField = z
  .string()
  .trim()
  .min(1, { error: "A cylinder id cannot be blank" })
  .max(40, { error: "Use at most 40 characters" })
  .regex(/^[A-Za-z0-9][A-Za-z0-9 ._/#-]*$/, {
    error: "Use letters, digits, spaces and . _ / # -",
  });

/** The fresh-concrete tests taken at casting (SI; null clears one in a PATCH). */
export const freshTestsShape = {
  discharge_temp_c: bounded("The discharge temperature", "°C", FRESH_BOUNDS.dischargeTempC)
    .nullable()
    .optional()
    .describe("concrete temperature at discharge, °C"),
  slump_mm: bounded("Slump", "mm", FRESH_BOUNDS.slumpMm)
    .nullable()
    .optional()
    .describe("slump, mm (conventional concrete); give slump or spread"),
  spread_mm: bounded("Spread", "mm", FRESH_BOUNDS.spreadMm)
    .nullable()
    .optional()
    .describe("slump flow spread, mm (self-consolidating concrete)"),
  air_pct: bounded("Air content", "%", FRESH_BOUNDS.airPct)
    .nullable()
    .optional()
    .describe("air content, %"),
  unit_weight_kg_m3: bounded("Unit weight", "kg/m³", FRESH_BOUNDS.unitWeightKgM3)
    .nullable()
    .optional()
    .describe("unit weight (density), kg/m³"),
  cylinder_ids: z
    .array(cylinderIdField)
    .max(60, { error: "At most 60 cylinders" })
    .nullable()
    .optional()
    .describe("ids of the cylinders made at casting"),
};

const productRow = z
  .object({
    product: text(80).min(1, { error: "Name the product" }),
    piece_count: z
      .number({ error: "Enter how many pieces" })
      .int({ error: "Pieces are whole numbers" })
      .min(1, { error: "At least one piece" })
      .max(100_000, { error: "At most 100,000 pieces" }),
    marks: text(200).nullable().optional(),
  })
  .strict();

const noSlumpAndSpread = (b: { slump_mm?: number | null; spread_mm?: number | null }) =>
  !(typeof b.slump_mm === "number" && typeof b.spread_mm === "number");
const slumpOrSpread = {
  error: "Give slump (conventional) or spread (self-consolidating), not both",
  path: ["spread_mm"],
};

/**
 * An operator records a pour (contract: POST /api/v1/pours). `cast_at` may be in the past (a
 * pour recorded after the fact); `sensors_from` defaults to `cast_at`; `move` takes a sensor
 * off another open pour, ending that assignment where this one starts.
 */
export const pourCreateBody = z
  .object({
    code: pourCodeField,
    mix_id: z.number({ error: "Pick a mix" }).int().positive({ error: "Pick a mix" }),
    cast_at: instantField.describe("ISO 8601 with an offset, or epoch ms"),
    sensors: z
      .array(sensorIdField)
      .max(64, { error: "At most 64 sensors on one pour" })
      .default([])
      .describe("sensor ids watching the pour"),
    sensors_from: instantField.optional().describe("when the sensors went on (default cast_at)"),
    move: z.boolean().optional().describe("take sensors off another open pour"),
    products: z.array(productRow).max(50, { error: "At most 50 product rows" }).optional(),
    bed: text(60).nullable().optional(),
    notes: text(2000).nullable().optional(),
    ...freshTestsShape,
  })
  .strict()
  .refine(noSlumpAndSpread, slumpOrSpread);

/**
 * Changes to a pour (PATCH /api/v1/pours/{id}): fresh tests, notes, bed, products (the list
 * replaces the pour's), and a status move with its reason (a void needs one).
 */
export const pourPatchBody = z
  .object({
    bed: text(60).nullable().optional(),
    notes: text(2000).nullable().optional(),
    products: z.array(productRow).max(50, { error: "At most 50 product rows" }).optional(),
    status: z.enum(pourStatuses).optional(),
    reason: text(MAX_REASON_CHARS).optional().describe("why: needed to void a pour"),
    ...freshTestsShape,
  })
  .strict()
  .refine(noSlumpAndSpread, slumpOrSpread);

/** Edits of a pour's sensor assignments: sensors put on (from a time) and taken off (at a time). */
export const pourSensorsBody = z
  .object({
    add: z
      .array(
        z
          .object({
            sensor: sensorIdField,
            from: instantField.optional().describe("default now"),
            location: text(80)
              .nullable()
              .optional()
              .describe("where on the pour, e.g. 'bed 4 north end'"),
          })
          .strict(),
      )
      .max(64)
      .default([]),
    end: z
      .array(
        z
          .object({
            sensor: sensorIdField,
            at: instantField.optional().describe("default now"),
          })
          .strict(),
      )
      .max(64)
      .default([]),
    move: z.boolean().optional().describe("take added sensors off another open pour"),
  })
  .strict();

/** QC enters a cylinder break against a pour; give the strength in psi or in MPa. */
export const breakCreateBody = z
  .object({
    specimen_id: cylinderIdField,
    broken_at: instantField,
    strength_psi: z
      .number({ error: "Enter the strength in psi" })
      .positive({ error: "Strength must be above zero" })
      .max(40_000, { error: "Above 40,000 psi is not plausible" })
      .optional(),
    strength_mpa: z
      .number({ error: "Enter the strength in MPa" })
      .positive({ error: "Strength must be above zero" })
      .max(275, { error: "Above 275 MPa is not plausible" })
      .optional(),
    lab: text(80).nullable().optional(),
    note: text(1000).nullable().optional(),
  })
  .strict()
  .refine((b) => (b.strength_psi === undefined) !== (b.strength_mpa === undefined), {
    error: "Give strength_psi or strength_mpa (one of them)",
    path: ["strength_psi"],
  });

/** GET /api/v1/pours filters. */
export const pourListQuery = z.object({
  status: z.enum([...pourStatuses, "open"]).optional(),
  mix_id: z.coerce.number().int().positive().optional(),
  q: z.string().trim().max(80).optional(),
  limit: z.coerce.number().int().min(1).max(500).default(200),
});

export type PourCreateBody = z.infer<typeof pourCreateBody>;
export type PourPatchBody = z.infer<typeof pourPatchBody>;
export type PourSensorsBody = z.infer<typeof pourSensorsBody>;
export type BreakCreateBody = z.infer<typeof breakCreateBody>;
