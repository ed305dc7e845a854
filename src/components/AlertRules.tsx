import { zodResolver } from "@hookform/resolvers/zod";
import { useEffect, useId, useRef, useState, type ReactNode } from "react";
import { useForm, type UseFormReturn } from "react-hook-form";
import { z } from "zod";
import type { RuleKind } from "@/domain/alerts/episode";
import {
  audienceWords,
  blankRule,
  clearWords,
  displaySymbol,
  escalationWords,
  formFieldOf,
  formValuesOf,
  holdWords,
  minutesWords,
  readRuleForm,
  ruleBounds,
  ruleGroupOf,
  ruleGroups,
  scopeWords,
  sensorKindWords,
  severityWords,
  watchWords,
  type RuleFields,
  type RuleFormValues,
} from "@/domain/alerts/ruleForm";
import {
  defaultRules,
  ruleKinds,
  type Audience,
  type SensorKind,
  type Severity,
} from "@/domain/alerts/rules";
import type { UnitSystem } from "@/domain/units";
import { formatDateTime, readProblem } from "@/lib/format";
import type { AlertRuleOut } from "@/lib/schemas/alertRules";

export interface ScopeChoices {
  areas: { id: number; name: string }[];
  sensors: { id: string; label: string | null; kind: string | null; area: string | null }[];
  pours: { id: number; code: string }[];
}

interface Props {
  initialRules: AlertRuleOut[];
  units: UnitSystem;
  /** QC and managers edit; everyone else reads. */
  canEdit: boolean;
  choices: ScopeChoices;
  timeZone: string;
}

const kindList = Object.keys(ruleKinds) as RuleKind[];
const severities: Severity[] = ["critical", "warning", "info"];
const audiences: Audience[] = ["on_call", "quality", "digest"];
const sensorKinds = Object.keys(sensorKindWords) as SensorKind[];

const tones = {
  critical: { cls: "bg-alarm-bg text-alarm", mark: "■" },
  warning: { cls: "bg-warn-bg text-warn", mark: "▲" },
  info: { cls: "bg-info-bg text-accent", mark: "◆" },
} as const;

/** A state by word and mark, never colour alone (as StateBadge.astro draws it). */
function Badge({ cls, mark, children }: { cls: string; mark: string; children: ReactNode }) {
  return (
    <span
      className={`inline-flex items-center gap-1 rounded-full px-2 py-0.5 text-xs font-bold ${cls}`}
    >
      <span aria-hidden="true">{mark}</span>
      {children}
    </span>
  );
}

function SeverityBadge({ severity }: { severity: Severity }) {
  const t = tones[severity];
  return (
    <Badge cls={t.cls} mark={t.mark}>
      {severityWords[severity]}
    </Badge>
  );
}

/** A rule on the wire as the form's fields, in SI. */
function fieldsOf(r: AlertRuleOut): RuleFields {
  return {
    name: r.name,
    kind: r.kind,
    threshold: r.threshold,
    thresholdHigh: r.threshold_high,
    holdMin: r.hold_min,
    clearMargin: r.clear_margin,
    severity: r.severity,
    audience: r.audience,
    escalateAfterMin: r.escalate_after_min,
    scope: {
      areaId: r.scope.area_id,
      sensorKind: r.scope.sensor_kind,
      sensorId: r.scope.sensor_id,
      pourId: r.scope.pour_id,
    },
    enabled: r.enabled,
    source: r.source,
  };
}

/** The API body of a whole rule. */
function bodyOf(f: RuleFields) {
  return {
    name: f.name,
    kind: f.kind,
    threshold: f.threshold,
    threshold_high: f.thresholdHigh,
    hold_min: f.holdMin,
    clear_margin: f.clearMargin,
    severity: f.severity,
    audience: f.audience,
    escalate_after_min: f.escalateAfterMin,
    scope: {
      area_id: f.scope.areaId,
      sensor_kind: f.scope.sensorKind,
      sensor_id: f.scope.sensorId,
      pour_id: f.scope.pourId,
    },
    enabled: f.enabled,
    source: f.source,
  };
}

