/** Alert rules as the API answers them: SI thresholds with their unit named, minutes, ISO times. */
import { describeLimit, ruleKinds } from "@/domain/alerts/rules";
import type { AlertRuleOut } from "@/lib/schemas/alertRules";
import type { AlertRuleRow, AlertRuleView } from "../db/queries/alertRules";
import { problem, type FieldError } from "../http/responses";

/** A well-formed rule whose scope names an area, sensor or pour Plinth does not have (422). */
export const scopeNotFound = (errors: FieldError[]) =>
  problem(
    422,
    "scope-not-found",
    "The rule's scope names something that does not exist",
    "Choose an area, sensor or pour that Plinth knows.",
    { errors },
  );

/**
 * Another rule already has the name (409): rules are told apart by name on the alerts, in
 * texts and in the audit, so two of the same name would read as one.
 */
export const ruleNameTaken = (name: string) =>
  problem(
    409,
    "rule-name-taken",
    "Another rule has that name",
    `A rule called "${name}" already exists. Give this one a name of its own, or change that rule instead.`,
    { errors: [{ field: "name", error: `Another rule is already called "${name}"` }] },
  );

const minutes = (ms: number | null) => (ms === null ? null : ms / 60_000);

/** The rule's own fields on the wire (what an audit entry records of it). */
export function ruleFieldsOut(r: AlertRuleRow) {
  return {
    name: r.name,
    kind: r.kind,
    threshold: r.threshold,
    threshold_high: r.thresholdHigh,
    hold_min: r.holdMs / 60_000,
    clear_margin: r.clearMargin,
    severity: r.severity,
    audience: r.audience,
    scope: {
      area_id: r.scopeAreaId,
      sensor_kind: r.scopeSensorKind,
      sensor_id: r.scopeSensorId,
      pour_id: r.scopePourId,
    },
    escalate_after_min: minutes(r.escalateAfterMs),
    enabled: r.enabled,
    source: r.source,
  };
}

export function presentRule(v: AlertRuleView): AlertRuleOut {
  const r = v.rule;
  const f = ruleFieldsOut(r);
  return {
    id: r.id,
    name: f.name,
    kind: f.kind,
    threshold: f.threshold,
    threshold_high: f.threshold_high,
    threshold_unit: ruleKinds[r.kind].unit,
    hold_min: f.hold_min,
    clear_margin: f.clear_margin,
    severity: f.severity,
    audience: f.audience,
    scope: {
      area_id: r.scopeAreaId,
      area: v.areaName,
      sensor_kind: r.scopeSensorKind,
      sensor_id: r.scopeSensorId,
      pour_id: r.scopePourId,
      pour_code: v.pourCode,
    },
    escalate_after_min: f.escalate_after_min,
    enabled: f.enabled,
    source: f.source,
    description: describeLimit(r),
    open_episodes: v.openEpisodes,
    updated_at: new Date(r.updatedAt ?? r.createdAt).toISOString(),
  };
}
