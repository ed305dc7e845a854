import { describeLimit, ruleKinds } from "@/domain/alerts/rules";
import type { EpisodeView } from "../db/queries/alerts";

const iso = (ms: number | null) => (ms === null ? null : new Date(ms).toISOString());

/** An episode on the wire: the contract's fields, then what a page or script needs to read it. */
export function presentEpisode(e: EpisodeView) {
  return {
    id: e.id,
    rule: e.ruleName,
    sensor: e.sensorId,
    pour_id: e.pourId,
    state: e.state,
    opened_at: new Date(e.openedAt).toISOString(),
    acknowledged_at: iso(e.acknowledgedAt),
    cleared_at: iso(e.clearedAt),
    rule_id: e.ruleId,
    rule_kind: e.ruleKind,
    severity: e.severity,
    limit: describeLimit({
      kind: e.ruleKind,
      threshold: e.threshold,
      thresholdHigh: e.thresholdHigh,
    }),
    threshold: e.threshold,
    threshold_high: e.thresholdHigh,
    value_unit: ruleKinds[e.ruleKind].unit === "none" ? "mpa" : ruleKinds[e.ruleKind].unit,
    started_at: new Date(e.startedAt).toISOString(),
    trigger_value: e.triggerValue,
    worst_value: e.worstValue,
    last_value: e.lastValue,
    sensor_label: e.sensorLabel,
    pour_code: e.pourCode,
    acknowledged_by: e.acknowledgedByName,
    ack_note: e.ackNote,
    ack_via: e.ackVia,
    escalation_level: e.escalationLevel,
  };
}
