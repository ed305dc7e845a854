/**
 * The alert engine: turns readings and the clock into alert episodes and notices.
 *
 * - Each committed batch of readings (the bus's `readings` event) steps every applicable
 *   rule's track (the pure state machine of src/domain/alerts/episode.ts) on the readings'
 *   own timestamps, so a late backlog still raises what it shows, and one showing a
 *   condition already over is recorded as opened and cleared without waking anyone.
 * - A timer checks what readings cannot show: silent sensors, batteries, pours reaching
 *   strip or ship strength, episodes left unacknowledged past their escalation time, and
 *   the digest of information-level episodes.
 * - Every change is written in one transaction with its audit entries, the track it moved,
 *   and the notices it causes (the outbox; src/lib/server/notify), so a crash either keeps
 *   all of it or none, and a restart resumes from the stored tracks, replaying the readings
 *   after them.
 */
import { and, eq, inArray, isNull, lt } from "drizzle-orm";
import {
  stepEpisode,
  quietTrack,
  type EpisodeEvent,
  type RuleLimits,
  type Track,
} from "@/domain/alerts/episode";
import {
  digestBody,
  emailBody,
  emailSubject,
  smsBody,
  type NoticeFacts,
  type NoticeReason,
} from "@/domain/alerts/message";
import { rateCPerH, trimPoints, type TempPoint } from "@/domain/alerts/rate";
import {
  digestRecipients,
  escalationDeliveries,
  firstDeliveries,
  noticeNow,
  urgentDelivery,
  type Delivery,
  type Person,
} from "@/domain/alerts/recipients";
import { ruleKinds } from "@/domain/alerts/rules";
import { psiToMpa } from "@/domain/units";
import { getDb, getSqlite } from "../db/client";
import {
  acknowledgeEpisode,
  activeEpisodeRows,
  enabledRules,
  insertEpisode,
  latestOpenEpisodeTextedTo,
  loadTracks,
  saveTrack,
  updateEpisode,
  writeAuditTx,
  type DbOrTx,
  type EpisodeRow,
  type RuleRow,
} from "../db/queries/alerts";
import { seedDefaultRules } from "../db/queries/alertRules";
import { getSetting } from "../db/queries/settings";
import {
  alertEpisodes,
  auditLog,
  notificationOutbox,
  pours,
  releases,
  sensors,
} from "../db/schema";
import { env } from "../env";
import { bus, type AlertEvent, type ReadingEvent } from "../live/bus";
import { log } from "../log";
import { enqueueNotice } from "../notify/outbox";
import { NOTHING_WAITING, setReplyHandler } from "../notify/inbound";
import { pourStrength } from "../strength/pourStrength";
import { onCallPeople, staff } from "./people";

const MIN_MS = 60_000;
const HOUR_MS = 3_600_000;
/** How far back a restart replays readings into the tracks. */
const REPLAY_MS = 6 * HOUR_MS;
/** Temperatures kept per sensor for the rate rules. */
const RATE_KEEP_MS = 2 * HOUR_MS;

interface SensorInfo {
  id: string;
  label: string | null;
  kind: string | null;
  areaId: number | null;
  status: string;
  lastSeenAt: number | null;
  batteryPct: number | null;
}

interface State {
  started: boolean;
  rules: RuleRow[];
  /** Sensors by id (reloaded on sensor changes). */
  sensors: Map<string, SensorInfo>;
  /** Rules that apply to each sensor, computed on demand. */
  applicable: Map<string, RuleRow[]>;
  /** The same without the clock's rules. */
  readingRules: Map<string, RuleRow[]>;
  /** Sensors each pour-scoped rule's pour has had. */
  pourSensors: Map<number, Set<string>>;
  tracks: Map<string, Track>;
  /** The active episode of a track. */
  episodeOf: Map<string, number>;
  rates: Map<string, TempPoint[]>;
  timer: NodeJS.Timeout | null;
  ticking: boolean;
  lastPourCheckMs: number;
}

const KEY = Symbol.for("plinth.alerts.engine");
const g = globalThis as unknown as { [KEY]?: State };

function state(): State {
  return (g[KEY] ??= {
    started: false,
    rules: [],
    sensors: new Map(),
    applicable: new Map(),
    readingRules: new Map(),
    pourSensors: new Map(),
    tracks: new Map(),
    episodeOf: new Map(),
    rates: new Map(),
    timer: null,
    ticking: false,
    lastPourCheckMs: 0,
  });
}

const trackKey = (ruleId: number, subject: string) => `${ruleId}|${subject}`;

const limitsOf = (r: RuleRow): RuleLimits => ({
  kind: r.kind,
  threshold: r.threshold,
  thresholdHigh: r.thresholdHigh,
  holdMs: r.holdMs,
  clearMargin: r.clearMargin,
});

// Loading ------------------------------------------------------------------------------

function loadSensors(onlyId?: string): Map<string, SensorInfo> {
  const query = getDb()
    .select({
      id: sensors.id,
      label: sensors.label,
      kind: sensors.kind,
      areaId: sensors.areaId,
      status: sensors.status,
      lastSeenAt: sensors.lastSeenAt,
      batteryPct: sensors.batteryPct,
    })
    .from(sensors);
  const rows = onlyId === undefined ? query.all() : query.where(eq(sensors.id, onlyId)).all();
  return new Map(rows.map((r) => [r.id, r]));
}

