import {
  index,
  integer,
  primaryKey,
  real,
  sqliteTable,
  text,
  uniqueIndex,
} from "drizzle-orm/sqlite-core";
import { users } from "./auth";
import { bool, createdAtMs, epochMs } from "./columns";
import { areas, sensorKindValues, sensors } from "./plant";
import { pours } from "./strength";

export const ruleKindValues = [
  "temp_low",
  "temp_high",
  "rh_low",
  "rate_rise",
  "rate_fall",
  "silent",
  "battery_low",
  "bin_range",
  "pour_strip",
  "pour_ship",
] as const;
export const severityValues = ["info", "warning", "critical"] as const;
export const episodeStateValues = ["open", "acknowledged", "cleared"] as const;
/**
 * Who hears of a rule's episodes: `on_call` texts the operator on call (escalating) and
 * e-mails QC and managers; `quality` e-mails QC and managers only; `digest` collects them
 * into the periodic digest e-mail.
 */
export const audienceValues = ["on_call", "quality", "digest"] as const;

/**
 * A condition worth telling someone about. Thresholds in SI (°C, %, °C/h, minutes for
 * silence). The scope narrows which sensors or pours it watches; all null means plant-wide.
 */
export const alertRules = sqliteTable("alert_rules", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  name: text("name").notNull(),
  kind: text("kind", { enum: ruleKindValues }).notNull(),
  threshold: real("threshold"),
  thresholdHigh: real("threshold_high"),
  holdMs: integer("hold_ms").notNull().default(0),
  clearMargin: real("clear_margin").notNull().default(0),
  severity: text("severity", { enum: severityValues }).notNull().default("warning"),
  audience: text("audience", { enum: audienceValues }).notNull().default("on_call"),
  scopeAreaId: integer("scope_area_id").references(() => areas.id, { onDelete: "cascade" }),
  scopeSensorKind: text("scope_sensor_kind", { enum: sensorKindValues }),
  scopeSensorId: text("scope_sensor_id").references(() => sensors.id, { onDelete: "cascade" }),
  scopePourId: integer("scope_pour_id").references(() => pours.id, { onDelete: "cascade" }),
  /** Unacknowledged this long, the next person on the rota is told; null: never. */
  escalateAfterMs: integer("escalate_after_ms"),
  enabled: bool("enabled").notNull().default(true),
  source: text("source"),
  createdBy: integer("created_by").references(() => users.id),
  createdAt: createdAtMs(),
  updatedAt: epochMs("updated_at"),
});

/** One spell of a rule's condition on one sensor or pour: opened, acknowledged, cleared. */
export const alertEpisodes = sqliteTable(
  "alert_episodes",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    ruleId: integer("rule_id")
      .notNull()
      .references(() => alertRules.id),
    sensorId: text("sensor_id").references(() => sensors.id),
    pourId: integer("pour_id").references(() => pours.id),
    state: text("state", { enum: episodeStateValues }).notNull(),
    severity: text("severity", { enum: severityValues }).notNull(),
    /** When the condition began, by the readings' own timestamps. */
    startedAt: epochMs("started_at").notNull(),
    openedAt: epochMs("opened_at").notNull(),
    triggerValue: real("trigger_value"),
    worstValue: real("worst_value"),
    acknowledgedAt: epochMs("acknowledged_at"),
    acknowledgedBy: integer("acknowledged_by").references(() => users.id),
    ackNote: text("ack_note"),
    /** How it was acknowledged: in Plinth ("web") or by replying to the text ("sms"). */
    ackVia: text("ack_via", { enum: ["web", "sms"] }),
    /** The latest value seen while it lasted, and when (reading time). */
    lastValue: real("last_value"),
    lastValueAt: epochMs("last_value_at"),
    clearedAt: epochMs("cleared_at"),
    /** When an information-level episode went out in a digest. */
    digestedAt: epochMs("digested_at"),
    escalationLevel: integer("escalation_level").notNull().default(0),
    lastNotifiedAt: epochMs("last_notified_at"),
    createdAt: createdAtMs(),
  },
  (t) => [
    index("alert_episodes_state_idx").on(t.state, t.openedAt),
    index("alert_episodes_sensor_idx").on(t.sensorId, t.openedAt),
    index("alert_episodes_pour_idx").on(t.pourId),
  ],
);

/**
 * Where each rule stands for each sensor or pour (the episode state machine's track),
 * written whenever its phase changes, in the same transaction as the episode it touches,
 * so a restart resumes from it and replays only the readings after it.
 */
export const alertTracks = sqliteTable(
  "alert_tracks",
  {
    ruleId: integer("rule_id")
      .notNull()
      .references(() => alertRules.id, { onDelete: "cascade" }),
    /** The sensor's id, or "pour:<id>" for a pour milestone. */
    subject: text("subject").notNull(),
    trackJson: text("track_json").notNull(),
    updatedAt: epochMs("updated_at").notNull(),
  },
  (t) => [primaryKey({ columns: [t.ruleId, t.subject] })],
);

/** Who is on call when: a weekly window per person (minutes from local midnight). */
export const onCallShifts = sqliteTable("on_call_shifts", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  /** The shift's name as the plant calls it ("Nights"). */
  name: text("name").notNull().default(""),
  userId: integer("user_id")
    .notNull()
    .references(() => users.id, { onDelete: "cascade" }),
  /** Days of the week as a bit mask, Sunday = bit 0. 127: every day. */
  weekdays: integer("weekdays").notNull().default(127),
  startMinute: integer("start_minute").notNull(),
  endMinute: integer("end_minute").notNull(),
  /** Order within the shift: 0 is told first, 1 on escalation, and so on. */
  escalationOrder: integer("escalation_order").notNull().default(0),
  createdAt: createdAtMs(),
});

/**
 * Every notice to be sent, written in the same transaction as the event that caused it.
 * The worker marks a row sent only after the provider accepted it.
 */
export const notificationOutbox = sqliteTable(
  "notification_outbox",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    dedupeKey: text("dedupe_key").notNull(),
    channel: text("channel", { enum: ["sms", "email"] }).notNull(),
    toAddress: text("to_address").notNull(),
    userId: integer("user_id").references(() => users.id),
    episodeId: integer("episode_id").references(() => alertEpisodes.id),
    reason: text("reason"),
    subject: text("subject"),
    body: text("body").notNull(),
    status: text("status", { enum: ["pending", "sent", "failed"] })
      .notNull()
      .default("pending"),
    attempts: integer("attempts").notNull().default(0),
    nextAttemptAt: epochMs("next_attempt_at").notNull(),
    lastError: text("last_error"),
    providerId: text("provider_id"),
    sentAt: epochMs("sent_at"),
    createdAt: createdAtMs(),
  },
  (t) => [
    uniqueIndex("notification_outbox_dedupe_unique").on(t.dedupeKey),
    index("notification_outbox_due_idx").on(t.status, t.nextAttemptAt),
  ],
);