const scopeInputs: (keyof RuleFormValues)[] = ["area_id", "sensor_kind", "sensor_id", "pour_id"];

/**
 * What an edit sends: only the fields whose inputs changed (so a limit shown in °F and left
 * alone is not sent back rounded). A new kind sends the whole rule, since what fits depends on
 * it; a scope change sends the whole scope; a new audience sends the escalation with it.
 */
function patchOf(start: RuleFormValues, now: RuleFormValues, f: RuleFields) {
  const full = bodyOf(f);
  if (start.kind !== now.kind) return full as Record<string, unknown>;
  const out: Record<string, unknown> = {};
  const changed = (k: keyof RuleFormValues) => start[k] !== now[k];
  for (const k of [
    "name",
    "threshold",
    "threshold_high",
    "hold_min",
    "clear_margin",
    "severity",
    "audience",
    "escalate_after_min",
    "enabled",
    "source",
  ] as const) {
    if (changed(k)) out[k] = full[k];
  }
  if (changed("audience")) out.escalate_after_min = full.escalate_after_min;
  if (scopeInputs.some(changed)) out.scope = full.scope;
  return out;
}

const formSchema = (units: UnitSystem) =>
  z
    .object({
      name: z.string(),
      kind: z.enum(kindList as [RuleKind, ...RuleKind[]]),
      threshold: z.string(),
      threshold_high: z.string(),
      hold_min: z.string(),
      clear_margin: z.string(),
      severity: z.enum(["info", "warning", "critical"]),
      audience: z.enum(["on_call", "quality", "digest"]),
      escalate_after_min: z.string(),
      area_id: z.string(),
      sensor_kind: z.string(),
      sensor_id: z.string(),
      pour_id: z.string(),
      source: z.string(),
      enabled: z.boolean(),
    })
    .superRefine((v, ctx) => {
      const r = readRuleForm(v, units);
      if (!r.ok)
        for (const e of r.errors)
          ctx.addIssue({ code: "custom", path: [e.field], message: e.error });
    });

/** The starting values for a kind: Plinth's default of that kind, if there is one. */
function kindDefaults(kind: RuleKind, units: UnitSystem): Partial<RuleFormValues> {
  const d = defaultRules.find((x) => x.kind === kind);
  if (!d) return { threshold: "", threshold_high: "", clear_margin: "0", hold_min: "0" };
  const v = formValuesOf(
    {
      ...blankRule,
      kind,
      threshold: d.threshold,
      thresholdHigh: d.thresholdHigh,
      holdMin: d.holdMin,
      clearMargin: d.clearMargin,
    },
    units,
  );
  return {
    threshold: v.threshold,
    threshold_high: v.threshold_high,
    clear_margin: v.clear_margin,
    hold_min: v.hold_min,
  };
}

/** A call to the API; a network failure comes back as a problem like any other. */
async function send(path: string, method: string, body?: unknown): Promise<Response> {
  try {
    return await fetch(path, {
      method,
      headers: body === undefined ? {} : { "content-type": "application/json" },
      body: body === undefined ? null : JSON.stringify(body),
    });
  } catch {
    return new Response(
      JSON.stringify({ detail: "Plinth could not be reached, so nothing changed. Try again." }),
      { status: 503, headers: { "content-type": "application/problem+json" } },
    );
  }
}

interface InputProps {
  id: string;
  label: string;
  hint?: ReactNode;
  error?: string | undefined;
  children: (describedBy: string | undefined) => ReactNode;
  className?: string;
}

/** A labelled input with its hint and error, both tied to it for screen readers. */
function Input({ id, label, hint, error, children, className }: InputProps) {
  const ids = [hint ? `${id}-hint` : null, error ? `${id}-err` : null].filter(Boolean).join(" ");
  return (
    <div className={`field content-start ${className ?? ""}`}>
      <label htmlFor={id}>{label}</label>
      {children(ids || undefined)}
      {hint && (
        <p id={`${id}-hint`} className="hint">
          {hint}
        </p>
      )}
      {error && (
        <p id={`${id}-err`} className="error-text">
          {error}
        </p>
      )}
    </div>
  );
}