function loadPourSensors(rules: readonly RuleRow[]): Map<number, Set<string>> {
  const ids = [...new Set(rules.map((r) => r.scopePourId).filter((v): v is number => v !== null))];
  const out = new Map<number, Set<string>>();
  if (ids.length === 0) return out;
  const stmt = getSqlite().prepare<[number], { sensor_id: string }>(
    "select sensor_id from pour_sensors where pour_id = ?",
  );
  for (const id of ids) out.set(id, new Set(stmt.all(id).map((r) => r.sensor_id)));
  return out;
}

/** Reloads rules and sensors; tracks of rules gone or disabled are dropped, their episodes cleared. */
function reloadConfig(): void {
  const s = state();
  s.rules = enabledRules();
  s.sensors = loadSensors();
  s.pourSensors = loadPourSensors(s.rules);
  s.applicable.clear();
  s.readingRules.clear();
  const live = new Set(s.rules.map((r) => r.id));
  for (const key of [...s.tracks.keys()]) {
    const ruleId = Number(key.split("|")[0]);
    if (!live.has(ruleId)) s.tracks.delete(key);
  }
  closeEpisodesOfDisabledRules(live);
}

function closeEpisodesOfDisabledRules(live: Set<number>): void {
  const s = state();
  const stale = activeEpisodeRows().filter((e) => !live.has(e.ruleId));
  if (stale.length === 0) return;
  const now = Date.now();
  getDb().transaction((tx) => {
    for (const e of stale) {
      updateEpisode(tx, e.id, { state: "cleared", clearedAt: now });
      writeAuditTx(tx, {
        atMs: now,
        action: "alert.cleared",
        episodeId: e.id,
        pourId: e.pourId,
        detail: { reason: "the rule was disabled or removed", sensor: e.sensorId },
      });
    }
  });
  for (const e of stale) {
    for (const [k, id] of s.episodeOf) if (id === e.id) s.episodeOf.delete(k);
    emitAlert(e, "cleared", "cleared");
  }
}

function ruleApplies(r: RuleRow, sensor: SensorInfo): boolean {
  if (ruleKinds[r.kind].pour) return false;
  if (sensor.status === "retired") return false;
  if (r.scopeSensorId !== null && r.scopeSensorId !== sensor.id) return false;
  if (r.scopeSensorKind !== null && r.scopeSensorKind !== sensor.kind) return false;
  if (r.scopeAreaId !== null && r.scopeAreaId !== sensor.areaId) return false;
  if (r.kind === "bin_range" && r.scopeSensorId === null && sensor.kind !== "bin") return false;
  if (r.scopePourId !== null && !state().pourSensors.get(r.scopePourId)?.has(sensor.id))
    return false;
  return true;
}

/** Rules a reading's own values speak to (not the clock's: silences and batteries). */
function readingRulesFor(sensorId: string): RuleRow[] {
  const s = state();
  let list = s.readingRules.get(sensorId);
  if (!list) {
    list = rulesFor(sensorId).filter((r) => r.kind !== "silent" && r.kind !== "battery_low");
    s.readingRules.set(sensorId, list);
  }
  return list;
}

function rulesFor(sensorId: string): RuleRow[] {
  const s = state();
  let list = s.applicable.get(sensorId);
  if (list) return list;
  let sensor = s.sensors.get(sensorId);
  if (!sensor) {
    // A sensor registered since the last load: read that one.
    sensor = loadSensors(sensorId).get(sensorId);
    if (sensor) s.sensors.set(sensorId, sensor);
  }
  list = sensor ? s.rules.filter((r) => ruleApplies(r, sensor)) : [];
  s.applicable.set(sensorId, list);
  return list;
}

// Stepping -----------------------------------------------------------------------------

interface Obs {
  rule: RuleRow;
  sensorId: string;
  tsMs: number;
  value: number;
}

interface Change {
  rule: RuleRow;
  sensorId: string;
  key: string;
  before: Track;
  after: Track;
  events: EpisodeEvent[];
}

/** Steps each observation through its track (staged: memory changes only after the commit). */
function stepAll(observations: readonly Obs[]): Change[] {
  const s = state();
  const staged = new Map<string, Change>();
  const sorted = [...observations].sort((a, b) => a.tsMs - b.tsMs);
  for (const o of sorted) {
    const key = trackKey(o.rule.id, o.sensorId);
    const change = staged.get(key);
    const current = change ? change.after : (s.tracks.get(key) ?? quietTrack);
    const { track, events } = stepEpisode(
      current,
      { tsMs: o.tsMs, value: o.value },
      limitsOf(o.rule),
    );
    if (change) {
      change.after = track;
      change.events.push(...events);
    } else
      staged.set(key, {
        rule: o.rule,
        sensorId: o.sensorId,
        key,
        before: current,
        after: track,
        events: [...events],
      });
  }
  return [...staged.values()];
}

/** The value a reading gives a rule, in the rule's unit; null when it says nothing to it. */
function readingValue(r: RuleRow, reading: ReadingEvent, rate: number | null): number | null {
  switch (r.kind) {
    case "temp_low":
    case "temp_high":
    case "bin_range":
      return reading.tempC;
    case "rh_low":
      return reading.rhPct;
    case "rate_rise":
      return rate;
    case "rate_fall":
      return rate === null ? null : -rate;
    default:
      return null;
  }
}

