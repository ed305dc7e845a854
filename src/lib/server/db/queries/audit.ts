import { and, desc, eq, gte, like, lt, or, type SQL } from "drizzle-orm";
import { getDb } from "../client";
import { auditLog } from "../schema";

export interface AuditActor {
  userId?: number | null;
  label: string;
  ip?: string | null;
}

export interface AuditEntryInput {
  action: string;
  entityType?: string;
  entityId?: string | number;
  pourId?: number | null;
  detail?: Record<string, unknown>;
}

/** Appends one entry to the audit log. The log is append-only (triggers refuse changes). */
export function writeAudit(actor: AuditActor, entry: AuditEntryInput, atMs = Date.now()): void {
  getDb()
    .insert(auditLog)
    .values({
      at: atMs,
      actorUserId: actor.userId ?? null,
      actorLabel: actor.label,
      action: entry.action,
      entityType: entry.entityType ?? null,
      entityId: entry.entityId === undefined ? null : String(entry.entityId),
      pourId: entry.pourId ?? null,
      detailJson: entry.detail ? JSON.stringify(entry.detail) : null,
      ip: actor.ip ?? null,
    })
    .run();
}

export interface AuditFilter {
  action?: string;
  q?: string;
  beforeId?: number;
  sinceMs?: number;
  limit?: number;
}

export type AuditRow = typeof auditLog.$inferSelect;

/** Newest first, paged by id. */
export function listAudit(filter: AuditFilter = {}): AuditRow[] {
  const where: SQL[] = [];
  if (filter.action) where.push(like(auditLog.action, `${filter.action}%`));
  if (filter.beforeId) where.push(lt(auditLog.id, filter.beforeId));
  if (filter.sinceMs) where.push(gte(auditLog.at, filter.sinceMs));
  if (filter.q) {
    const q = `%${filter.q}%`;
    where.push(
      or(
        like(auditLog.actorLabel, q),
        like(auditLog.entityId, q),
        like(auditLog.detailJson, q),
        eq(auditLog.action, filter.q),
      )!,
    );
  }
  return getDb()
    .select()
    .from(auditLog)
    .where(where.length ? and(...where) : undefined)
    .orderBy(desc(auditLog.id))
    .limit(Math.min(filter.limit ?? 100, 500))
    .all();
}
