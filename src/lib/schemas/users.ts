import { z } from "zod";
import { roles } from "@/lib/access";

/**
 * E.164 phone for texts: + and 8 to 15 digits (ITU-T E.164 allows at most 15); spaces,
 * dashes, dots and brackets are dropped. Empty means no phone.
 */
export const phoneField = z
  .string()
  .trim()
  .transform((s) => s.replace(/[\s().-]/g, ""))
  .refine((s) => s === "" || /^\+[1-9][0-9]{7,14}$/.test(s), {
    message: "Use the international form: + and country code, 8 to 15 digits, e.g. +1 555 010 0123",
  })
  .transform((s) => (s === "" ? null : s));

export const emailField = z
  .string()
  .trim()
  .toLowerCase()
  .pipe(z.email({ message: "Enter a valid e-mail address" }))
  .pipe(z.string().max(254));

export const nameField = z.string().trim().min(1, { message: "Enter a name" }).max(120);

export const newPasswordField = z
  .string()
  .min(10, { message: "Use at least 10 characters" })
  .max(256, { message: "Use at most 256 characters" });

/** What every user may change of their own account. */
export const profilePatchBody = z
  .object({
    name: nameField,
    email: emailField,
    phone: phoneField.nullable(),
    units: z.enum(["us", "si"]),
    theme: z.enum(["system", "light", "dark"]),
    notify_sms: z.boolean().describe("alert texts to your phone"),
    notify_email: z.boolean().describe("alert e-mails"),
    notify_digest: z
      .boolean()
      .describe(
        "the daily digest e-mail of minor alerts; never set, it is on for QC and managers and off for others",
      ),
  })
  .partial()
  .strict();

export const passwordChangeBody = z
  .object({
    current_password: z.string().min(1, { message: "Enter your current password" }).max(1024),
    new_password: newPasswordField,
  })
  .strict();

/** A manager adds a person. Without a password, a one-time password is made and shown once. */
export const userCreateBody = z
  .object({
    email: emailField,
    name: nameField,
    role: z.enum(roles),
    phone: phoneField.nullable().optional(),
    password: newPasswordField.optional(),
  })
  .strict();

/** A manager changes a person's role, name, phone, or deactivates them. */
export const userPatchBody = z
  .object({
    name: nameField,
    role: z.enum(roles),
    phone: phoneField.nullable(),
    active: z.boolean(),
  })
  .partial()
  .strict();