/** Folds a committed batch of readings into the tracks; writes and tells what changed. */
export function onReadings(events: readonly ReadingEvent[], nowMs = Date.now()): void {
  const s = state();
  if (!s.started || s.rules.length === 0) return;
  const observations: Obs[] = [];
  const newest = new Map<string, number>();
  const sorted = [...events].sort((a, b) => a.tsMs - b.tsMs);
  const curing = new Map<string, CuringWindow[]>();
  for (const reading of sorted) {
    newest.set(reading.sensorId, Math.max(newest.get(reading.sensorId) ?? 0, reading.tsMs));
    let rules = readingRulesFor(reading.sensorId);
    if (rules.length === 0) continue;
    const kind = s.sensors.get(reading.sensorId)?.kind;
    if (kind === "bag" || kind === "embedded") {
      // A bag or probe watches concrete only while it is on a curing pour: an empty bag
      // at the room's humidity is not a dry cure.
      let windows = curing.get(reading.sensorId);
      if (!windows) curing.set(reading.sensorId, (windows = curingWindows(reading.sensorId)));
      if (
        !windows.some((w) => w.fromAt <= reading.tsMs && (w.toAt === null || reading.tsMs < w.toAt))
      )
        rules = rules.filter((r) => !CURING_KINDS.has(r.kind));
      if (rules.length === 0) continue;
    }
    let rate: number | null = null;
    if (rules.some((r) => r.kind === "rate_rise" || r.kind === "rate_fall")) {
      const buf = s.rates.get(reading.sensorId) ?? [];
      const last = buf[buf.length - 1];
      if (!last || reading.tsMs > last.tsMs) {
        buf.push({ tsMs: reading.tsMs, tempC: reading.tempC });
        trimPoints(buf, RATE_KEEP_MS);
        s.rates.set(reading.sensorId, buf);
        rate = rateCPerH(buf);
      }
    }
    for (const r of rules) {
      const value = readingValue(r, reading, rate);
      if (value !== null && Number.isFinite(value))
        observations.push({ rule: r, sensorId: reading.sensorId, tsMs: reading.tsMs, value });
    }
  }
  // A reading ends a silence: silent rules see the minutes since the newest reading, now.
  for (const [sensorId, ts] of newest) {
    const info = s.sensors.get(sensorId);
    if (info) info.lastSeenAt = Math.max(info.lastSeenAt ?? 0, ts);
    for (const r of rulesFor(sensorId)) {
      if (r.kind !== "silent") continue;
      const key = trackKey(r.id, sensorId);
      const track = s.tracks.get(key);
      // A quiet track stays quiet on a reading: only a silence in progress needs the step.
      if (!track || track.phase === "quiet") continue;
      const last = track.lastTsMs ?? 0;
      observations.push({
        rule: r,
        sensorId,
        tsMs: Math.max(nowMs, last + 1),
        value: Math.max(0, (nowMs - (info?.lastSeenAt ?? ts)) / MIN_MS),
      });
    }
  }
  if (observations.length) commitChanges(stepAll(observations), nowMs, true);
}

// Writing ------------------------------------------------------------------------------

interface Opened {
  episode: EpisodeRow;
  rule: RuleRow;
  /** Still active at the end of the batch (else it opened and cleared within it). */
  stillActive: boolean;
}

interface CuringWindow {
  fromAt: number;
  toAt: number | null;
}

/** Rules about the curing concrete itself (not the sensor's health). */
const CURING_KINDS = new Set<RuleRow["kind"]>([
  "temp_low",
  "temp_high",
  "rh_low",
  "rate_rise",
  "rate_fall",
]);

/** When a sensor was on a pour that is still curing. */
function curingWindows(sensorId: string): CuringWindow[] {
  return getSqlite()
    .prepare<[string], { from_at: number; to_at: number | null }>(
      `select ps.from_at, ps.to_at from pour_sensors ps join pours p on p.id = ps.pour_id
       where ps.sensor_id = ? and p.status = 'curing'`,
    )
    .all(sensorId)
    .map((r) => ({ fromAt: r.from_at, toAt: r.to_at }));
}

/** The pour a sensor was on at a time, if any (the newest such assignment). */
function pourAt(sensorId: string, tsMs: number): number | null {
  const row = getSqlite()
    .prepare<[string, number, number], { pour_id: number }>(
      `select ps.pour_id from pour_sensors ps join pours p on p.id = ps.pour_id
       where ps.sensor_id = ? and ps.from_at <= ? and (ps.to_at is null or ps.to_at > ?)
         and p.status != 'void'
       order by p.cast_at desc limit 1`,
    )
    .get(sensorId, tsMs, tsMs);
  return row?.pour_id ?? null;
}

