import { z } from "zod";
import { roles } from "@/lib/access";

/**
 * A gateway's name: also its MQTT user name, so plain characters only.
 * 1 to 64 letters, digits, dots, underscores and dashes.
 */
export const gatewayNameField = z
  .string({ error: "Enter a name" })
  .trim()
  .min(1, { error: "Enter a name" })
  .max(64, { error: "Use at most 64 characters" })
  .regex(/^[A-Za-z0-9._-]+$/, { error: "Use only letters, digits, dots, underscores and dashes" });

/** A manager adds a sensor gateway; the answer carries its key, once. */
export const gatewayCreateBody = z.object({ name: gatewayNameField }).strict();

/** What a script's API token is called, so people can tell tokens apart in lists and the audit log. */
export const tokenNameField = z
  .string({ error: "Enter a name" })
  .trim()
  .min(1, { error: "Enter a name" })
  .max(64, { error: "Use at most 64 characters" });

/** A manager makes an API token for a script, acting with the given role. */
export const tokenCreateBody = z
  .object({ name: tokenNameField, role: z.enum(roles, { error: "Choose a role" }) })
  .strict();
