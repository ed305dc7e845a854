/**
 * Alert rules: what the alert engine watches for. Each write is one transaction with its audit
 * entry; once committed, `alertConfig` goes on the bus so the engine reloads the rules. A rule
 * with episodes is never deleted (the episodes are the audit record): it is disabled instead.
 */
import { and, asc, count, eq, inArray, ne, or, sql } from "drizzle-orm";
import { defaultRules } from "@/domain/alerts/rules";
import { bus } from "../../live/bus";
import { getDb, getSqlite } from "../client";
import { alertEpisodes, alertRules, areas, pours, sensors, users } from "../schema";
import { writeAudit, type AuditActor } from "./audit";

export type AlertRuleRow = typeof alertRules.$inferSelect;
export type NewAlertRule = typeof alertRules.$inferInsert;
export type AlertRulePatch = Partial<Omit<NewAlertRule, "id" | "createdAt" | "createdBy">>;

/** A rule with the names its scope points at and how many of its episodes are still open. */
export interface AlertRuleView {
  rule: AlertRuleRow;
  areaName: string | null;
  pourCode: string | null;
  /** Episodes open or acknowledged (not yet cleared). */
  openEpisodes: number;
}

function openCounts(ruleIds?: number[]): Map<number, number> {
  const rows = getDb()
    .select({ ruleId: alertEpisodes.ruleId, n: count() })
    .from(alertEpisodes)
    .where(
      and(
        inArray(alertEpisodes.state, ["open", "acknowledged"]),
        ruleIds ? inArray(alertEpisodes.ruleId, ruleIds) : undefined,
      ),
    )
    .groupBy(alertEpisodes.ruleId)
    .all();
  return new Map(rows.map((r) => [r.ruleId, r.n]));
}

function views(ruleId?: number): AlertRuleView[] {
  const rows = getDb()
    .select({ rule: alertRules, areaName: areas.name, pourCode: pours.code })
    .from(alertRules)
    .leftJoin(areas, eq(areas.id, alertRules.scopeAreaId))
    .leftJoin(pours, eq(pours.id, alertRules.scopePourId))
    .where(ruleId === undefined ? undefined : eq(alertRules.id, ruleId))
    .orderBy(asc(alertRules.name), asc(alertRules.id))
    .all();
  const counts = openCounts(ruleId === undefined ? undefined : [ruleId]);
  return rows.map((r) => ({ ...r, openEpisodes: counts.get(r.rule.id) ?? 0 }));
}

/** Every rule by name, with its scope's names and its open episodes. */
export function listAlertRules(): AlertRuleView[] {
  return views();
}

export function getAlertRule(id: number): AlertRuleView | undefined {
  return views(id)[0];
}

/** Every episode a rule has had, cleared ones included. */
export function countRuleEpisodes(ruleId: number): number {
  return (
    getDb().select({ n: count() }).from(alertEpisodes).where(eq(alertEpisodes.ruleId, ruleId)).get()
      ?.n ?? 0
  );
}

/** Tells the alert engine (and anything else listening) that the rules changed. */
function rulesChanged(): void {
  bus().emit("alertConfig", { what: "rules" });
}

/** Adds a rule and writes `alert_rule.create` in one transaction. */
export function createAlertRule(
  values: Omit<NewAlertRule, "id" | "createdAt" | "updatedAt">,
  actor: AuditActor,
  detail: (row: AlertRuleRow) => Record<string, unknown>,
): AlertRuleView {
  const id = getSqlite().transaction(() => {
    const now = Date.now();
    const row = getDb()
      .insert(alertRules)
      .values({ ...values, createdAt: now, updatedAt: now })
      .returning()
      .get();
    writeAudit(actor, {
      action: "alert_rule.create",
      entityType: "alert_rule",
      entityId: row.id,
      detail: detail(row),
    });
    return row.id;
  })();
  rulesChanged();
  return getAlertRule(id)!;
}

/** Changes a rule and writes `alert_rule.update` in one transaction. */
export function updateAlertRule(
  id: number,
  patch: AlertRulePatch,
  actor: AuditActor,
  detail: Record<string, unknown>,
): AlertRuleView {
  getSqlite().transaction(() => {
    getDb()
      .update(alertRules)
      .set({ ...patch, updatedAt: Date.now() })
      .where(eq(alertRules.id, id))
      .run();
    writeAudit(actor, {
      action: "alert_rule.update",
      entityType: "alert_rule",
      entityId: id,
      detail,
    });
  })();
  rulesChanged();
  return getAlertRule(id)!;
}

export type DeleteOutcome =
  | { ok: true }
  | { ok: false; reason: "not_found" }
  | { ok: false; reason: "has_episodes"; episodes: number };

/**
 * Deletes a rule that never raised an episode, with `alert_rule.delete`, in one transaction
 * (its engine tracks go with it). A rule with episodes is refused: they are the record.
 */
export function deleteAlertRule(
  id: number,
  actor: AuditActor,
  detail: Record<string, unknown>,
): DeleteOutcome {
  const outcome = getSqlite().transaction((): DeleteOutcome => {
    const row = getDb().select().from(alertRules).where(eq(alertRules.id, id)).get();
    if (!row) return { ok: false, reason: "not_found" };
    const episodes = countRuleEpisodes(id);
    if (episodes > 0) return { ok: false, reason: "has_episodes", episodes };
    getDb().delete(alertRules).where(eq(alertRules.id, id)).run();
    writeAudit(actor, {
      action: "alert_rule.delete",
      entityType: "alert_rule",
      entityId: id,
      detail,
    });
    return { ok: true };
  })();
  if (outcome.ok) rulesChanged();
  return outcome;
}