/** Writes the changes of one step in one transaction, then updates memory and tells the bus. */
function commitChanges(changes: readonly Change[], nowMs: number, notify: boolean): void {
  const s = state();
  const moved = changes.filter(
    (c) => c.events.length > 0 || c.before.phase !== c.after.phase || !s.tracks.has(c.key),
  );
  const quietOnly = changes.filter((c) => !moved.includes(c));
  for (const c of quietOnly) s.tracks.set(c.key, c.after);
  if (moved.length === 0) return;

  const emitted: { row: EpisodeRow; change: AlertEvent["change"] }[] = [];
  const newEpisodeOf = new Map<string, number | null>();
  const db = getDb();
  try {
    db.transaction((tx) => {
      const opened: Opened[] = [];
      const clearedEarlier: EpisodeRow[] = [];
      for (const c of moved) {
        let episodeId = newEpisodeOf.has(c.key)
          ? newEpisodeOf.get(c.key)!
          : (s.episodeOf.get(c.key) ?? null);
        for (const ev of c.events) {
          if (ev.type === "opened") {
            const row = insertEpisode(tx, {
              ruleId: c.rule.id,
              sensorId: c.sensorId,
              pourId: pourAt(c.sensorId, ev.startedAtMs),
              state: "open",
              severity: c.rule.severity,
              startedAt: ev.startedAtMs,
              openedAt: ev.openedAtMs,
              triggerValue: ev.value,
              worstValue: ev.worst,
              lastValue: ev.value,
              lastValueAt: ev.openedAtMs,
            });
            writeAuditTx(tx, {
              atMs: nowMs,
              action: "alert.opened",
              episodeId: row.id,
              pourId: row.pourId,
              detail: {
                rule: c.rule.name,
                sensor: c.sensorId,
                value: ev.value,
                started_at: new Date(ev.startedAtMs).toISOString(),
                opened_at: new Date(ev.openedAtMs).toISOString(),
              },
            });
            episodeId = row.id;
            opened.push({ episode: row, rule: c.rule, stillActive: true });
            emitted.push({ row, change: "opened" });
          } else if (ev.type === "worsened" && episodeId !== null) {
            updateEpisode(tx, episodeId, {
              worstValue: ev.worst,
              lastValue: ev.worst,
              lastValueAt: ev.atMs,
            });
          } else if (ev.type === "cleared" && episodeId !== null) {
            const before = tx
              .select()
              .from(alertEpisodes)
              .where(eq(alertEpisodes.id, episodeId))
              .get();
            updateEpisode(tx, episodeId, {
              state: "cleared",
              clearedAt: ev.clearedAtMs,
              worstValue: ev.worst,
            });
            writeAuditTx(tx, {
              atMs: nowMs,
              action: "alert.cleared",
              episodeId,
              pourId: before?.pourId ?? null,
              detail: {
                rule: c.rule.name,
                sensor: c.sensorId,
                cleared_at: new Date(ev.clearedAtMs).toISOString(),
                worst: ev.worst,
              },
            });
            const same = opened.find((o) => o.episode.id === episodeId);
            if (same) same.stillActive = false;
            else if (before) clearedEarlier.push(before);
            if (before) emitted.push({ row: { ...before, state: "cleared" }, change: "cleared" });
            episodeId = null;
          }
        }
        newEpisodeOf.set(c.key, episodeId);
        saveTrack(tx, c.rule.id, c.sensorId, JSON.stringify(c.after));
      }
      if (notify) {
        const people = opened.length || clearedEarlier.length ? staff() : [];
        for (const o of opened) {
          if (!o.stillActive) continue;
          tellOpened(tx, o.episode, o.rule, people, nowMs);
        }
        for (const e of clearedEarlier) tellCleared(tx, e, people);
      }
    });
  } catch (err) {
    log.error("alert engine: writing episodes failed; reloading its state from the database", {
      err,
    });
    resumeFromDatabase();
    return;
  }
  for (const c of moved) {
    s.tracks.set(c.key, c.after);
    const id = newEpisodeOf.get(c.key);
    if (id === null || id === undefined) s.episodeOf.delete(c.key);
    else s.episodeOf.set(c.key, id);
  }
  for (const e of emitted) emitAlert(e.row, e.change, e.change === "cleared" ? "cleared" : "open");
}

function emitAlert(
  row: Pick<EpisodeRow, "id" | "ruleId" | "sensorId" | "pourId" | "severity">,
  change: AlertEvent["change"],
  st: AlertEvent["state"],
): void {
  bus().emit("alert", {
    episodeId: row.id,
    change,
    state: st,
    ruleId: row.ruleId,
    sensorId: row.sensorId,
    pourId: row.pourId,
    severity: row.severity,
  });
}

// Telling ------------------------------------------------------------------------------

function plantTimeText(ms: number): string {
  const tz = getSetting("time_zone");
  return new Date(ms).toLocaleString("en-US", {
    timeZone: tz,
    month: "short",
    day: "numeric",
    hour: "2-digit",
    minute: "2-digit",
    hourCycle: "h23",
  });
}

function factsOf(e: EpisodeRow, rule: RuleRow): NoticeFacts {
  const sensor = e.sensorId ? state().sensors.get(e.sensorId) : undefined;
  const pour =
    e.pourId === null
      ? undefined
      : getDb().select({ code: pours.code }).from(pours).where(eq(pours.id, e.pourId)).get();
  const base = env().PUBLIC_URL?.replace(/\/+$/, "");
  return {
    plantName: getSetting("plant_name"),
    ruleName: rule.name,
    kind: rule.kind,
    severity: e.severity,
    threshold: rule.threshold,
    thresholdHigh: rule.thresholdHigh,
    sensorId: e.sensorId,
    sensorLabel: sensor?.label ?? null,
    pourCode: pour?.code ?? null,
    value: e.triggerValue,
    worst: e.worstValue,
    startedAtText: plantTimeText(e.startedAt),
    link: base ? `${base}/alerts/${e.id}` : null,
  };
}

