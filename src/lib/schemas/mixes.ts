/**
 * The bodies of the mix and calibration routes. Strengths travel in psi and proportions in
 * pounds per cubic yard (the contract's names); the routes store MPa and kg/m³.
 */
import { z } from "zod";
import { instantField } from "./calibrations";

/** The strength-maturity forms a mix may be calibrated with (domain.md §3.1). */
export const curveModels = ["log", "hyperbolic", "exponential"] as const;

/** Limits a mix's fields must keep (Plinth policy: outside them a unit or a digit is wrong). */
export const mixLimits = {
  designPsi: { min: 1_000, max: 30_000 },
  thresholdPsi: { min: 100, max: 30_000 },
  /** Datum temperatures in use run from about −10 °C to a few degrees above 0 (domain.md §1.2, §3.3). */
  datumC: { min: -20, max: 10 },
  /** Apparent activation energies run about 33 to 60 kJ/mol (domain.md §2.2). */
  activationJMol: { min: 15_000, max: 80_000 },
  placingC: { min: -10, max: 60 },
  moisturePct: { min: 0, max: 30 },
} as const;

const num = (what: string, min: number, max: number, unit: string) =>
  z
    .number({ error: `Enter ${what}` })
    .min(min, { error: `At least ${min.toLocaleString("en-US")} ${unit}` })
    .max(max, { error: `At most ${max.toLocaleString("en-US")} ${unit}` });

const lbYd3 = (what: string, max: number) => num(what, 0, max, "lb/yd³").nullable().optional();

/** Every field of a mix as the API takes it; create requires the first seven. */
const mixFields = {
  name: z
    .string({ error: "Enter a name" })
    .trim()
    .min(1, { error: "Enter a name" })
    .max(40, { error: "Use at most 40 characters" })
    .regex(/^$|^[\p{L}\p{N}][\p{L}\p{N} ._#+/-]*$/u, {
      error: "Start with a letter or digit; then letters, digits, spaces and . _ # + / -",
    }),
  description: z
    .string()
    .trim()
    .max(500, { error: "Use at most 500 characters" })
    .transform((s) => (s === "" ? null : s))
    .nullable()
    .optional(),
  design_strength_psi: num(
    "the design strength",
    mixLimits.designPsi.min,
    mixLimits.designPsi.max,
    "psi",
  ),
  strip_strength_psi: num(
    "the strip strength",
    mixLimits.thresholdPsi.min,
    mixLimits.thresholdPsi.max,
    "psi",
  ),
  ship_strength_psi: num(
    "the ship strength",
    mixLimits.thresholdPsi.min,
    mixLimits.thresholdPsi.max,
    "psi",
  ),
  datum_temp_c: num("the datum temperature", mixLimits.datumC.min, mixLimits.datumC.max, "°C"),
  activation_energy_j_mol: num(
    "the activation energy",
    mixLimits.activationJMol.min,
    mixLimits.activationJMol.max,
    "J/mol",
  ),
  placing_temp_min_c: num("a temperature", mixLimits.placingC.min, mixLimits.placingC.max, "°C")
    .nullable()
    .optional(),
  placing_temp_max_c: num("a temperature", mixLimits.placingC.min, mixLimits.placingC.max, "°C")
    .nullable()
    .optional(),
  cement_lb_yd3: lbYd3("a weight", 2_000),
  scm_lb_yd3: lbYd3("a weight", 1_500),
  water_lb_yd3: lbYd3("a weight", 800),
  fine_agg_lb_yd3: lbYd3("a weight", 3_500),
  coarse_agg_lb_yd3: lbYd3("a weight", 3_500),
  fine_agg_moisture_pct: num(
    "a moisture",
    mixLimits.moisturePct.min,
    mixLimits.moisturePct.max,
    "%",
  )
    .nullable()
    .optional(),
  coarse_agg_moisture_pct: num(
    "a moisture",
    mixLimits.moisturePct.min,
    mixLimits.moisturePct.max,
    "%",
  )
    .nullable()
    .optional(),
};

/** The fields whose values must agree with one another, as a whole mix has them. */
export interface MixConsistencyInput {
  design_strength_psi: number;
  strip_strength_psi: number;
  ship_strength_psi: number;
  placing_temp_min_c?: number | null;
  placing_temp_max_c?: number | null;
}

/**
 * What disagrees in a whole mix: strip ≤ ship ≤ design strength (a piece is stripped before it
 * ships, and ships at or below the strength it is designed for), and the placing range's low end
 * below its high end. One entry per offending field.
 */
export function mixConsistencyErrors(m: MixConsistencyInput): { field: string; error: string }[] {
  const out: { field: string; error: string }[] = [];
  if (m.strip_strength_psi > m.ship_strength_psi)
    out.push({
      field: "strip_strength_psi",
      error: "Strip strength must not be above ship strength",
    });
  if (m.ship_strength_psi > m.design_strength_psi)
    out.push({
      field: "ship_strength_psi",
      error: "Ship strength must not be above the design strength",
    });
  const lo = m.placing_temp_min_c;
  const hi = m.placing_temp_max_c;
  if (lo !== null && lo !== undefined && hi !== null && hi !== undefined && lo >= hi)
    out.push({ field: "placing_temp_max_c", error: "The highest must be above the lowest" });
  return out;
}

/** POST /api/v1/mixes (contract): a new mix. */
export const mixCreateBody = z
  .object(mixFields)
  .strict()
  .superRefine((m, ctx) => {
    for (const e of mixConsistencyErrors(m))
      ctx.addIssue({ code: "custom", path: [e.field], message: e.error });
  });
export type MixCreateBody = z.infer<typeof mixCreateBody>;

