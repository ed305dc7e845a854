/**
 * The bodies and the answer of the alert-rule routes. Thresholds travel in SI with their unit
 * named beside them (`threshold_unit`: "c", "pct_rh", "c_per_h", "min", "pct_battery", "none");
 * hold and escalation in minutes. What must agree with the rule's kind is checked by
 * `ruleProblems` (src/domain/alerts/ruleForm.ts), the same checks the page's form makes.
 */
import { z } from "zod";
import type { RuleKind } from "@/domain/alerts/episode";
import { ruleBounds, ruleProblems, type RuleDraft } from "@/domain/alerts/ruleForm";
import { ruleKinds } from "@/domain/alerts/rules";
import { sensorKindValues } from "@/lib/vocabulary";

export const ruleKindList = Object.keys(ruleKinds) as [RuleKind, ...RuleKind[]];
export const severityList = ["info", "warning", "critical"] as const;
export const audienceList = ["on_call", "quality", "digest"] as const;
export const thresholdUnitList = ["c", "pct_rh", "c_per_h", "min", "pct_battery", "none"] as const;

const id = (what: string) =>
  z
    .number({ error: `Give the ${what}'s id` })
    .int({ error: `Give the ${what}'s id` })
    .positive({ error: `Give the ${what}'s id` });

const scopeFields = {
  area_id: id("area").nullable().describe("only sensors in this area"),
  sensor_kind: z
    .enum(sensorKindValues, { error: "Choose bag, embedded, bin or ambient" })
    .nullable()
    .describe("only sensors of this kind"),
  sensor_id: z
    .string({ error: "Give the sensor's id" })
    .trim()
    .min(1, { error: "Give the sensor's id" })
    .max(64)
    .nullable()
    .describe("only this sensor"),
  pour_id: id("pour").nullable().describe("only this pour (its sensors, or its milestone)"),
};

const ruleFields = {
  name: z
    .string({ error: "Enter a name" })
    .trim()
    .min(1, { error: "Enter a name" })
    .max(ruleBounds.nameMaxChars, { error: `At most ${ruleBounds.nameMaxChars} characters` }),
  kind: z.enum(ruleKindList, { error: `Choose one of ${ruleKindList.join(", ")}` }),
  threshold: z
    .number({ error: "Enter a number" })
    .nullable()
    .describe("the limit in threshold_unit (SI); null for pour milestones"),
  threshold_high: z
    .number({ error: "Enter a number" })
    .nullable()
    .describe("the upper limit of a range rule (bin_range), °C"),
  hold_min: z
    .number({ error: "Enter minutes" })
    .min(0, { error: "Zero or more minutes" })
    .max(ruleBounds.holdMaxMin, { error: `At most ${ruleBounds.holdMaxMin} minutes (a day)` })
    .describe("how long the condition must last, by the readings' own time, before it opens"),
  clear_margin: z
    .number({ error: "Enter a number" })
    .min(0, { error: "Zero or more" })
    .describe("how far back inside the limit a value must come to clear, in threshold_unit"),
  severity: z.enum(severityList, { error: "Choose info, warning or critical" }),
  audience: z
    .enum(audienceList, { error: "Choose on_call, quality or digest" })
    .describe(
      "on_call: texts the operator on call and e-mails QC and managers; quality: e-mails QC and managers; digest: in the daily digest",
    ),
  escalate_after_min: z
    .number({ error: "Enter minutes" })
    .min(ruleBounds.escalateMinMin, { error: `At least ${ruleBounds.escalateMinMin} minute` })
    .max(ruleBounds.escalateMaxMin, { error: `At most ${ruleBounds.escalateMaxMin} minutes` })
    .nullable()
    .describe("unacknowledged this long, the next person on call is told; null: never"),
  enabled: z.boolean({ error: "true or false" }),
  source: z
    .string()
    .trim()
    .max(ruleBounds.sourceMaxChars, { error: `At most ${ruleBounds.sourceMaxChars} characters` })
    .transform((s) => (s === "" ? null : s))
    .nullable()
    .describe("where the limit comes from: a specification, a standard, the engineer of record"),
};

