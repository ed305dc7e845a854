import { and, desc, eq, lte, sql } from "drizzle-orm";
import { getDb, type Db } from "../client";
import { notificationOutbox } from "../schema";

export type OutboxRow = typeof notificationOutbox.$inferSelect;
export type NoticeChannel = OutboxRow["channel"];
export type NoticeStatus = OutboxRow["status"];

/** The database itself or a transaction on it: a notice may be written with the event that caused it. */
export type DbOrTx = Pick<Db, "insert" | "select">;

export interface NewNotice {
  dedupeKey: string;
  channel: NoticeChannel;
  toAddress: string;
  body: string;
  subject?: string | null;
  userId?: number | null;
  episodeId?: number | null;
  reason?: string | null;
  nextAttemptAtMs: number;
}

/**
 * Inserts a pending notice unless one with the same dedupe key exists (then nothing changes).
 * `created` says which happened; either way the id is the notice's.
 */
export function insertNotice(
  n: NewNotice,
  exec: DbOrTx = getDb(),
): { id: number; created: boolean } {
  const inserted = exec
    .insert(notificationOutbox)
    .values({
      dedupeKey: n.dedupeKey,
      channel: n.channel,
      toAddress: n.toAddress,
      body: n.body,
      subject: n.subject ?? null,
      userId: n.userId ?? null,
      episodeId: n.episodeId ?? null,
      reason: n.reason ?? null,
      status: "pending",
      attempts: 0,
      nextAttemptAt: n.nextAttemptAtMs,
    })
    .onConflictDoNothing({ target: notificationOutbox.dedupeKey })
    .returning({ id: notificationOutbox.id })
    .get();
  if (inserted) return { id: inserted.id, created: true };
  const existing = exec
    .select({ id: notificationOutbox.id })
    .from(notificationOutbox)
    .where(eq(notificationOutbox.dedupeKey, n.dedupeKey))
    .get();
  if (!existing) throw new Error("notice neither inserted nor found");
  return { id: existing.id, created: false };
}

/**
 * Takes the next due notice of a channel for one attempt, in one statement: its attempt is
 * counted and its next attempt pushed `leaseMs` ahead before anything is sent. If the process
 * dies during the send, the notice is simply due again when the lease ends; nothing is ever
 * left marked as sent (or "sending") without the provider's yes. A second worker on the same
 * file cannot take the same notice while the lease runs.
 */
export function claimNextDueNotice(
  channel: NoticeChannel,
  nowMs: number,
  leaseMs: number,
): OutboxRow | undefined {
  return getDb()
    .update(notificationOutbox)
    .set({
      attempts: sql`${notificationOutbox.attempts} + 1`,
      nextAttemptAt: nowMs + leaseMs,
    })
    .where(
      and(
        eq(notificationOutbox.status, "pending"),
        lte(notificationOutbox.nextAttemptAt, nowMs),
        eq(
          notificationOutbox.id,
          sql`(select id from ${notificationOutbox}
                where status = 'pending' and channel = ${channel} and next_attempt_at <= ${nowMs}
                order by next_attempt_at, id limit 1)`,
        ),
      ),
    )
    .returning()
    .get();
}

/** When the channel's next pending notice falls due (epoch ms), or null when none waits. */
export function nextNoticeDueAt(channel: NoticeChannel): number | null {
  const row = getDb()
    .select({ at: sql<number | null>`min(${notificationOutbox.nextAttemptAt})` })
    .from(notificationOutbox)
    .where(and(eq(notificationOutbox.status, "pending"), eq(notificationOutbox.channel, channel)))
    .get();
  return row?.at ?? null;
}

/** The provider accepted the notice: one UPDATE, the only way a notice becomes sent. */
export function markNoticeSent(id: number, providerId: string | null, sentAtMs: number): void {
  getDb()
    .update(notificationOutbox)
    .set({ status: "sent", providerId, sentAt: sentAtMs, lastError: null })
    .where(and(eq(notificationOutbox.id, id), eq(notificationOutbox.status, "pending")))
    .run();
}

/** The attempt failed; the notice is due again at `nextAttemptAtMs`. */
export function markNoticeRetry(id: number, error: string, nextAttemptAtMs: number): void {
  getDb()
    .update(notificationOutbox)
    .set({ lastError: error.slice(0, 1000), nextAttemptAt: nextAttemptAtMs })
    .where(and(eq(notificationOutbox.id, id), eq(notificationOutbox.status, "pending")))
    .run();
}

/** The notice will not be tried again. */
export function markNoticeFailed(id: number, error: string): void {
  getDb()
    .update(notificationOutbox)
    .set({ status: "failed", lastError: error.slice(0, 1000) })
    .where(and(eq(notificationOutbox.id, id), eq(notificationOutbox.status, "pending")))
    .run();
}

/** Every pending notice of a channel that cannot be sent (the channel is not set up) fails at once. */
export function failPendingNoticesOfChannel(channel: NoticeChannel, error: string): number {
  return getDb()
    .update(notificationOutbox)
    .set({ status: "failed", lastError: error.slice(0, 1000) })
    .where(and(eq(notificationOutbox.status, "pending"), eq(notificationOutbox.channel, channel)))
    .run().changes;
}

export interface OutboxFilter {
  status?: NoticeStatus;
  channel?: NoticeChannel;
  limit?: number;
}

/** Notices, newest first. */
export function listOutboxRows(filter: OutboxFilter = {}): OutboxRow[] {
  const where = [];
  if (filter.status) where.push(eq(notificationOutbox.status, filter.status));
  if (filter.channel) where.push(eq(notificationOutbox.channel, filter.channel));
  return getDb()
    .select()
    .from(notificationOutbox)
    .where(where.length ? and(...where) : undefined)
    .orderBy(desc(notificationOutbox.id))
    .limit(Math.min(Math.max(filter.limit ?? 100, 1), 1000))
    .all();
}

/** The notice with this dedupe key, if any. */
export function getNoticeByDedupeKey(dedupeKey: string): OutboxRow | undefined {
  return getDb()
    .select()
    .from(notificationOutbox)
    .where(eq(notificationOutbox.dedupeKey, dedupeKey))
    .get();
}

/** How many notices are in each state. */
export function countOutboxByStatus(): Record<NoticeStatus, number> {
  const out: Record<NoticeStatus, number> = { pending: 0, sent: 0, failed: 0 };
  const rows = getDb()
    .select({ status: notificationOutbox.status, n: sql<number>`count(*)` })
    .from(notificationOutbox)
    .groupBy(notificationOutbox.status)
    .all();
  for (const r of rows) out[r.status] = r.n;
  return out;
}