function enqueueDeliveries(
  tx: DbOrTx,
  e: EpisodeRow,
  deliveries: readonly Delivery[],
  facts: NoticeFacts,
  reason: NoticeReason,
  tag: string,
): void {
  for (const d of deliveries) {
    const units = d.person.units;
    enqueueNotice(
      {
        dedupeKey: `episode:${e.id}:${tag}:user:${d.person.id}:${d.channel}`,
        channel: d.channel,
        to: d.to,
        body: d.channel === "sms" ? smsBody(facts, reason, units) : emailBody(facts, reason, units),
        subject: d.channel === "email" ? emailSubject(facts, reason) : null,
        userId: d.person.id,
        episodeId: e.id,
        reason,
      },
      tx,
    );
  }
}

function tellOpened(
  tx: DbOrTx,
  e: EpisodeRow,
  rule: RuleRow,
  people: Person[],
  nowMs: number,
): void {
  if (!noticeNow(rule.audience, rule.severity)) return;
  const onCall = rule.audience === "on_call" ? onCallPeople(nowMs, people) : [];
  const deliveries = firstDeliveries({
    audience: rule.audience,
    severity: rule.severity,
    onCall,
    staff: people,
  });
  if (deliveries.length === 0) return;
  enqueueDeliveries(tx, e, deliveries, factsOf(e, rule), "first", "first");
  updateEpisode(tx, e.id, { lastNotifiedAt: nowMs });
}

/** An episode nobody acknowledged cleared by itself: those texted about it hear so. */
function tellCleared(tx: DbOrTx, e: EpisodeRow, people: Person[]): void {
  if (e.state !== "open") return;
  const texted = tx
    .select({ userId: notificationOutbox.userId })
    .from(notificationOutbox)
    .where(and(eq(notificationOutbox.episodeId, e.id), eq(notificationOutbox.channel, "sms")))
    .all()
    .map((r) => r.userId);
  if (texted.length === 0) return;
  const rule = state().rules.find((r) => r.id === e.ruleId);
  if (!rule) return;
  const deliveries = people
    .filter((p) => texted.includes(p.id))
    .map(urgentDelivery)
    .filter((d): d is Delivery => d !== null && d.channel === "sms");
  enqueueDeliveries(tx, e, deliveries, factsOf(e, rule), "cleared", "cleared");
}

// The clock ----------------------------------------------------------------------------

/** One turn of the timer: silences, batteries, pour milestones, escalations, the digest. */
export function tick(nowMs = Date.now()): void {
  const s = state();
  if (!s.started || s.ticking) return;
  s.ticking = true;
  try {
    checkSensorsByClock(nowMs);
    checkPours(nowMs);
    escalate(nowMs);
    sendDigest(nowMs);
  } catch (err) {
    log.error("alert engine tick failed", { err });
  } finally {
    s.ticking = false;
  }
}

/**
 * An episode about curing concrete ends when its sensor is no longer on a curing pour (the
 * pour was stripped, or the sensor moved): nothing is left there to protect.
 */
function closeEpisodesOffCuring(nowMs: number): void {
  const s = state();
  const stale: { e: EpisodeRow; key: string }[] = [];
  for (const [key, id] of s.episodeOf) {
    const [ruleIdText, subject] = key.split("|") as [string, string];
    if (subject.startsWith("pour:")) continue;
    const rule = s.rules.find((r) => r.id === Number(ruleIdText));
    if (!rule || !CURING_KINDS.has(rule.kind)) continue;
    const kind = s.sensors.get(subject)?.kind;
    if (kind !== "bag" && kind !== "embedded") continue;
    const now = curingWindows(subject).some(
      (w) => w.fromAt <= nowMs && (w.toAt === null || nowMs < w.toAt),
    );
    if (now) continue;
    const e = getDb().select().from(alertEpisodes).where(eq(alertEpisodes.id, id)).get();
    if (e && e.state !== "cleared") stale.push({ e, key });
  }
  if (stale.length === 0) return;
  getDb().transaction((tx) => {
    for (const { e, key } of stale) {
      updateEpisode(tx, e.id, { state: "cleared", clearedAt: nowMs });
      writeAuditTx(tx, {
        atMs: nowMs,
        action: "alert.cleared",
        episodeId: e.id,
        pourId: e.pourId,
        detail: { reason: "the sensor is no longer on a curing pour", sensor: e.sensorId },
      });
      const [ruleIdText, subject] = key.split("|") as [string, string];
      saveTrack(
        tx,
        Number(ruleIdText),
        subject,
        JSON.stringify({ phase: "quiet", lastTsMs: nowMs }),
      );
    }
  });
  for (const { e, key } of stale) {
    s.episodeOf.delete(key);
    s.tracks.set(key, { phase: "quiet", lastTsMs: nowMs });
    emitAlert(e, "cleared", "cleared");
  }
}

