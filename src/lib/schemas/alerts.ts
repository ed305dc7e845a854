import { z } from "zod";

/** POST /api/v1/alerts/{id}/ack: what was done about it (optional, but asked for). */
export const alertAckBody = z.strictObject({
  note: z
    .string()
    .trim()
    .max(500, "keep the note under 500 characters")
    .nullish()
    .transform((v) => (v ? v : null)),
});

/** GET /api/v1/alerts query: every filter optional. */
export const alertListQuery = z.strictObject({
  state: z.enum(["open", "acknowledged", "cleared", "active"]).optional(),
  sensor: z.string().trim().min(1).max(64).optional(),
  pour_id: z.coerce.number().int().positive().optional(),
  rule_id: z.coerce.number().int().positive().optional(),
  severity: z.enum(["info", "warning", "critical"]).optional(),
  since: z
    .string()
    .refine((v) => !Number.isNaN(Date.parse(v)) || /^\d+$/.test(v), "an ISO 8601 time or epoch ms")
    .transform((v) => (/^\d+$/.test(v) ? Number(v) : Date.parse(v)))
    .optional(),
  before_id: z.coerce.number().int().positive().optional(),
  limit: z.coerce.number().int().min(1).max(1000).optional(),
});

const iso = z.string().nullable();

/** One episode as the API gives it: the contract's fields first, then the detail. */
export const alertOut = z.object({
  id: z.number(),
  rule: z.string(),
  sensor: z.string().nullable(),
  pour_id: z.number().nullable(),
  state: z.enum(["open", "acknowledged", "cleared"]),
  opened_at: z.string(),
  acknowledged_at: iso,
  cleared_at: iso,
  rule_id: z.number(),
  rule_kind: z.string(),
  severity: z.enum(["info", "warning", "critical"]),
  limit: z.string(),
  threshold: z.number().nullable(),
  threshold_high: z.number().nullable(),
  value_unit: z.string(),
  started_at: z.string(),
  trigger_value: z.number().nullable(),
  worst_value: z.number().nullable(),
  last_value: z.number().nullable(),
  sensor_label: z.string().nullable(),
  pour_code: z.string().nullable(),
  acknowledged_by: z.string().nullable(),
  ack_note: z.string().nullable(),
  ack_via: z.enum(["web", "sms"]).nullable(),
  escalation_level: z.number(),
});
