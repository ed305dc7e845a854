import { z } from "zod";
import { areaKindValues, sensorKindValues } from "@/lib/vocabulary";

/** A manager adds a place: a cure room, the yard, a bin area. */
export const areaCreateBody = z
  .object({
    name: z.string().trim().min(1).max(80),
    kind: z.enum(areaKindValues),
    description: z.string().trim().max(200).optional(),
  })
  .strict();

/** A manager names, places or retires a sensor; `area` is the area's name (null: no area). */
export const sensorPatchBody = z
  .object({
    label: z.string().trim().min(1).max(80).nullable(),
    kind: z.enum(sensorKindValues).nullable(),
    area: z.string().trim().min(1).max(80).nullable(),
    status: z.enum(["active", "retired"]),
  })
  .partial()
  .strict();

/** One reading as a gateway sends it (documentation of the contract; each is checked by src/domain/readings.ts). */
export const readingIn = z.object({
  sensor: z
    .string()
    .regex(/^[A-Za-z0-9][A-Za-z0-9._:-]{0,63}$/)
    .describe("the sensor's id; a new id registers a new sensor"),
  ts: z.union([
    z.string().describe("ISO 8601 with an offset"),
    z.number().int().describe("epoch milliseconds"),
  ]),
  temp_c: z.number().min(-40).max(120).optional().describe("°C; send temp_c or temp_f"),
  temp_f: z.number().min(-40).max(248).optional().describe("°F; send temp_c or temp_f"),
  rh: z.number().min(0).max(100).nullable().optional().describe("relative humidity, %"),
  battery: z.number().min(0).max(100).nullable().optional().describe("battery charge, %"),
});

export const readingBatchBody = z.object({ readings: z.array(readingIn).max(5_000) });

export const readingBatchAnswer = z.object({
  accepted: z.number().int(),
  duplicates: z.number().int(),
  rejected: z.array(z.object({ index: z.number().int(), error: z.string() })),
});