function checkSensorsByClock(nowMs: number): void {
  const s = state();
  closeEpisodesOffCuring(nowMs);
  const clockRules = s.rules.filter((r) => r.kind === "silent" || r.kind === "battery_low");
  if (clockRules.length === 0) return;
  s.sensors = loadSensors();
  s.applicable.clear();
  s.readingRules.clear();
  const observations: Obs[] = [];
  for (const sensor of s.sensors.values()) {
    for (const r of rulesFor(sensor.id)) {
      if (r.kind !== "silent" && r.kind !== "battery_low") continue;
      const key = trackKey(r.id, sensor.id);
      const ts = Math.max(nowMs, (s.tracks.get(key)?.lastTsMs ?? 0) + 1);
      if (r.kind === "silent" && sensor.lastSeenAt !== null)
        observations.push({
          rule: r,
          sensorId: sensor.id,
          tsMs: ts,
          value: Math.max(0, (nowMs - sensor.lastSeenAt) / MIN_MS),
        });
      if (r.kind === "battery_low" && sensor.batteryPct !== null)
        observations.push({ rule: r, sensorId: sensor.id, tsMs: ts, value: sensor.batteryPct });
    }
  }
  if (observations.length) commitChanges(stepAll(observations), nowMs, true);
}

const OPEN_POUR_STATUSES = ["curing", "stripped", "ready_to_ship"] as const;

/**
 * Pours reaching their strip or ship strength open a milestone episode once per rule and
 * pour; it clears when that release is signed or the pour moves on.
 */
function checkPours(nowMs: number): void {
  const s = state();
  const rules = s.rules.filter((r) => r.kind === "pour_strip" || r.kind === "pour_ship");
  const db = getDb();
  // Clear milestone episodes whose release was signed (or the pour is gone or shipped).
  const activeMilestones = activeEpisodeRows().filter(
    (e) => e.sensorId === null && e.pourId !== null,
  );
  for (const e of activeMilestones) {
    const rule = s.rules.find((r) => r.id === e.ruleId);
    if (!rule) continue;
    const kind = rule.kind === "pour_strip" ? "strip" : "ship";
    const released = db
      .select({ id: releases.id })
      .from(releases)
      .where(and(eq(releases.pourId, e.pourId!), eq(releases.kind, kind)))
      .get();
    const pour = db
      .select({ status: pours.status })
      .from(pours)
      .where(eq(pours.id, e.pourId!))
      .get();
    if (released || !pour || pour.status === "shipped" || pour.status === "void") {
      db.transaction((tx) => {
        updateEpisode(tx, e.id, { state: "cleared", clearedAt: nowMs });
        writeAuditTx(tx, {
          atMs: nowMs,
          action: "alert.cleared",
          episodeId: e.id,
          pourId: e.pourId,
          detail: { rule: rule.name, reason: released ? `${kind} release signed` : "pour closed" },
        });
      });
      emitAlert(e, "cleared", "cleared");
    }
  }
  if (rules.length === 0) return;
  const open = db
    .select({ id: pours.id, code: pours.code, status: pours.status })
    .from(pours)
    .where(inArray(pours.status, [...OPEN_POUR_STATUSES]))
    .all();
  for (const pour of open) {
    const pending = rules.filter((r) => {
      if (r.scopePourId !== null && r.scopePourId !== pour.id) return false;
      if (r.kind === "pour_strip" && pour.status !== "curing") return false;
      return !s.episodeOf.has(trackKey(r.id, `pour:${pour.id}`));
    });
    if (pending.length === 0) continue;
    const done = db
      .select({ ruleId: alertEpisodes.ruleId })
      .from(alertEpisodes)
      .where(
        and(
          eq(alertEpisodes.pourId, pour.id),
          inArray(
            alertEpisodes.ruleId,
            pending.map((r) => r.id),
          ),
        ),
      )
      .all();
    for (const d of done) s.episodeOf.set(trackKey(d.ruleId, `pour:${pour.id}`), -1);
    const unchecked = pending.filter((r) => !done.some((d) => d.ruleId === r.id));
    if (unchecked.length === 0) continue;
    const view = pourStrength(pour.id, nowMs);
    if (!view || !view.calibrated) continue;
    for (const r of unchecked) {
      const m = r.kind === "pour_strip" ? view.strip : view.ship;
      if (!m.reached_at) continue;
      const governing = view.sensors.find((x) => x.sensor === view.governing_sensor);
      const strengthMpa =
        governing?.strength_psi === null || governing === undefined
          ? null
          : psiToMpa(governing.strength_psi);
      const reachedMs = Date.parse(m.reached_at);
      let row: EpisodeRow | undefined;
      db.transaction((tx) => {
        row = insertEpisode(tx, {
          ruleId: r.id,
          sensorId: null,
          pourId: pour.id,
          state: "open",
          severity: r.severity,
          startedAt: reachedMs,
          openedAt: nowMs,
          triggerValue: strengthMpa,
          worstValue: strengthMpa,
          lastValue: strengthMpa,
          lastValueAt: nowMs,
        });
        writeAuditTx(tx, {
          atMs: nowMs,
          action: "alert.opened",
          episodeId: row.id,
          pourId: pour.id,
          detail: {
            rule: r.name,
            pour: pour.code,
            reached_at: m.reached_at,
            threshold_psi: m.threshold_psi,
            governing_sensor: view.governing_sensor,
          },
        });
        tellOpened(tx, row, r, staff(), nowMs);
      });
      if (row) {
        s.episodeOf.set(trackKey(r.id, `pour:${pour.id}`), row.id);
        emitAlert(row, "opened", "open");
      }
    }
  }
}

