import { index, integer, sqliteTable, text } from "drizzle-orm/sqlite-core";
import { epochMs } from "./columns";

/**
 * The append-only audit log. Triggers in the migrations refuse UPDATE and DELETE.
 * actor_user_id is kept without a foreign key so that the record outlives any account.
 */
export const auditLog = sqliteTable(
  "audit_log",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    at: epochMs("at").notNull(),
    actorUserId: integer("actor_user_id"),
    actorLabel: text("actor_label").notNull(),
    action: text("action").notNull(),
    entityType: text("entity_type"),
    entityId: text("entity_id"),
    pourId: integer("pour_id"),
    detailJson: text("detail_json"),
    ip: text("ip"),
  },
  (t) => [
    index("audit_log_at_idx").on(t.at),
    index("audit_log_entity_idx").on(t.entityType, t.entityId),
    index("audit_log_pour_idx").on(t.pourId),
    index("audit_log_action_idx").on(t.action, t.at),
  ],
);