/** PATCH /api/v1/mixes/{id}: any subset of the create fields (checked whole by the route). */
export const mixPatchBody = z.object(mixFields).partial().strict();
export type MixPatchBody = z.infer<typeof mixPatchBody>;

/** POST /api/v1/mixes/{id}/calibration (contract): fit a curve, to given points or the stored ones. */
export const calibrationFitBody = z
  .object({
    model: z.enum(curveModels, { error: "Choose log, hyperbolic or exponential" }).default("log"),
    points: z
      .array(
        z
          .object({
            ttf_c_h: z
              .number({ error: "Enter the maturity in °C·h" })
              .gt(0, { error: "Above 0 °C·h" })
              .max(1_000_000, { error: "At most 1,000,000 °C·h" }),
            strength_psi: z
              .number({ error: "Enter the strength in psi" })
              .gt(0, { error: "Above 0 psi" })
              .max(30_000, { error: "At most 30,000 psi" }),
          })
          .strict(),
      )
      .max(500, { error: "At most 500 points" })
      .optional(),
  })
  .strict();
export type CalibrationFitBody = z.infer<typeof calibrationFitBody>;

/** Most readings a specimen's record may carry (a month at one a minute is 43,200). */
export const MAX_RECORD_READINGS = 50_000;

/**
 * POST /api/v1/mixes/{id}/points: one age's cylinder breaks. Strength in psi (or MPa) as the
 * mean of the cylinders; the maturity as a temperature-time factor, or from a constant curing
 * temperature and the age, or from the specimens' temperature record.
 */
export const pointCreateBody = z
  .object({
    age_h: z
      .number({ error: "Enter the age in hours" })
      .gt(0, { error: "Above 0 h" })
      .max(9_600, { error: "At most 9,600 h (400 days)" })
      .optional(),
    strength_psi: z
      .number({ error: "Enter the strength in psi" })
      .min(100, { error: "At least 100 psi" })
      .max(30_000, { error: "At most 30,000 psi" })
      .optional(),
    strength_mpa: z
      .number({ error: "Enter the strength in MPa" })
      .min(0.7, { error: "At least 0.7 MPa" })
      .max(206, { error: "At most 206 MPa" })
      .optional(),
    specimens: z
      .string()
      .trim()
      .max(500, { error: "Use at most 500 characters" })
      .transform((s) => (s === "" ? null : s))
      .nullable()
      .optional(),
    broken_at: instantField.optional(),
    ttf_c_h: z
      .number({ error: "Enter the maturity in °C·h" })
      .gt(0, { error: "Above 0 °C·h" })
      .max(1_000_000, { error: "At most 1,000,000 °C·h" })
      .optional(),
    temp_c: z
      .number({ error: "Enter the curing temperature in °C" })
      .min(-10, { error: "At least −10 °C" })
      .max(100, { error: "At most 100 °C" })
      .optional(),
    temps: z
      .array(
        z
          .object({
            ts: instantField,
            temp_c: z
              .number({ error: "Enter a temperature in °C" })
              .min(-40, { error: "Below −40 °C" })
              .max(120, { error: "Above 120 °C" }),
          })
          .strict(),
      )
      .min(2, { error: "A record needs two or more readings" })
      .max(MAX_RECORD_READINGS, { error: `At most ${MAX_RECORD_READINGS} readings` })
      .optional(),
  })
  .strict()
  .superRefine((p, ctx) => {
    const strengths = [p.strength_psi, p.strength_mpa].filter((v) => v !== undefined).length;
    if (strengths !== 1)
      ctx.addIssue({
        code: "custom",
        path: ["strength_psi"],
        message: "Give the mean strength of the cylinders: strength_psi or strength_mpa",
      });
    const sources = [p.ttf_c_h, p.temp_c, p.temps].filter((v) => v !== undefined).length;
    if (sources !== 1)
      ctx.addIssue({
        code: "custom",
        path: ["ttf_c_h"],
        message:
          "Give the maturity one way: ttf_c_h, or a curing temperature temp_c, or a temperature record temps",
      });
    if (p.temp_c !== undefined && p.age_h === undefined)
      ctx.addIssue({
        code: "custom",
        path: ["age_h"],
        message: "Enter the age: with a curing temperature it gives the maturity",
      });
  });
export type PointCreateBody = z.infer<typeof pointCreateBody>;

/** The largest lab file taken, in characters (a lab's sheet of breaks is a few kilobytes). */
export const MAX_LAB_CSV_CHARS = 1024 * 1024;

/** POST /api/v1/mixes/{id}/points/upload: the lab's file of breaks, read and (unless a dry run) stored. */
export const labUploadBody = z
  .object({
    file_name: z
      .string({ error: "Give the file's name" })
      .max(1_000)
      .transform((name) =>
        [...(name.split(/[\\/]/).at(-1) ?? "")]
          .filter((ch) => ch.charCodeAt(0) >= 0x20 && ch.charCodeAt(0) !== 0x7f)
          .join("")
          .trim(),
      )
      .pipe(z.string().min(1, { error: "Give the file's name" }).max(255)),
    csv: z
      .string({ error: "Send the file's text" })
      .min(1, { error: "The file is empty" })
      .max(MAX_LAB_CSV_CHARS, { error: "The file is over 1 MiB" }),
    dry_run: z.boolean().default(false),
    age_unit: z.enum(["d", "h"]).nullable().optional(),
    strength_unit: z.enum(["psi", "mpa"]).nullable().optional(),
    temp_unit: z.enum(["c", "f"]).nullable().optional(),
    curing_temp_c: z
      .number({ error: "Enter a temperature in °C" })
      .min(-10, { error: "At least −10 °C" })
      .max(100, { error: "At most 100 °C" })
      .nullable()
      .optional(),
  })
  .strict();
export type LabUploadBody = z.infer<typeof labUploadBody>;
