import type { APIRoute } from "astro";
import { alertRulePatchBody, draftOf } from "@/lib/schemas/alertRules";
import { ruleProblems } from "@/domain/alerts/ruleForm";
import { ruleKinds } from "@/domain/alerts/rules";
import {
  countRuleEpisodes,
  deleteAlertRule,
  getAlertRule,
  missingScope,
  ruleNamed,
  updateAlertRule,
  type AlertRulePatch,
} from "@/lib/server/db/queries/alertRules";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseBody, parseId } from "@/lib/server/http/parse";
import { badRequest, conflict, json, noContent, notFound } from "@/lib/server/http/responses";
import {
  presentRule,
  ruleFieldsOut,
  ruleNameTaken,
  scopeNotFound,
} from "@/lib/server/present/alertRules";

const ms = (min: number | null) => (min === null ? null : Math.round(min * 60_000));

export const GET: APIRoute = endpoint(async ({ locals, params }) => {
  requireAction(locals, "plant.read");
  const id = parseId(params.id);
  const view = id === null ? undefined : getAlertRule(id);
  return view ? json(presentRule(view)) : notFound("alert rule");
});

type Fields = ReturnType<typeof ruleFieldsOut>;
type Scope = Fields["scope"];

/**
 * QC or a manager changes any subset of a rule, merged into it (a scope field given replaces
 * that field; null clears it). The merged rule is checked whole for its kind, so a change of
 * kind names every field that no longer fits. A rule with episodes keeps its kind (409): they
 * were raised as that kind. Only what changed is written and audited.
 */
export const PATCH: APIRoute = endpoint(async (ctx) => {
  requireAction(ctx.locals, "quality.manage");
  const id = parseId(ctx.params.id);
  const view = id === null ? undefined : getAlertRule(id);
  if (!view) return notFound("alert rule");
  const parsed = await parseBody(ctx.request, alertRulePatchBody);
  if (!parsed.ok) return parsed.response;
  const body = parsed.data;

  const before = ruleFieldsOut(view.rule);
  const given = Object.fromEntries(
    Object.entries(body).filter(([k, v]) => k !== "scope" && v !== undefined),
  ) as Partial<Omit<Fields, "scope">>;
  const scopeGiven = Object.fromEntries(
    Object.entries(body.scope ?? {}).filter(([, v]) => v !== undefined),
  ) as Partial<Scope>;
  const after: Fields = { ...before, ...given, scope: { ...before.scope, ...scopeGiven } };

  const problems = ruleProblems(draftOf(after), "si");
  if (problems.length > 0)
    return badRequest("The rule does not hold together for its kind.", problems);
  const missing = missingScope({
    areaId: scopeGiven.area_id,
    sensorId: scopeGiven.sensor_id,
    pourId: scopeGiven.pour_id,
  });
  if (missing.length > 0) return scopeNotFound(missing);

  const changed = (Object.keys(given) as (keyof typeof given)[]).filter(
    (k) => after[k] !== before[k],
  );
  const scopeChanged = (Object.keys(scopeGiven) as (keyof Scope)[]).filter(
    (k) => after.scope[k] !== before.scope[k],
  );
  if (changed.length === 0 && scopeChanged.length === 0) return json(presentRule(view));
  if (changed.includes("name")) {
    const clash = ruleNamed(after.name, view.rule.id);
    if (clash) return ruleNameTaken(clash.name);
  }
  if (changed.includes("kind")) {
    const n = countRuleEpisodes(view.rule.id);
    if (n > 0)
      return conflict(
        `"${view.rule.name}" has ${n} alert episode${n === 1 ? "" : "s"} on record, raised as ${ruleKinds[view.rule.kind].label.toLowerCase()}; a new kind would change what they meant. Add a new rule instead, and disable this one if it is no longer wanted.`,
      );
  }

  const patch: AlertRulePatch = {};
  for (const k of changed) {
    switch (k) {
      case "name":
        patch.name = after.name;
        break;
      case "kind":
        patch.kind = after.kind;
        break;
      case "threshold":
        patch.threshold = after.threshold;
        break;
      case "threshold_high":
        patch.thresholdHigh = after.threshold_high;
        break;
      case "hold_min":
        patch.holdMs = ms(after.hold_min)!;
        break;
      case "clear_margin":
        patch.clearMargin = after.clear_margin;
        break;
      case "severity":
        patch.severity = after.severity;
        break;
      case "audience":
        patch.audience = after.audience;
        break;
      case "escalate_after_min":
        patch.escalateAfterMs = ms(after.escalate_after_min);
        break;
      case "enabled":
        patch.enabled = after.enabled;
        break;
      case "source":
        patch.source = after.source;
        break;
    }
  }
  for (const k of scopeChanged) {
    if (k === "area_id") patch.scopeAreaId = after.scope.area_id;
    if (k === "sensor_kind") patch.scopeSensorKind = after.scope.sensor_kind;
    if (k === "sensor_id") patch.scopeSensorId = after.scope.sensor_id;
    if (k === "pour_id") patch.scopePourId = after.scope.pour_id;
  }
  const pick = (f: Fields) => ({
    ...Object.fromEntries(changed.map((k) => [k, f[k]])),
    ...(scopeChanged.length > 0 && {
      scope: Object.fromEntries(scopeChanged.map((k) => [k, f.scope[k]])),
    }),
  });
  const updated = updateAlertRule(view.rule.id, patch, auditActor(ctx), {
    name: view.rule.name,
    before: pick(before),
    after: pick(after),
  });
  return json(presentRule(updated));
});

/**
 * QC or a manager deletes a rule that never raised an episode. One with episodes is refused
 * (409): its episodes are the audit record of what happened, so it is disabled instead.
 */
export const DELETE: APIRoute = endpoint(async (ctx) => {
  requireAction(ctx.locals, "quality.manage");
  const id = parseId(ctx.params.id);
  const view = id === null ? undefined : getAlertRule(id);
  if (!view) return notFound("alert rule");
  const outcome = deleteAlertRule(view.rule.id, auditActor(ctx), ruleFieldsOut(view.rule));
  if (outcome.ok) return noContent();
  if (outcome.reason === "not_found") return notFound("alert rule");
  const n = outcome.episodes;
  return conflict(
    `"${view.rule.name}" has ${n} alert episode${n === 1 ? "" : "s"} on record, and they are the audit trail of what happened, so the rule stays. Disable it instead: a disabled rule raises nothing.`,
  );
});