/** Open episodes left unacknowledged past their rule's time go to the next person. */
function escalate(nowMs: number): void {
  const s = state();
  const candidates = getDb()
    .select()
    .from(alertEpisodes)
    .where(eq(alertEpisodes.state, "open"))
    .all()
    .filter((e) => {
      const rule = s.rules.find((r) => r.id === e.ruleId);
      return (
        rule &&
        rule.audience === "on_call" &&
        rule.severity !== "info" &&
        rule.escalateAfterMs !== null &&
        e.lastNotifiedAt !== null &&
        nowMs - e.lastNotifiedAt >= rule.escalateAfterMs
      );
    });
  if (candidates.length === 0) return;
  const people = staff();
  const onCall = onCallPeople(nowMs, people);
  for (const e of candidates) {
    const rule = s.rules.find((r) => r.id === e.ruleId)!;
    const level = e.escalationLevel + 1;
    const deliveries = escalationDeliveries({ level, onCall, staff: people });
    getDb().transaction((tx) => {
      // Re-read inside the transaction: an acknowledgement may have landed meanwhile.
      const now = tx.select().from(alertEpisodes).where(eq(alertEpisodes.id, e.id)).get();
      if (!now || now.state !== "open") return;
      if (!deliveries || deliveries.length === 0) {
        // Nobody further to tell: stop escalating (the episode stays open on every screen).
        updateEpisode(tx, e.id, { escalationLevel: level, lastNotifiedAt: null });
        return;
      }
      const facts = {
        ...factsOf(e, rule),
        unackedFor: `${Math.round((nowMs - (e.lastNotifiedAt ?? e.openedAt)) / MIN_MS)} min`,
      };
      enqueueDeliveries(tx, e, deliveries, facts, "escalate", `escalate${level}`);
      updateEpisode(tx, e.id, { escalationLevel: level, lastNotifiedAt: nowMs });
      writeAuditTx(tx, {
        atMs: nowMs,
        action: "alert.escalated",
        episodeId: e.id,
        pourId: e.pourId,
        detail: { level, told: deliveries.map((d) => `${d.person.name} (${d.channel})`) },
      });
    });
  }
}

/** The digest period a moment falls in, and whether its digest is due yet. */
function digestPeriod(nowMs: number): { key: string; text: string; due: boolean } {
  const every = env().ALERT_DIGEST_EVERY_MINUTES;
  if (every) {
    const n = Math.floor(nowMs / (every * MIN_MS));
    return { key: `every${every}:${n}`, text: `to ${plantTimeText(nowMs)}`, due: true };
  }
  const tz = getSetting("time_zone");
  const parts = new Intl.DateTimeFormat("en-CA", {
    timeZone: tz,
    year: "numeric",
    month: "2-digit",
    day: "2-digit",
    hour: "2-digit",
    hourCycle: "h23",
  }).formatToParts(nowMs);
  const get = (t: string) => parts.find((p) => p.type === t)?.value ?? "";
  const date = `${get("year")}-${get("month")}-${get("day")}`;
  return { key: date, text: date, due: Number(get("hour")) >= env().ALERT_DIGEST_HOUR };
}

function sendDigest(nowMs: number): void {
  const period = digestPeriod(nowMs);
  if (!period.due) return;
  const candidates = getDb()
    .select()
    .from(alertEpisodes)
    .where(
      and(
        eq(alertEpisodes.severity, "info"),
        isNull(alertEpisodes.digestedAt),
        lt(alertEpisodes.openedAt, nowMs),
      ),
    )
    .all();
  const s = state();
  // What was already told at once (a milestone e-mailed to QC) is not repeated in the digest.
  const items = candidates.filter((e) => {
    const rule = s.rules.find((r) => r.id === e.ruleId);
    return rule !== undefined && !noticeNow(rule.audience, rule.severity);
  });
  if (items.length === 0) {
    if (candidates.length)
      getDb()
        .update(alertEpisodes)
        .set({ digestedAt: nowMs })
        .where(
          inArray(
            alertEpisodes.id,
            candidates.map((e) => e.id),
          ),
        )
        .run();
    return;
  }
  const people = staff();
  const recipients = digestRecipients(people);
  getDb().transaction((tx) => {
    for (const d of recipients) {
      const facts = items.flatMap((e) => {
        const rule = s.rules.find((r) => r.id === e.ruleId);
        if (!rule) return [];
        return [{ ...factsOf(e, rule), openedAtText: plantTimeText(e.openedAt), state: e.state }];
      });
      if (facts.length === 0) continue;
      const { subject, body } = digestBody(
        getSetting("plant_name"),
        period.text,
        facts,
        d.person.units,
      );
      enqueueNotice(
        {
          dedupeKey: `digest:${period.key}:user:${d.person.id}`,
          channel: "email",
          to: d.to,
          subject,
          body,
          userId: d.person.id,
          reason: "digest",
        },
        tx,
      );
    }
    tx.update(alertEpisodes)
      .set({ digestedAt: nowMs })
      .where(
        inArray(
          alertEpisodes.id,
          candidates.map((e) => e.id),
        ),
      )
      .run();
  });
}

