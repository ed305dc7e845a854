/**
 * Alert episodes: listing and reading them, acknowledging them, and the engine's writes
 * (opened, worsened, cleared) with the rule tracks that let it resume after a restart.
 */
import { and, desc, eq, gte, inArray, lt, sql, type SQL } from "drizzle-orm";
import { getDb, type Db } from "../client";
import {
  alertEpisodes,
  alertRules,
  alertTracks,
  auditLog,
  notificationOutbox,
  pours,
  sensors,
  users,
} from "../schema";

export type EpisodeState = "open" | "acknowledged" | "cleared";
type Tx = Parameters<Parameters<Db["transaction"]>[0]>[0];
export type DbOrTx = Db | Tx;

export interface EpisodeFilter {
  /** One state, or "active": open or acknowledged. */
  state?: EpisodeState | "active";
  sensorId?: string;
  pourId?: number;
  ruleId?: number;
  severity?: "info" | "warning" | "critical";
  /** Opened at or after. */
  sinceMs?: number;
  /** Paging: ids below this one. */
  beforeId?: number;
  limit?: number;
}

/** An episode with what a person needs to read it: the rule, the sensor, the pour, who acknowledged. */
export interface EpisodeView {
  id: number;
  ruleId: number;
  ruleName: string;
  ruleKind: (typeof alertRules.$inferSelect)["kind"];
  threshold: number | null;
  thresholdHigh: number | null;
  holdMs: number;
  sensorId: string | null;
  sensorLabel: string | null;
  pourId: number | null;
  pourCode: string | null;
  state: EpisodeState;
  severity: "info" | "warning" | "critical";
  startedAt: number;
  openedAt: number;
  triggerValue: number | null;
  worstValue: number | null;
  lastValue: number | null;
  lastValueAt: number | null;
  acknowledgedAt: number | null;
  acknowledgedBy: number | null;
  acknowledgedByName: string | null;
  ackNote: string | null;
  ackVia: "web" | "sms" | null;
  clearedAt: number | null;
  escalationLevel: number;
  lastNotifiedAt: number | null;
}

const viewColumns = {
  id: alertEpisodes.id,
  ruleId: alertEpisodes.ruleId,
  ruleName: alertRules.name,
  ruleKind: alertRules.kind,
  threshold: alertRules.threshold,
  thresholdHigh: alertRules.thresholdHigh,
  holdMs: alertRules.holdMs,
  sensorId: alertEpisodes.sensorId,
  sensorLabel: sensors.label,
  pourId: alertEpisodes.pourId,
  pourCode: pours.code,
  state: alertEpisodes.state,
  severity: alertEpisodes.severity,
  startedAt: alertEpisodes.startedAt,
  openedAt: alertEpisodes.openedAt,
  triggerValue: alertEpisodes.triggerValue,
  worstValue: alertEpisodes.worstValue,
  lastValue: alertEpisodes.lastValue,
  lastValueAt: alertEpisodes.lastValueAt,
  acknowledgedAt: alertEpisodes.acknowledgedAt,
  acknowledgedBy: alertEpisodes.acknowledgedBy,
  acknowledgedByName: users.name,
  ackNote: alertEpisodes.ackNote,
  ackVia: alertEpisodes.ackVia,
  clearedAt: alertEpisodes.clearedAt,
  escalationLevel: alertEpisodes.escalationLevel,
  lastNotifiedAt: alertEpisodes.lastNotifiedAt,
};

function viewQuery() {
  return getDb()
    .select(viewColumns)
    .from(alertEpisodes)
    .innerJoin(alertRules, eq(alertRules.id, alertEpisodes.ruleId))
    .leftJoin(sensors, eq(sensors.id, alertEpisodes.sensorId))
    .leftJoin(pours, eq(pours.id, alertEpisodes.pourId))
    .leftJoin(users, eq(users.id, alertEpisodes.acknowledgedBy));
}

