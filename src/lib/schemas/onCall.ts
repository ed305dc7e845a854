import { z } from "zod";

/** The most escalation steps a rota may have (order 0 is told first). */
export const MAX_ESCALATION_ORDER = 9;

const clockField = (which: string) =>
  z
    .string({ error: `Enter the ${which} time` })
    .trim()
    .min(1, { error: `Enter the ${which} time` })
    .regex(/^([01][0-9]|2[0-3]):[0-5][0-9]$/, {
      error: "Use the 24-hour clock, e.g. 22:00",
    })
    .describe(`${which} time on the plant's wall clock, "HH:MM" (24-hour)`);

const shiftFields = {
  name: z
    .string()
    .trim()
    .max(60, { error: "Use at most 60 characters" })
    .describe('the shift as the plant calls it ("Nights")'),
  user_id: z
    .number({ error: "Choose a person" })
    .int({ error: "Choose a person" })
    .positive({ error: "Choose a person" })
    .describe("who is on call"),
  weekdays: z
    .array(
      z
        .number()
        .int()
        .min(0, { error: "Days are 0 (Sunday) to 6 (Saturday)" })
        .max(6, { error: "Days are 0 (Sunday) to 6 (Saturday)" }),
    )
    .min(1, { error: "Choose at least one day" })
    .max(7)
    .transform((days) => [...new Set(days)].sort((a, b) => a - b))
    .describe(
      "the days the shift starts on, 0 = Sunday ... 6 = Saturday; a shift ending before it starts runs past midnight into the next day",
    ),
  start: clockField("start"),
  end: clockField("end").describe(
    'end time, "HH:MM"; before the start the shift ends the next morning; equal to the start, it covers the whole day',
  ),
  escalation_order: z
    .number({ error: "Enter the order as a whole number" })
    .int({ error: "Enter the order as a whole number" })
    .min(0, { error: "The order starts at 0 (told first)" })
    .max(MAX_ESCALATION_ORDER, { error: `The order goes up to ${MAX_ESCALATION_ORDER}` })
    .describe("0 is told first, 1 on the first escalation, and so on"),
};

/** A manager adds a shift to the on-call rota. */
export const onCallCreateBody = z
  .object({
    ...shiftFields,
    name: shiftFields.name.default(""),
    escalation_order: shiftFields.escalation_order.default(0),
  })
  .strict();

/** A manager changes any part of a shift. */
export const onCallPatchBody = z
  .object(shiftFields)
  .partial()
  .strict()
  .refine((v) => Object.keys(v).length > 0, { error: "Send at least one field to change" });

export type OnCallCreate = z.infer<typeof onCallCreateBody>;
export type OnCallPatch = z.infer<typeof onCallPatchBody>;

const onCallPerson = z.object({
  user_id: z.number(),
  name: z.string(),
  role: z.enum(["manager", "qc", "operator", "viewer"]),
  escalation_order: z.number(),
  shift_id: z.number(),
  shift_name: z.string(),
  has_phone: z.boolean(),
  sms: z.boolean().describe("the person has texts turned on"),
  email: z.boolean(),
});

export const onCallShiftOut = z.object({
  id: z.number(),
  name: z.string(),
  user_id: z.number(),
  user_name: z.string(),
  role: z.enum(["manager", "qc", "operator", "viewer"]),
  active: z.boolean(),
  has_phone: z.boolean(),
  phone_masked: z.string().nullable().describe('the last digits only, "•••• 0142"'),
  sms: z.boolean().describe("the person has texts turned on"),
  email: z.boolean().describe("the person has e-mails turned on"),
  weekdays: z.array(z.number()),
  start: z.string(),
  end: z.string(),
  crosses_midnight: z.boolean(),
  escalation_order: z.number(),
});

/** The rota as GET /api/v1/on-call answers it. */
export const onCallAnswer = z.object({
  time_zone: z.string(),
  now: z.object({
    at: z.string(),
    on_call: z.array(onCallPerson).describe("told first, then each escalation in turn"),
    until: z.string().nullable().describe("when who is on call next changes; null: not this week"),
    next: z.array(onCallPerson).nullable().describe("who is on call from then"),
  }),
  shifts: z.array(onCallShiftOut),
  warnings: z.array(z.string()),
});

/** A shift as POST and PATCH answer it, with the warnings about its person. */
export const onCallShiftAnswer = onCallShiftOut.extend({ warnings: z.array(z.string()) });
