import { z } from "zod";
import { MAX_RH_OFFSET_PCT, MAX_TEMP_OFFSET_C } from "@/domain/calibration";

const ISO_WITH_OFFSET = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2}(\.\d{1,9})?)?(Z|[+-]\d{2}:\d{2})$/i;
const INSTANT_ERROR = "Give a time as ISO 8601 with an offset, or as epoch milliseconds";

/** A moment as the API takes it: ISO 8601 with an offset, or epoch milliseconds; read as epoch ms. */
export const instantField = z
  .union([z.number(), z.string()], { error: INSTANT_ERROR })
  .transform((v, ctx) => {
    const ms = typeof v === "number" ? v : ISO_WITH_OFFSET.test(v) ? Date.parse(v) : Number.NaN;
    if (!Number.isSafeInteger(ms) || ms < 0) {
      ctx.addIssue({ code: "custom", message: INSTANT_ERROR });
      return z.NEVER;
    }
    return ms;
  });

/** A thermometer reading in °C, within what a sensor may send (-40 to 120 °C). */
const tempCField = z
  .number({ error: "Enter a temperature in °C" })
  .min(-40, { error: "Below -40 °C" })
  .max(120, { error: "Above 120 °C" });

/**
 * QC records a check of a sensor against a reference thermometer. `sensor_temp_c` is the
 * sensor's own reading, before any offset. The offset defaults to reference minus sensor,
 * the humidity offset to 0, the time of the check to now, and the next check to six months on.
 */
export const calibrationCreateBody = z
  .object({
    checked_at: instantField.optional(),
    reference_temp_c: tempCField,
    sensor_temp_c: tempCField,
    temp_offset_c: z
      .number({ error: "Enter an offset in °C" })
      .min(-MAX_TEMP_OFFSET_C, { error: `At most ${MAX_TEMP_OFFSET_C} °C either way` })
      .max(MAX_TEMP_OFFSET_C, { error: `At most ${MAX_TEMP_OFFSET_C} °C either way` })
      .optional(),
    rh_offset_pct: z
      .number({ error: "Enter an offset in % RH" })
      .min(-MAX_RH_OFFSET_PCT, { error: `At most ${MAX_RH_OFFSET_PCT} % RH either way` })
      .max(MAX_RH_OFFSET_PCT, { error: `At most ${MAX_RH_OFFSET_PCT} % RH either way` })
      .optional(),
    next_due_at: instantField.optional(),
    note: z
      .string()
      .trim()
      .max(1000, { error: "Use at most 1000 characters" })
      .nullable()
      .optional(),
  })
  .strict();
