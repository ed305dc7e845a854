import Database from "better-sqlite3";

const MIN = 60_000;
const HOUR = 60 * MIN;

export interface SeededAlerts {
  /** Rules written for the test, each scoped to one sensor so the demo's own episodes stay apart. */
  dryRuleId: number;
  coldRuleId: number;
  /** P-2611-03, a curing pour that holds CB-13 and CB-15. */
  pourId: number;
  operatorId: number;
  /** Open, warning: CB-13 at 91.2 % RH worst, 92 % now, on P-2611-03; one text sent about it. */
  openDry: number;
  /** Open, critical: CB-15 at 8.4 °C, on P-2611-03. */
  openCold: number;
  /** Cleared 18 hours ago after the operator acknowledged it by text with a note, on P-2611-03. */
  clearedDry: number;
  /** Acknowledged, not cleared, on CB-15, not on a pour. */
  ackedCold: number;
  /** The phone number the seeded text went to. */
  textedTo: string;
}

/**
 * Writes alert rules, episodes and one notice straight into a running Plinth's database, as
 * the engine would have left them, so pages and the API can be checked against known rows.
 */
export function seedAlerts(dbPath: string, nowMs = Date.now()): SeededAlerts {
  const db = new Database(dbPath, { fileMustExist: true });
  db.pragma("busy_timeout = 5000");
  try {
    const id = (sql: string, ...args: unknown[]) =>
      (db.prepare(sql).get(...args) as { id: number }).id;
    const pourId = id("select id from pours where code = ?", "P-2611-03");
    const operatorId = id("select id from users where email = 'operator@example.com'");
    const rule = db.prepare(
      `insert into alert_rules (name, kind, threshold, hold_ms, clear_margin, severity, audience, scope_sensor_id, enabled, created_at)
       values (?, ?, ?, 0, 1, ?, 'on_call', ?, 1, ?)`,
    );
    const dryRuleId = Number(
      rule.run("Test dry bag (CB-13)", "rh_low", 95, "warning", "CB-13", nowMs).lastInsertRowid,
    );
    const coldRuleId = Number(
      rule.run("Test cold bag (CB-15)", "temp_low", 10, "critical", "CB-15", nowMs).lastInsertRowid,
    );
    const episode = db.prepare(
      `insert into alert_episodes (rule_id, sensor_id, pour_id, state, severity, started_at, opened_at,
         trigger_value, worst_value, last_value, last_value_at, acknowledged_at, acknowledged_by, ack_note, ack_via,
         cleared_at, created_at)
       values (@rule, @sensor, @pour, @state, @severity, @started, @opened, @trigger, @worst, @last, @lastAt,
         @ackAt, @ackBy, @note, @via, @cleared, @created)`,
    );
    const base = {
      ackAt: null,
      ackBy: null,
      note: null,
      via: null,
      cleared: null,
      created: nowMs,
    };
    const clearedDry = Number(
      episode.run({
        ...base,
        rule: dryRuleId,
        sensor: "CB-13",
        pour: pourId,
        state: "cleared",
        severity: "warning",
        started: nowMs - 20 * HOUR,
        opened: nowMs - 20 * HOUR,
        trigger: 94.1,
        worst: 90.4,
        last: 96.8,
        lastAt: nowMs - 18 * HOUR,
        ackAt: nowMs - 19.5 * HOUR,
        ackBy: operatorId,
        note: "Re-wet the pads on CB-13",
        via: "sms",
        cleared: nowMs - 18 * HOUR,
      }).lastInsertRowid,
    );
    const ackedCold = Number(
      episode.run({
        ...base,
        rule: coldRuleId,
        sensor: "CB-15",
        pour: null,
        state: "acknowledged",
        severity: "critical",
        started: nowMs - 3 * HOUR,
        opened: nowMs - 3 * HOUR + 15 * MIN,
        trigger: 9.6,
        worst: 7.9,
        last: 8.8,
        lastAt: nowMs - 2 * MIN,
        ackAt: nowMs - 2 * HOUR,
        ackBy: operatorId,
        note: "Heater restarted",
        via: "web",
      }).lastInsertRowid,
    );
    const openDry = Number(
      episode.run({
        ...base,
        rule: dryRuleId,
        sensor: "CB-13",
        pour: pourId,
        state: "open",
        severity: "warning",
        started: nowMs - 40 * MIN,
        opened: nowMs - 40 * MIN,
        trigger: 93.8,
        worst: 91.2,
        last: 92,
        lastAt: nowMs - MIN,
      }).lastInsertRowid,
    );
    const openCold = Number(
      episode.run({
        ...base,
        rule: coldRuleId,
        sensor: "CB-15",
        pour: pourId,
        state: "open",
        severity: "critical",
        started: nowMs - 35 * MIN,
        opened: nowMs - 20 * MIN,
        trigger: 9.8,
        worst: 8.4,
        last: 8.4,
        lastAt: nowMs - MIN,
      }).lastInsertRowid,
    );
    const textedTo = "+15550100123";
    db.prepare(
      `insert into notification_outbox (dedupe_key, channel, to_address, user_id, episode_id, reason, body, status,
         attempts, next_attempt_at, provider_id, sent_at, created_at)
       values (?, 'sms', ?, ?, ?, 'first', 'Plinth WARNING: CB-13', 'sent', 1, ?, 'test-1', ?, ?)`,
    ).run(
      `test-${openDry}-first`,
      textedTo,
      operatorId,
      openDry,
      nowMs,
      nowMs - 39 * MIN,
      nowMs - 40 * MIN,
    );
    return {
      dryRuleId,
      coldRuleId,
      pourId,
      operatorId,
      openDry,
      openCold,
      clearedDry,
      ackedCold,
      textedTo,
    };
  } finally {
    db.close();
  }
}