/** Episodes, newest recorded first, filtered. */
export function listEpisodes(filter: EpisodeFilter = {}): EpisodeView[] {
  const where: SQL[] = [];
  if (filter.state === "active")
    where.push(inArray(alertEpisodes.state, ["open", "acknowledged"]));
  else if (filter.state) where.push(eq(alertEpisodes.state, filter.state));
  if (filter.sensorId) where.push(eq(alertEpisodes.sensorId, filter.sensorId));
  if (filter.pourId !== undefined) where.push(eq(alertEpisodes.pourId, filter.pourId));
  if (filter.ruleId !== undefined) where.push(eq(alertEpisodes.ruleId, filter.ruleId));
  if (filter.severity) where.push(eq(alertEpisodes.severity, filter.severity));
  if (filter.sinceMs !== undefined) where.push(gte(alertEpisodes.openedAt, filter.sinceMs));
  if (filter.beforeId !== undefined) where.push(lt(alertEpisodes.id, filter.beforeId));
  return viewQuery()
    .where(where.length ? and(...where) : undefined)
    // Newest recorded first, by id: paging with before_id then never skips an episode that a
    // late backlog recorded with an earlier opened_at.
    .orderBy(desc(alertEpisodes.id))
    .limit(Math.min(Math.max(filter.limit ?? 200, 1), 1000))
    .all();
}

export function getEpisode(id: number): EpisodeView | undefined {
  return viewQuery().where(eq(alertEpisodes.id, id)).get();
}

/** Counts of active episodes by severity, for badges. */
export function activeEpisodeCounts(): { open: number; acknowledged: number; critical: number } {
  const row = getDb()
    .select({
      open: sql<number>`coalesce(sum(case when ${alertEpisodes.state} = 'open' then 1 else 0 end), 0)`,
      acknowledged: sql<number>`coalesce(sum(case when ${alertEpisodes.state} = 'acknowledged' then 1 else 0 end), 0)`,
      critical: sql<number>`coalesce(sum(case when ${alertEpisodes.state} = 'open' and ${alertEpisodes.severity} = 'critical' then 1 else 0 end), 0)`,
    })
    .from(alertEpisodes)
    .where(inArray(alertEpisodes.state, ["open", "acknowledged"]))
    .get();
  return row ?? { open: 0, acknowledged: 0, critical: 0 };
}

/** The notices sent (or waiting) about an episode, oldest first. */
export function episodeNotices(episodeId: number) {
  return getDb()
    .select({
      id: notificationOutbox.id,
      channel: notificationOutbox.channel,
      toAddress: notificationOutbox.toAddress,
      userId: notificationOutbox.userId,
      userName: users.name,
      reason: notificationOutbox.reason,
      status: notificationOutbox.status,
      attempts: notificationOutbox.attempts,
      lastError: notificationOutbox.lastError,
      sentAt: notificationOutbox.sentAt,
      createdAt: notificationOutbox.createdAt,
    })
    .from(notificationOutbox)
    .leftJoin(users, eq(users.id, notificationOutbox.userId))
    .where(eq(notificationOutbox.episodeId, episodeId))
    .orderBy(notificationOutbox.createdAt, notificationOutbox.id)
    .all();
}

/** The audit entries about an episode, oldest first. */
export function episodeAudit(episodeId: number) {
  return getDb()
    .select()
    .from(auditLog)
    .where(and(eq(auditLog.entityType, "alert_episode"), eq(auditLog.entityId, String(episodeId))))
    .orderBy(auditLog.at, auditLog.id)
    .all();
}

export type AckResult =
  | { ok: true; episode: EpisodeView }
  | { ok: false; reason: "not_found" | "already"; episode?: EpisodeView };

/**
 * Records that a person saw an episode and what they did. An open episode becomes
 * acknowledged; a cleared one that nobody acknowledged keeps its state and gains the note;
 * one already acknowledged is refused (the first note stands). Written with its audit entry
 * in one transaction.
 */
