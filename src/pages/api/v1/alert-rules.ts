import type { APIRoute } from "astro";
import { alertRuleCreateBody } from "@/lib/schemas/alertRules";
import {
  createAlertRule,
  listAlertRules,
  missingScope,
  ruleNamed,
} from "@/lib/server/db/queries/alertRules";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseBody } from "@/lib/server/http/parse";
import { json } from "@/lib/server/http/responses";
import {
  presentRule,
  ruleFieldsOut,
  ruleNameTaken,
  scopeNotFound,
} from "@/lib/server/present/alertRules";

/** Every alert rule by name, with what it watches and its open episodes. */
export const GET: APIRoute = endpoint(async ({ locals }) => {
  requireAction(locals, "plant.read");
  return json({ rules: listAlertRules().map(presentRule) });
});

/** QC or a manager adds a rule; the alert engine picks it up at once. */
export const POST: APIRoute = endpoint(async (ctx) => {
  const caller = requireAction(ctx.locals, "quality.manage");
  const parsed = await parseBody(ctx.request, alertRuleCreateBody);
  if (!parsed.ok) return parsed.response;
  const b = parsed.data;
  const missing = missingScope({
    areaId: b.scope.area_id,
    sensorId: b.scope.sensor_id,
    pourId: b.scope.pour_id,
  });
  if (missing.length > 0) return scopeNotFound(missing);
  const clash = ruleNamed(b.name);
  if (clash) return ruleNameTaken(clash.name);
  const view = createAlertRule(
    {
      name: b.name,
      kind: b.kind,
      threshold: b.threshold,
      thresholdHigh: b.threshold_high,
      holdMs: Math.round(b.hold_min * 60_000),
      clearMargin: b.clear_margin,
      severity: b.severity,
      audience: b.audience,
      scopeAreaId: b.scope.area_id ?? null,
      scopeSensorKind: b.scope.sensor_kind ?? null,
      scopeSensorId: b.scope.sensor_id ?? null,
      scopePourId: b.scope.pour_id ?? null,
      escalateAfterMs:
        b.escalate_after_min === null ? null : Math.round(b.escalate_after_min * 60_000),
      enabled: b.enabled,
      source: b.source ?? null,
      createdBy: caller.kind === "user" ? caller.user.id : null,
    },
    auditActor(ctx),
    (row) => ruleFieldsOut(row),
  );
  return json(presentRule(view), 201, { location: `/api/v1/alert-rules/${view.rule.id}` });
});