interface FormProps {
  rule: AlertRuleOut | null;
  units: UnitSystem;
  choices: ScopeChoices;
  onSaved: (rule: AlertRuleOut, created: boolean) => void;
  onCancel: () => void;
}

/** Add a rule, or edit one, in the person's own units. */
function RuleForm({ rule, units, choices, onSaved, onCancel }: FormProps) {
  const uid = useId();
  const [start] = useState(() => formValuesOf(rule ? fieldsOf(rule) : blankRule, units));
  const [message, setMessage] = useState<string | null>(null);
  const form: UseFormReturn<RuleFormValues> = useForm<RuleFormValues>({
    resolver: zodResolver(formSchema(units)),
    defaultValues: start,
    shouldFocusError: true,
  });
  const { errors, isSubmitting } = form.formState;
  const v = form.watch();
  const info = ruleKinds[v.kind];
  const sym = displaySymbol(info.unit, units);
  const id = (k: string) => `${uid}-${k}`;
  const err = (k: keyof RuleFormValues) => errors[k]?.message;
  const invalid = (k: keyof RuleFormValues) => (errors[k] ? true : undefined);

  // The example under the margin: what these values mean, once they can be read.
  const read = readRuleForm({ ...v, name: v.name.trim() || "-" }, units);
  const clears = read.ok ? clearWords(read.rule, units) : "";
  const example = read.ok
    ? `With these values it alerts on ${watchWords(read.rule, units)}${
        read.rule.holdMin > 0 ? ` lasting ${minutesWords(read.rule.holdMin)}` : ""
      }, and clears ${/^(Once|When) /.test(clears) ? "" : "once "}${clears.charAt(0).toLowerCase()}${clears.slice(1)}.`
    : null;

  const kindField = form.register("kind");

  async function submit(values: RuleFormValues) {
    setMessage(null);
    const r = readRuleForm(values, units);
    if (!r.ok) return;
    const body = rule ? patchOf(start, values, r.rule) : bodyOf(r.rule);
    if (rule && Object.keys(body).length === 0) {
      onCancel();
      return;
    }
    const res = await send(
      rule ? `/api/v1/alert-rules/${rule.id}` : "/api/v1/alert-rules",
      rule ? "PATCH" : "POST",
      body,
    );
    if (!res.ok) {
      const p = await readProblem(res);
      let first: keyof RuleFormValues | null = null;
      for (const [field, text] of Object.entries(p.fields)) {
        const k = formFieldOf(field);
        if (!k) continue;
        form.setError(k, { message: text });
        first ??= k;
      }
      setMessage(p.message);
      if (first) form.setFocus(first);
      return;
    }
    onSaved((await res.json()) as AlertRuleOut, !rule);
  }

  const numberInput = (k: keyof RuleFormValues, describedBy: string | undefined) => (
    <input
      id={id(k)}
      className="input figure"
      inputMode="decimal"
      autoComplete="off"
      aria-invalid={invalid(k)}
      aria-describedby={describedBy}
      {...form.register(k)}
    />
  );

  const title = rule ? `Edit “${rule.name}”` : "Add a rule";
  return (
    <form onSubmit={form.handleSubmit(submit)} noValidate aria-label={title} className="grid gap-5">
      <div className="grid gap-4 sm:grid-cols-2">
        <Input id={id("name")} label="Name" error={err("name")}>
          {(d) => (
            <input
              id={id("name")}
              className="input"
              autoComplete="off"
              maxLength={ruleBounds.nameMaxChars}
              aria-invalid={invalid("name")}
              aria-describedby={d}
              {...form.register("name")}
            />
          )}
        </Input>
        <Input
          id={id("kind")}
          label="What it watches for"
          hint={`It will ${info.meaning}${info.pour ? "." : " a limit you set."}`}
          error={err("kind")}
        >
          {(d) => (
            <select
              id={id("kind")}
              className="input"
              aria-describedby={d}
              {...kindField}
              onChange={(e) => {
                const next = e.target.value as RuleKind;
                const prevUnit = ruleKinds[form.getValues("kind")].unit;
                void kindField.onChange(e);
                if (ruleKinds[next].unit !== prevUnit || ruleKinds[next].range) {
                  for (const [k, val] of Object.entries(kindDefaults(next, units)))
                    form.setValue(k as keyof RuleFormValues, val);
                }
              }}
            >
              {kindList.map((k) => (
                <option key={k} value={k}>
                  {ruleKinds[k].label}
                </option>
              ))}
            </select>
          )}
        </Input>
      </div>

      {info.pour ? (
        <p className="rounded-md bg-info-bg px-3 py-2 text-sm" role="note">
          The limit is each pour's mix {v.kind === "pour_strip" ? "strip" : "ship"} strength, set on
          the mix. The estimate follows the maturity method (ASTM C1074); it supports QC's release,
          which stays with the engineer of record and the project's specifications.
        </p>
      ) : (
        <fieldset className="grid gap-4 sm:grid-cols-3">
          <legend className="mb-2 text-base font-bold">When it alerts</legend>
          {info.range ? (
            <>
              <Input
                id={id("threshold")}
                label={`Lowest (${sym})`}
                hint="Below this the bin is too cold."
                error={err("threshold")}
              >
                {(d) => numberInput("threshold", d)}
              </Input>
              <Input
                id={id("threshold_high")}
                label={`Highest (${sym})`}
                hint="Above this the bin is too warm."
                error={err("threshold_high")}
              >
                {(d) => numberInput("threshold_high", d)}
              </Input>
            </>
          ) : (
            <Input
              id={id("threshold")}
              label={`Limit (${sym})`}
              hint={`It will ${info.meaning} this.`}
              error={err("threshold")}
            >
              {(d) => numberInput("threshold", d)}
            </Input>
          )}
          <Input
            id={id("hold_min")}
            label="Hold time (minutes)"
            hint="How long the readings must stay past the limit before anyone is told, so one odd reading wakes nobody. It counts on the readings' own clock, and the alert ends only after they have been back as long. 0 tells at the first reading past the limit."
            error={err("hold_min")}
          >
            {(d) => numberInput("hold_min", d)}
          </Input>
          <Input
            id={id("clear_margin")}
            label={`Clearing margin (${sym})`}
            hint="How far back inside the limit a reading must come before the alert counts as over, so a value wavering right at the limit makes one alert, not a string of them."
            error={err("clear_margin")}
          >
            {(d) => numberInput("clear_margin", d)}
          </Input>
          {example && (
            <p className="hint sm:col-span-3" aria-live="polite" data-testid="rule-example">
              {example}
            </p>
          )}
        </fieldset>
      )}

      <fieldset className="grid gap-4 sm:grid-cols-2">
        <legend className="mb-2 text-base font-bold">
          {info.pour ? "Which pours" : "Which sensors"}
        </legend>
        {!info.pour && (
          <>
            <Input
              id={id("sensor_kind")}
              label="Sensor kind"
              hint={v.sensor_id ? "Not used: the rule watches one sensor." : undefined}
              error={err("sensor_kind")}
            >
              {(d) => (
                <select
                  id={id("sensor_kind")}
                  className="input"
                  disabled={v.sensor_id !== ""}
                  aria-describedby={d}
                  {...form.register("sensor_kind")}
                >
                  <option value="">Every kind</option>
                  {sensorKinds.map((k) => (
                    <option key={k} value={k}>
                      {sensorKindWords[k][0]!.toUpperCase() + sensorKindWords[k].slice(1)} sensors
                    </option>
                  ))}
                </select>
              )}
            </Input>
            <Input
              id={id("area_id")}
              label="Area"
              hint={v.sensor_id ? "Not used: the rule watches one sensor." : undefined}
              error={err("area_id")}
            >
              {(d) => (
                <select
                  id={id("area_id")}
                  className="input"
                  disabled={v.sensor_id !== ""}
                  aria-describedby={d}
                  {...form.register("area_id")}
                >
                  <option value="">Every area</option>
                  {choices.areas.map((a) => (
                    <option key={a.id} value={String(a.id)}>
                      {a.name}
                    </option>
                  ))}
                </select>
              )}
            </Input>
            <Input
              id={id("sensor_id")}
              label="One sensor only"
              hint="Leave on “Any sensor” to watch every sensor of the kind and area above."
              error={err("sensor_id")}
            >
              {(d) => (
                <select
                  id={id("sensor_id")}
                  className="input"
                  aria-describedby={d}
                  {...form.register("sensor_id")}
                >
                  <option value="">Any sensor</option>
                  {choices.sensors.map((s) => (
                    <option key={s.id} value={s.id}>
                      {s.id}
                      {s.label ? `: ${s.label}` : ""}
                      {s.area ? ` (${s.area})` : ""}
                    </option>
                  ))}
                </select>
              )}
            </Input>
          </>
        )}
        <Input
          id={id("pour_id")}
          label={info.pour ? "Pour" : "On one pour only"}
          hint={
            info.pour
              ? "Every pour, or one open pour."
              : "Only the sensors on this pour while it is open."
          }
          error={err("pour_id")}
        >
          {(d) => (
            <select
              id={id("pour_id")}
              className="input"
              aria-describedby={d}
              {...form.register("pour_id")}
            >
              <option value="">{info.pour ? "Every pour" : "Any pour"}</option>
              {choices.pours.map((p) => (
                <option key={p.id} value={String(p.id)}>
                  {p.code}
                </option>
              ))}
            </select>
          )}
        </Input>
      </fieldset>

      <fieldset className="grid gap-4 sm:grid-cols-2">
        <legend className="mb-2 text-base font-bold">Who is told</legend>
        <Input
          id={id("severity")}
          label="Severity"
          hint="How the alert is marked on the alerts page and in its messages."
          error={err("severity")}
        >
          {(d) => (
            <select
              id={id("severity")}
              className="input"
              aria-describedby={d}
              {...form.register("severity")}
            >
              {severities.map((s) => (
                <option key={s} value={s}>
                  {tones[s].mark} {severityWords[s]}
                </option>
              ))}
            </select>
          )}
        </Input>
        <fieldset className="grid content-start gap-1 sm:row-span-2">
          <legend className="label mb-1">Tell</legend>
          {audiences.map((a) => (
            <label key={a} className="flex min-h-11 items-center gap-3">
              <input
                type="radio"
                className="h-5 w-5 shrink-0"
                value={a}
                {...form.register("audience")}
              />
              {audienceWords[a]}
            </label>
          ))}
        </fieldset>
        {v.audience === "on_call" ? (
          <Input
            id={id("escalate_after_min")}
            label="Escalate after (minutes)"
            hint="If nobody acknowledges the text in this time, the next person on call is texted. Leave empty never to escalate."
            error={err("escalate_after_min")}
          >
            {(d) => numberInput("escalate_after_min", d)}
          </Input>
        ) : (
          <p className="hint">Only a rule that texts the operator on call escalates.</p>
        )}
      </fieldset>

      <div className="grid gap-4 sm:grid-cols-2">
        <Input
          id={id("source")}
          label="Source (optional)"
          hint="Where the limit comes from: the project specification, a standard, the engineer of record's instruction."
          error={err("source")}
        >
          {(d) => (
            <input
              id={id("source")}
              className="input"
              autoComplete="off"
              aria-invalid={invalid("source")}
              aria-describedby={d}
              {...form.register("source")}
            />
          )}
        </Input>
        <label className="flex min-h-11 items-start gap-3 self-center">
          <input
            type="checkbox"
            className="mt-0.5 h-5 w-5 shrink-0"
            aria-describedby={id("enabled-hint")}
            {...form.register("enabled")}
          />
          <span>
            <span className="font-semibold">Enabled</span>
            <span id={id("enabled-hint")} className="hint block">
              A disabled rule raises no alerts and tells no one.
            </span>
          </span>
        </label>
      </div>

      {message && (
        <p
          role="alert"
          className="rounded-md bg-alarm-bg px-3 py-2 text-sm font-semibold text-alarm"
        >
          {message}
        </p>
      )}
      <div className="flex flex-wrap gap-2">
        <button type="submit" className="btn btn-primary" disabled={isSubmitting}>
          {isSubmitting ? "Saving…" : rule ? "Save changes" : "Add the rule"}
        </button>
        <button type="button" className="btn btn-quiet" onClick={onCancel}>
          Cancel
        </button>
      </div>
    </form>
  );
}