// Replies ------------------------------------------------------------------------------

function onReply(reply: { userId: number; note: string | null }): { ok: boolean; message: string } {
  const id = latestOpenEpisodeTextedTo(reply.userId);
  if (id === undefined) return { ok: true, message: NOTHING_WAITING };
  const person = staff().find((p) => p.id === reply.userId);
  const result = acknowledgeEpisode({
    episodeId: id,
    userId: reply.userId,
    actorLabel: person?.email ?? `user:${reply.userId}`,
    note: reply.note,
    via: "sms",
    atMs: Date.now(),
  });
  if (!result.ok) return { ok: true, message: NOTHING_WAITING };
  const e = result.episode;
  emitAlert(e, "acknowledged", e.state);
  const where = [e.sensorId, e.pourCode ? `pour ${e.pourCode}` : null].filter(Boolean).join(", ");
  return { ok: true, message: `Plinth: acknowledged ${e.ruleName} at ${where}. Thank you.` };
}

// Start and stop -----------------------------------------------------------------------

/** Rebuilds memory from the database: tracks, active episodes, and the readings since. */
function resumeFromDatabase(nowMs = Date.now()): void {
  const s = state();
  reloadConfig();
  s.tracks.clear();
  s.episodeOf.clear();
  s.rates.clear();
  for (const t of loadTracks()) {
    try {
      s.tracks.set(trackKey(t.ruleId, t.subject), JSON.parse(t.trackJson) as Track);
    } catch {
      // an unreadable track starts quiet
    }
  }
  for (const e of activeEpisodeRows()) {
    const subject = e.sensorId ?? `pour:${e.pourId}`;
    const key = trackKey(e.ruleId, subject);
    s.episodeOf.set(key, e.id);
    const t = s.tracks.get(key);
    if (e.sensorId && (!t || t.phase !== "active")) {
      s.tracks.set(key, {
        phase: "active",
        lastTsMs: e.lastValueAt ?? e.openedAt,
        startedAtMs: e.startedAt,
        openedAtMs: e.openedAt,
        worst: e.worstValue ?? e.triggerValue ?? 0,
        clearingSinceMs: null,
      });
    }
  }
  replayRecentReadings(nowMs);
}

/** Readings after each track's last step (at most REPLAY_MS back) go through the engine again. */
function replayRecentReadings(nowMs: number): void {
  const s = state();
  if (s.rules.length === 0) return;
  const fromMs = nowMs - REPLAY_MS;
  const stmt = getSqlite().prepare<
    [string, number],
    { ts: number; temp_c: number; rh_pct: number | null }
  >("select ts, temp_c, rh_pct from readings where sensor_id = ? and ts >= ? order by ts");
  for (const sensorId of s.sensors.keys()) {
    const rules = rulesFor(sensorId).filter((r) => r.kind !== "silent" && r.kind !== "battery_low");
    if (rules.length === 0) continue;
    const rows = stmt.all(sensorId, fromMs);
    if (rows.length === 0) continue;
    const events: ReadingEvent[] = rows.map((r) => ({
      sensorId,
      tsMs: r.ts,
      tempC: r.temp_c,
      rhPct: r.rh_pct,
      latest: false,
      committedAtMs: nowMs,
    }));
    onReadings(events, nowMs);
  }
}

const onBusReadings = (events: ReadingEvent[]) => {
  try {
    onReadings(events);
  } catch (err) {
    log.error("alert engine: a batch failed; reloading its state", { err });
    resumeFromDatabase();
  }
};
const onConfig = () => {
  try {
    reloadConfig();
  } catch (err) {
    log.error("alert engine: reloading rules failed", { err });
  }
};
const onSensorChange = () => {
  const s = state();
  s.sensors = loadSensors();
  s.pourSensors = loadPourSensors(s.rules);
  s.applicable.clear();
  s.readingRules.clear();
};

/**
 * Starts the engine: a new plant gets the default rules, state resumes from the
 * database, and the bus and the timer feed it. Replies to texts acknowledge through it.
 */
export function startAlertEngine(): void {
  const s = state();
  if (s.started) return;
  // A new plant starts with the defaults; one whose rules were all removed on purpose
  // (the audit log shows rules were made before) is left as it is.
  const ruledBefore = getDb()
    .select({ id: auditLog.id })
    .from(auditLog)
    .where(eq(auditLog.action, "alert_rule.create"))
    .limit(1)
    .get();
  const added = ruledBefore ? 0 : seedDefaultRules(null);
  if (added > 0) log.info("alert rules: the plant's defaults were added", { rules: added });
  s.started = true;
  resumeFromDatabase();
  bus().on("readings", onBusReadings);
  bus().on("alertConfig", onConfig);
  bus().on("sensor", onSensorChange);
  setReplyHandler(onReply);
  const everyMs = Math.round(env().ALERT_TICK_SECONDS * 1000);
  s.timer = setInterval(() => tick(), everyMs);
  s.timer.unref();
  setImmediate(() => tick());
}

export function stopAlertEngine(): void {
  const s = state();
  if (!s.started) return;
  s.started = false;
  if (s.timer) clearInterval(s.timer);
  s.timer = null;
  bus().off("readings", onBusReadings);
  bus().off("alertConfig", onConfig);
  bus().off("sensor", onSensorChange);
  setReplyHandler(null);
}