type ScopeIn = { [K in keyof typeof scopeFields]?: z.infer<(typeof scopeFields)[K]> };

/** A rule's fields as the checks read them (anything absent takes its default). */
export function draftOf(b: {
  kind: RuleKind;
  threshold?: number | null;
  threshold_high?: number | null;
  hold_min?: number;
  clear_margin?: number;
  audience?: (typeof audienceList)[number];
  escalate_after_min?: number | null;
  scope?: ScopeIn;
}): RuleDraft {
  return {
    kind: b.kind,
    threshold: b.threshold ?? null,
    thresholdHigh: b.threshold_high ?? null,
    holdMin: b.hold_min ?? 0,
    clearMargin: b.clear_margin ?? 0,
    audience: b.audience ?? "on_call",
    escalateAfterMin: b.escalate_after_min ?? null,
    scope: {
      areaId: b.scope?.area_id ?? null,
      sensorKind: b.scope?.sensor_kind ?? null,
      sensorId: b.scope?.sensor_id ?? null,
      pourId: b.scope?.pour_id ?? null,
    },
  };
}

/** POST /api/v1/alert-rules: a new rule. Unnamed fields take their defaults. */
export const alertRuleCreateBody = z
  .object({
    name: ruleFields.name,
    kind: ruleFields.kind,
    threshold: ruleFields.threshold.default(null),
    threshold_high: ruleFields.threshold_high.default(null),
    hold_min: ruleFields.hold_min.default(0),
    clear_margin: ruleFields.clear_margin.default(0),
    severity: ruleFields.severity.default("warning"),
    audience: ruleFields.audience.default("on_call"),
    scope: z
      .object(scopeFields)
      .partial()
      .strict()
      .default({})
      .describe("all null (or absent): plant-wide; each field narrows it"),
    escalate_after_min: ruleFields.escalate_after_min.default(null),
    enabled: ruleFields.enabled.default(true),
    source: ruleFields.source.optional(),
  })
  .strict()
  .superRefine((b, ctx) => {
    for (const p of ruleProblems(draftOf(b), "si"))
      ctx.addIssue({ code: "custom", path: p.field.split("."), message: p.error });
  });
export type AlertRuleCreateBody = z.infer<typeof alertRuleCreateBody>;

/**
 * PATCH /api/v1/alert-rules/{id}: any subset, merged into the rule as JSON merge patch does
 * (RFC 7396: a scope field given replaces that field; null clears it). The route checks the
 * merged rule whole with `ruleProblems`.
 */
export const alertRulePatchBody = z
  .object({
    ...ruleFields,
    scope: z.object(scopeFields).partial().strict(),
    source: ruleFields.source,
  })
  .partial()
  .strict();
export type AlertRulePatchBody = z.infer<typeof alertRulePatchBody>;

/** A rule as the routes answer it. */
export const alertRuleOut = z.object({
  id: z.number().int(),
  name: z.string(),
  kind: z.enum(ruleKindList),
  threshold: z.number().nullable(),
  threshold_high: z.number().nullable(),
  threshold_unit: z.enum(thresholdUnitList),
  hold_min: z.number(),
  clear_margin: z.number(),
  severity: z.enum(severityList),
  audience: z.enum(audienceList),
  scope: z.object({
    area_id: z.number().int().nullable(),
    area: z.string().nullable(),
    sensor_kind: z.enum(sensorKindValues).nullable(),
    sensor_id: z.string().nullable(),
    pour_id: z.number().int().nullable(),
    pour_code: z.string().nullable(),
  }),
  escalate_after_min: z.number().nullable(),
  enabled: z.boolean(),
  source: z.string().nullable(),
  description: z.string().describe("what the rule alerts on, in words (SI)"),
  open_episodes: z.number().int().describe("episodes of the rule now open or acknowledged"),
  updated_at: z.string().nullable(),
});
export type AlertRuleOut = z.infer<typeof alertRuleOut>;

export const alertRuleListOut = z.object({ rules: z.array(alertRuleOut) });