interface CardProps {
  rule: AlertRuleOut;
  units: UnitSystem;
  canEdit: boolean;
  timeZone: string;
  busy: boolean;
  problem: string | null;
  onEdit: () => void;
  onToggle: () => void;
  onDelete: () => void;
}

/** One rule, read: what it alerts on in the reader's units, where, how long, and who hears. */
function RuleCard({
  rule,
  units,
  canEdit,
  timeZone,
  busy,
  problem,
  onEdit,
  onToggle,
  onDelete,
}: CardProps) {
  const f = fieldsOf(rule);
  const nameId = `rule-${rule.id}-name`;
  const onId = `rule-${rule.id}-on`;
  const row = (term: string, value: ReactNode, wide = false) => (
    <div className={wide ? "col-span-2" : undefined}>
      <dt className="text-muted">{term}</dt>
      <dd>{value}</dd>
    </div>
  );
  return (
    <article
      className={`card grid gap-3 p-4 ${rule.enabled ? "" : "border-dashed"}`}
      aria-labelledby={nameId}
      data-testid="rule"
      data-rule-id={rule.id}
    >
      <div className="flex flex-wrap items-start justify-between gap-2">
        <h3 id={nameId} className={`text-lg font-bold ${rule.enabled ? "" : "text-muted"}`}>
          {rule.name}
        </h3>
        <div className="flex flex-wrap items-center gap-2">
          <SeverityBadge severity={rule.severity} />
          {rule.open_episodes > 0 && (
            <a
              href="/alerts"
              className="inline-flex items-center gap-1 rounded-full border border-line px-2 py-0.5 text-xs font-bold text-accent underline"
            >
              {rule.open_episodes} open<span className="sr-only"> alerts of {rule.name}</span>
            </a>
          )}
          {rule.enabled ? (
            <Badge cls="bg-ok-bg text-ok" mark="●">
              On
            </Badge>
          ) : (
            <Badge cls="bg-surface-2 text-muted" mark="○">
              Off: disabled
            </Badge>
          )}
        </div>
      </div>
      <p className="text-base">
        <span className="text-muted">Alerts on </span>
        <strong className="font-bold" data-testid="rule-watch">
          {watchWords(f, units)}
        </strong>
      </p>
      <dl className="grid grid-cols-2 gap-x-4 gap-y-2 text-sm">
        {row(
          "Watches",
          scopeWords(rule.kind, {
            area: rule.scope.area,
            sensorKind: rule.scope.sensor_kind,
            sensorId: rule.scope.sensor_id,
            pourCode: rule.scope.pour_code,
          }),
        )}
        {!ruleKinds[rule.kind].pour && row("Hold", holdWords(rule.hold_min))}
        {row("Clears", clearWords(f, units), true)}
        {row(
          "Who is told",
          <>
            {audienceWords[rule.audience]}
            {rule.audience === "on_call" && (
              <span className="block text-muted">
                {escalationWords(rule.audience, rule.escalate_after_min)}
              </span>
            )}
          </>,
          true,
        )}
      </dl>
      <p className="text-xs text-muted">
        {rule.source ? <>Source: {rule.source}. </> : <>No source given. </>}
        {rule.updated_at && (
          <>Changed {formatDateTime(Date.parse(rule.updated_at), timeZone, "short")}.</>
        )}
      </p>
      {problem && (
        <div
          role="alert"
          id={`rule-${rule.id}-problem`}
          tabIndex={-1}
          className="rounded-md bg-alarm-bg px-3 py-2 text-sm text-alarm"
        >
          <p className="font-semibold">{problem}</p>
          {rule.enabled && (
            <button
              type="button"
              className="btn btn-quiet mt-2 text-sm"
              onClick={onToggle}
              disabled={busy}
            >
              Disable it<span className="sr-only"> ({rule.name})</span>
            </button>
          )}
        </div>
      )}
      {canEdit && (
        <div className="flex flex-wrap items-center gap-2 border-t border-line pt-3">
          <span id={onId} className="sr-only">
            Enabled
          </span>
          <button
            type="button"
            id={`rule-${rule.id}-switch`}
            role="switch"
            aria-checked={rule.enabled}
            aria-labelledby={`${onId} ${nameId}`}
            aria-disabled={busy || undefined}
            onClick={onToggle}
            className="btn btn-quiet gap-3 text-sm"
          >
            <span
              aria-hidden="true"
              className={`relative inline-block h-6 w-11 rounded-full border border-line transition-colors ${
                rule.enabled ? "bg-accent" : "bg-surface-2"
              }`}
            >
              <span
                className={`absolute top-0.5 h-4.5 w-4.5 rounded-full bg-surface shadow transition-all ${
                  rule.enabled ? "left-5.5" : "left-0.5"
                }`}
              />
            </span>
            <span aria-hidden="true">{rule.enabled ? "Enabled" : "Disabled"}</span>
          </button>
          <button
            type="button"
            id={`rule-${rule.id}-edit`}
            className="btn btn-quiet text-sm"
            onClick={onEdit}
          >
            Edit<span className="sr-only"> {rule.name}</span>
          </button>
          <button
            type="button"
            className="btn btn-danger text-sm"
            onClick={onDelete}
            aria-disabled={busy || undefined}
          >
            Delete<span className="sr-only"> {rule.name}</span>
          </button>
        </div>
      )}
    </article>
  );
}