export function acknowledgeEpisode(input: {
  episodeId: number;
  userId: number;
  actorLabel: string;
  note: string | null;
  via: "web" | "sms";
  atMs: number;
  ip?: string | null;
}): AckResult {
  const db = getDb();
  const done = db.transaction((tx) => {
    const ep = tx.select().from(alertEpisodes).where(eq(alertEpisodes.id, input.episodeId)).get();
    if (!ep) return "not_found" as const;
    if (ep.acknowledgedAt !== null) return "already" as const;
    tx.update(alertEpisodes)
      .set({
        state: ep.state === "open" ? "acknowledged" : ep.state,
        acknowledgedAt: input.atMs,
        acknowledgedBy: input.userId,
        ackNote: input.note,
        ackVia: input.via,
      })
      .where(eq(alertEpisodes.id, ep.id))
      .run();
    tx.insert(auditLog)
      .values({
        at: input.atMs,
        actorUserId: input.userId,
        actorLabel: input.actorLabel,
        action: "alert.acknowledge",
        entityType: "alert_episode",
        entityId: String(ep.id),
        pourId: ep.pourId,
        detailJson: JSON.stringify({
          note: input.note,
          via: input.via,
          sensor: ep.sensorId,
          state_before: ep.state,
        }),
        ip: input.ip ?? null,
      })
      .run();
    return "ok" as const;
  });
  const episode = getEpisode(input.episodeId);
  if (done === "ok" && episode) return { ok: true, episode };
  return { ok: false, reason: done === "ok" ? "not_found" : done, episode };
}

/**
 * The person's latest episode still open that a text told them about: what a reply of
 * "ACK" acknowledges.
 */
export function latestOpenEpisodeTextedTo(userId: number): number | undefined {
  const row = getDb()
    .select({ id: alertEpisodes.id })
    .from(notificationOutbox)
    .innerJoin(alertEpisodes, eq(alertEpisodes.id, notificationOutbox.episodeId))
    .where(
      and(
        eq(notificationOutbox.userId, userId),
        eq(notificationOutbox.channel, "sms"),
        eq(alertEpisodes.state, "open"),
      ),
    )
    .orderBy(desc(notificationOutbox.createdAt), desc(notificationOutbox.id))
    .limit(1)
    .get();
  return row?.id;
}

// The engine's side -------------------------------------------------------------------

export type RuleRow = typeof alertRules.$inferSelect;
export type EpisodeRow = typeof alertEpisodes.$inferSelect;

export function enabledRules(): RuleRow[] {
  return getDb().select().from(alertRules).where(eq(alertRules.enabled, true)).all();
}

/** Episodes not yet cleared, for the engine's start. */
export function activeEpisodeRows(): EpisodeRow[] {
  return getDb()
    .select()
    .from(alertEpisodes)
    .where(inArray(alertEpisodes.state, ["open", "acknowledged"]))
    .all();
}

export function episodeRow(id: number, exec: DbOrTx = getDb()): EpisodeRow | undefined {
  return exec.select().from(alertEpisodes).where(eq(alertEpisodes.id, id)).get();
}

export function insertEpisode(
  exec: DbOrTx,
  values: typeof alertEpisodes.$inferInsert,
): EpisodeRow {
  return exec.insert(alertEpisodes).values(values).returning().get();
}

export function updateEpisode(
  exec: DbOrTx,
  id: number,
  set: Partial<typeof alertEpisodes.$inferInsert>,
): void {
  exec.update(alertEpisodes).set(set).where(eq(alertEpisodes.id, id)).run();
}

export function loadTracks(): { ruleId: number; subject: string; trackJson: string }[] {
  return getDb()
    .select({
      ruleId: alertTracks.ruleId,
      subject: alertTracks.subject,
      trackJson: alertTracks.trackJson,
    })
    .from(alertTracks)
    .all();
}

export function saveTrack(exec: DbOrTx, ruleId: number, subject: string, trackJson: string): void {
  const now = Date.now();
  exec
    .insert(alertTracks)
    .values({ ruleId, subject, trackJson, updatedAt: now })
    .onConflictDoUpdate({
      target: [alertTracks.ruleId, alertTracks.subject],
      set: { trackJson, updatedAt: now },
    })
    .run();
}

export function writeAuditTx(
  exec: DbOrTx,
  entry: {
    atMs: number;
    action: string;
    episodeId: number;
    pourId: number | null;
    detail: Record<string, unknown>;
    actorUserId?: number | null;
    actorLabel?: string;
  },
): void {
  exec
    .insert(auditLog)
    .values({
      at: entry.atMs,
      actorUserId: entry.actorUserId ?? null,
      actorLabel: entry.actorLabel ?? "Plinth",
      action: entry.action,
      entityType: "alert_episode",
      entityId: String(entry.episodeId),
      pourId: entry.pourId,
      detailJson: JSON.stringify(entry.detail),
    })
    .run();
}