/**
 * Adds Plinth's default rules (src/domain/alerts/rules.ts, each with its source) when there are
 * no rules at all, each with its `alert_rule.create` entry, and answers how many were added
 * (0 when any rule already exists: a plant's own rules are never touched).
 */
export function seedDefaultRules(userId: number | null): number {
  const added = getSqlite().transaction(() => {
    const existing = getDb().select({ n: count() }).from(alertRules).get()?.n ?? 0;
    if (existing > 0) return 0;
    const who =
      userId === null
        ? undefined
        : getDb().select({ email: users.email }).from(users).where(eq(users.id, userId)).get();
    const actor: AuditActor = { userId, label: who?.email ?? "system" };
    const now = Date.now();
    for (const d of defaultRules) {
      const row = getDb()
        .insert(alertRules)
        .values({
          name: d.name,
          kind: d.kind,
          threshold: d.threshold,
          thresholdHigh: d.thresholdHigh,
          holdMs: Math.round(d.holdMin * 60_000),
          clearMargin: d.clearMargin,
          severity: d.severity,
          audience: d.audience,
          scopeSensorKind: d.scopeSensorKind,
          escalateAfterMs:
            d.escalateAfterMin === null ? null : Math.round(d.escalateAfterMin * 60_000),
          enabled: true,
          source: d.source,
          createdBy: userId,
          createdAt: now,
          updatedAt: now,
        })
        .returning({ id: alertRules.id })
        .get();
      writeAudit(actor, {
        action: "alert_rule.create",
        entityType: "alert_rule",
        entityId: row.id,
        detail: {
          name: d.name,
          kind: d.kind,
          threshold: d.threshold,
          threshold_high: d.thresholdHigh,
          default: true,
          source: d.source,
        },
      });
    }
    return defaultRules.length;
  })();
  if (added > 0) rulesChanged();
  return added;
}

/**
 * The other rule already called `name`, letter case and outer spaces aside (none: undefined);
 * `exceptId` is the rule being renamed.
 */
export function ruleNamed(
  name: string,
  exceptId?: number,
): { id: number; name: string } | undefined {
  return getDb()
    .select({ id: alertRules.id, name: alertRules.name })
    .from(alertRules)
    .where(
      and(
        sql`lower(trim(${alertRules.name})) = lower(trim(${name}))`,
        exceptId === undefined ? undefined : ne(alertRules.id, exceptId),
      ),
    )
    .get();
}

/** Which of the scope's area, sensor and pour do not exist, one entry per field. */
export function missingScope(scope: {
  areaId?: number | null;
  sensorId?: string | null;
  pourId?: number | null;
}): { field: string; error: string }[] {
  const db = getDb();
  const out: { field: string; error: string }[] = [];
  if (
    scope.areaId != null &&
    !db.select({ id: areas.id }).from(areas).where(eq(areas.id, scope.areaId)).get()
  )
    out.push({ field: "scope.area_id", error: `No area has id ${scope.areaId}` });
  if (
    scope.sensorId != null &&
    !db.select({ id: sensors.id }).from(sensors).where(eq(sensors.id, scope.sensorId)).get()
  )
    out.push({ field: "scope.sensor_id", error: `No sensor is called ${scope.sensorId}` });
  if (
    scope.pourId != null &&
    !db.select({ id: pours.id }).from(pours).where(eq(pours.id, scope.pourId)).get()
  )
    out.push({ field: "scope.pour_id", error: `No pour has id ${scope.pourId}` });
  return out;
}

/** What a rule's scope may point at, for the form's pickers. */
export interface ScopeChoices {
  areas: { id: number; name: string }[];
  sensors: { id: string; label: string | null; kind: string | null; area: string | null }[];
  pours: { id: number; code: string }[];
}

/**
 * Areas, sensors in service, and the pours still open plus any pour a rule already names
 * (newest cast first).
 */
export function listScopeChoices(): ScopeChoices {
  const db = getDb();
  const scoped = db
    .select({ id: alertRules.scopePourId })
    .from(alertRules)
    .where(sql`${alertRules.scopePourId} is not null`);
  return {
    areas: db
      .select({ id: areas.id, name: areas.name })
      .from(areas)
      .orderBy(asc(areas.sortOrder), asc(areas.name))
      .all(),
    sensors: db
      .select({ id: sensors.id, label: sensors.label, kind: sensors.kind, area: areas.name })
      .from(sensors)
      .leftJoin(areas, eq(areas.id, sensors.areaId))
      .where(ne(sensors.status, "retired"))
      .orderBy(asc(sensors.id))
      .all(),
    pours: db
      .select({ id: pours.id, code: pours.code })
      .from(pours)
      .where(
        or(
          inArray(pours.status, ["curing", "stripped", "ready_to_ship"]),
          inArray(pours.id, scoped),
        ),
      )
      .orderBy(sql`${pours.castAt} desc`, asc(pours.id))
      .all(),
  };
}