/** The plant's alert rules, grouped by what they watch; QC and managers add and edit them. */
export default function AlertRules({ initialRules, units, canEdit, choices, timeZone }: Props) {
  const [rules, setRules] = useState(initialRules);
  const [adding, setAdding] = useState(false);
  const [editing, setEditing] = useState<number | null>(null);
  const [busy, setBusy] = useState<number | null>(null);
  const [problems, setProblems] = useState<Record<number, string>>({});
  const [notice, setNotice] = useState<string | null>(null);
  const addButton = useRef<HTMLButtonElement>(null);

  // Where the keyboard goes once the next render is on screen (after an add, a save, a refusal).
  const pendingFocus = useRef<string | null>(null);
  const [, setFocusTick] = useState(0);
  const focusLater = (elementId: string) => {
    pendingFocus.current = elementId;
    setFocusTick((t) => t + 1);
  };
  useEffect(() => {
    const target = pendingFocus.current && document.getElementById(pendingFocus.current);
    if (target) {
      target.focus();
      pendingFocus.current = null;
    }
  });
  const setProblem = (id: number, text: string | null) =>
    setProblems((p) => {
      const next = { ...p };
      if (text === null) delete next[id];
      else next[id] = text;
      return next;
    });

  function saved(rule: AlertRuleOut, created: boolean) {
    setRules((list) =>
      (created ? [...list, rule] : list.map((r) => (r.id === rule.id ? rule : r))).sort(
        (a, b) => a.name.localeCompare(b.name) || a.id - b.id,
      ),
    );
    setAdding(false);
    setEditing(null);
    setProblem(rule.id, null);
    setNotice(created ? `Rule “${rule.name}” added.` : `Rule “${rule.name}” saved.`);
    focusLater(`rule-${rule.id}-edit`);
  }

  async function toggle(rule: AlertRuleOut) {
    if (busy !== null) return;
    setBusy(rule.id);
    const res = await send(`/api/v1/alert-rules/${rule.id}`, "PATCH", { enabled: !rule.enabled });
    setBusy(null);
    if (!res.ok) {
      setProblem(rule.id, (await readProblem(res)).message);
      focusLater(`rule-${rule.id}-problem`);
      return;
    }
    const next = (await res.json()) as AlertRuleOut;
    setRules((list) => list.map((r) => (r.id === next.id ? next : r)));
    setProblem(rule.id, null);
    focusLater(`rule-${rule.id}-switch`);
    setNotice(
      next.enabled
        ? `Rule “${next.name}” enabled: it watches again.`
        : `Rule “${next.name}” disabled: it raises no alerts until enabled.`,
    );
  }

  async function remove(rule: AlertRuleOut) {
    if (busy !== null) return;
    if (
      !window.confirm(
        `Delete the rule “${rule.name}”? A rule that has raised alerts cannot be deleted; disable it instead.`,
      )
    )
      return;
    setBusy(rule.id);
    const res = await send(`/api/v1/alert-rules/${rule.id}`, "DELETE");
    setBusy(null);
    if (res.status === 204) {
      setRules((list) => list.filter((r) => r.id !== rule.id));
      setNotice(`Rule “${rule.name}” deleted.`);
      addButton.current?.focus();
      return;
    }
    setProblem(rule.id, (await readProblem(res)).message);
    focusLater(`rule-${rule.id}-problem`);
  }

  const groups = ruleGroups
    .map((g) => ({ ...g, rules: rules.filter((r) => ruleGroupOf(r.kind) === g.id) }))
    .filter((g) => g.rules.length > 0);

  return (
    <div className="grid gap-6">
      {canEdit && (
        <div className="flex flex-wrap items-center gap-3">
          <button
            ref={addButton}
            type="button"
            className="btn btn-primary"
            aria-expanded={adding}
            aria-controls="add-rule"
            onClick={() => {
              setAdding(true);
              setEditing(null);
              setNotice(null);
              focusLater("add-rule-h");
            }}
          >
            Add a rule
          </button>
        </div>
      )}
      <p
        role="status"
        data-testid="rules-notice"
        className={notice ? "rounded-md bg-ok-bg px-3 py-2 font-semibold text-ok" : "sr-only"}
      >
        {notice}
      </p>

      {canEdit && adding && (
        <section id="add-rule" aria-labelledby="add-rule-h" className="card p-4 sm:p-5">
          <h2 id="add-rule-h" tabIndex={-1} className="mb-4 text-xl font-bold">
            Add a rule
          </h2>
          <RuleForm
            rule={null}
            units={units}
            choices={choices}
            onSaved={saved}
            onCancel={() => {
              setAdding(false);
              addButton.current?.focus();
            }}
          />
        </section>
      )}

      {rules.length === 0 && (
        <p className="card p-4">
          No alert rules yet.{canEdit ? " Add the first with “Add a rule”." : ""}
        </p>
      )}

      {groups.map((g) => (
        <section key={g.id} aria-labelledby={`group-${g.id}`} className="grid gap-3">
          <div>
            <h2 id={`group-${g.id}`} className="text-xl font-bold">
              {g.title} <span className="text-base font-normal text-muted">({g.rules.length})</span>
            </h2>
            <p className="text-sm text-muted">{g.blurb}</p>
          </div>
          <ul className="grid gap-3 xl:grid-cols-2" aria-label={g.title}>
            {g.rules.map((r) => (
              <li key={r.id} className={editing === r.id ? "xl:col-span-2" : undefined}>
                {editing === r.id ? (
                  <section
                    aria-labelledby={`edit-${r.id}-h`}
                    className="card p-4 sm:p-5"
                    data-testid="rule-edit"
                  >
                    <h3 id={`edit-${r.id}-h`} tabIndex={-1} className="mb-4 text-lg font-bold">
                      Edit “{r.name}”
                    </h3>
                    <RuleForm
                      rule={r}
                      units={units}
                      choices={choices}
                      onSaved={saved}
                      onCancel={() => {
                        setEditing(null);
                        focusLater(`rule-${r.id}-edit`);
                      }}
                    />
                  </section>
                ) : (
                  <RuleCard
                    rule={r}
                    units={units}
                    canEdit={canEdit}
                    timeZone={timeZone}
                    busy={busy === r.id}
                    problem={problems[r.id] ?? null}
                    onEdit={() => {
                      setEditing(r.id);
                      setAdding(false);
                      setNotice(null);
                      focusLater(`edit-${r.id}-h`);
                    }}
                    onToggle={() => void toggle(r)}
                    onDelete={() => void remove(r)}
                  />
                )}
              </li>
            ))}
          </ul>
        </section>
      ))}
    </div>
  );
}
