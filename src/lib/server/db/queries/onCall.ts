/**
 * The on-call rota: its shifts with the people on them, who is on call now (the pure rules in
 * src/domain/alerts/oncall.ts on the plant's time zone), the warnings a manager should see,
 * and the rota's writes, each audited and announced on the bus so the alert engine reloads.
 *
 * Rows here carry the person's full phone number for the alert engine; what goes on the wire
 * (`presentShift`, `presentOnCall`) shows only whether one is set and its last digits.
 */
import { asc, eq } from "drizzle-orm";
import type { Role } from "@/lib/access";
import {
  coverageGaps,
  crossesMidnight,
  formatClockTime,
  isKnownTimeZone,
  MINUTES_PER_DAY,
  maskToWeekdays,
  nextChange,
  onCallAt,
  parseClockTime,
  weekdaysToMask,
  type RotaChange,
  type ShiftWindow,
} from "@/domain/alerts/oncall";
import { readNotifyChoices, type NotifyChoices } from "@/lib/notifyChoices";
import type { OnCallCreate, OnCallPatch } from "@/lib/schemas/onCall";
import { bus } from "../../live/bus";
import { getDb, getSqlite } from "../client";
import { onCallShifts, users } from "../schema";
import { writeAudit, type AuditActor } from "./audit";
import { getSetting } from "./settings";

export interface RotaPerson {
  id: number;
  name: string;
  email: string;
  role: Role;
  active: boolean;
  /** The full number, for the alert engine only; never sent to a browser from here. */
  phone: string | null;
  notify: NotifyChoices;
}

/** A shift of the rota with its person. */
export interface RotaShift extends ShiftWindow {
  name: string;
  createdAt: number;
  user: RotaPerson;
}

const WEEKDAY_NAMES = [
  "Sunday",
  "Monday",
  "Tuesday",
  "Wednesday",
  "Thursday",
  "Friday",
  "Saturday",
] as const;

function rowToShift(
  s: typeof onCallShifts.$inferSelect,
  u: Pick<
    typeof users.$inferSelect,
    "id" | "name" | "email" | "role" | "active" | "phone" | "notifyJson"
  >,
): RotaShift {
  return {
    id: s.id,
    userId: s.userId,
    name: s.name,
    weekdays: s.weekdays,
    startMinute: s.startMinute,
    endMinute: s.endMinute,
    escalationOrder: s.escalationOrder,
    createdAt: s.createdAt,
    user: {
      id: u.id,
      name: u.name,
      email: u.email,
      role: u.role,
      active: u.active,
      phone: u.phone,
      notify: readNotifyChoices(u.notifyJson, u.role),
    },
  };
}

const personColumns = {
  id: users.id,
  name: users.name,
  email: users.email,
  role: users.role,
  active: users.active,
  phone: users.phone,
  notifyJson: users.notifyJson,
};

/** Every shift, in telling order (escalation order, then start time, then id). */
export function listRota(): RotaShift[] {
  return getDb()
    .select({ shift: onCallShifts, user: personColumns })
    .from(onCallShifts)
    .innerJoin(users, eq(users.id, onCallShifts.userId))
    .orderBy(asc(onCallShifts.escalationOrder), asc(onCallShifts.startMinute), asc(onCallShifts.id))
    .all()
    .map((r) => rowToShift(r.shift, r.user));
}

export function getRotaShift(id: number): RotaShift | undefined {
  const r = getDb()
    .select({ shift: onCallShifts, user: personColumns })
    .from(onCallShifts)
    .innerJoin(users, eq(users.id, onCallShifts.userId))
    .where(eq(onCallShifts.id, id))
    .get();
  return r ? rowToShift(r.shift, r.user) : undefined;
}

/** The plant's time zone for the rota; an unknown setting falls back to UTC, with a warning. */
export function rotaTimeZone(): { timeZone: string; warning: string | null } {
  const setting = getSetting("time_zone");
  if (isKnownTimeZone(setting)) return { timeZone: setting, warning: null };
  return {
    timeZone: "UTC",
    warning: `The plant's time zone "${setting}" is not one Plinth knows: the rota is read in UTC until a manager corrects it.`,
  };
}

export interface OnCallNow {
  timeZone: string;
  atMs: number;
  /** Told first, then one person a level on each escalation (see escalationTarget). */
  onCall: RotaShift[];
  /** When who is on call next changes, and who is then; null: not in the coming week. */
  until: RotaChange<RotaShift> | null;
}

/**
 * Who is on call at `nowMs` on the plant's clocks, in telling order. Deactivated people are
 * left out: they can no longer be told.
 */
export function onCallNow(nowMs: number = Date.now(), shifts: RotaShift[] = listRota()): OnCallNow {
  const { timeZone } = rotaTimeZone();
  const live = shifts.filter((s) => s.user.active);
  return {
    timeZone,
    atMs: nowMs,
    onCall: onCallAt(live, nowMs, timeZone),
    until: nextChange(live, nowMs, timeZone),
  };
}

/** What stops alerts from reaching this person the way the rota expects, in words. */
export function personWarnings(p: RotaPerson): string[] {
  if (!p.active) return [`${p.name} is deactivated: their shifts tell nobody.`];
  const { sms, email } = p.notify;
  if (!sms && !email)
    return [`${p.name} has turned off both texts and e-mails: alerts will not reach them.`];
  if (!sms) return [`${p.name} has texts turned off: alerts will go by e-mail only.`];
  if (!p.phone && !email)
    return [`${p.name} has no phone number and e-mails turned off: alerts will not reach them.`];
  if (!p.phone) return [`${p.name} has no phone number: texts will go by e-mail.`];
  return [];
}

const clock = (minute: number) =>
  minute >= MINUTES_PER_DAY ? "midnight" : formatClockTime(minute);

/** The stretches nobody covers, in words; a gap over midnight is told as one. */
function gapWarnings(shifts: readonly RotaShift[]): string[] {
  const live = shifts.filter((s) => s.user.active);
  if (live.length === 0)
    return ["Nobody is on call at any time: add a shift so alerts reach someone."];
  const gaps = coverageGaps(live);
  if (gaps.length === 0) return [];
  // Join a gap that runs to midnight with one that starts the next day at midnight.
  const joined: { fromDay: number; from: number; toDay: number; to: number }[] = [];
  for (const g of gaps) {
    const last = joined[joined.length - 1];
    if (
      last &&
      last.to === MINUTES_PER_DAY &&
      last.toDay === (g.weekday + 6) % 7 &&
      g.startMinute === 0
    ) {
      last.toDay = g.weekday;
      last.to = g.endMinute;
    } else
      joined.push({ fromDay: g.weekday, from: g.startMinute, toDay: g.weekday, to: g.endMinute });
  }
  // Saturday night running into Sunday morning: the week wraps.
  const first = joined[0]!;
  const lastGap = joined[joined.length - 1]!;
  if (
    joined.length > 1 &&
    lastGap.toDay === 6 &&
    lastGap.to === MINUTES_PER_DAY &&
    first.fromDay === 0 &&
    first.from === 0
  ) {
    first.fromDay = lastGap.fromDay;
    first.from = lastGap.from;
    joined.pop();
  }
  // Told in the order of the working week, Monday first.
  const weekOrder = (g: { fromDay: number; from: number }) =>
    ((g.fromDay + 6) % 7) * MINUTES_PER_DAY + g.from;
  joined.sort((a, b) => weekOrder(a) - weekOrder(b));
  return joined.map((g) => {
    if (g.fromDay === g.toDay && g.from === 0 && g.to === MINUTES_PER_DAY)
      return `Nobody is on call all ${WEEKDAY_NAMES[g.fromDay]}.`;
    if (g.fromDay === g.toDay)
      return `Nobody is on call ${WEEKDAY_NAMES[g.fromDay]} from ${clock(g.from)} to ${clock(g.to)}.`;
    return `Nobody is on call from ${WEEKDAY_NAMES[g.fromDay]} ${clock(g.from)} to ${WEEKDAY_NAMES[g.toDay]} ${clock(g.to)}.`;
  });
}

/** Everything a manager should fix in the rota: people who cannot be reached, gaps, the zone. */
export function rotaWarnings(shifts: readonly RotaShift[] = listRota()): string[] {
  const out: string[] = [];
  const tz = rotaTimeZone();
  if (tz.warning) out.push(tz.warning);
  const seen = new Set<number>();
  for (const s of shifts) {
    if (seen.has(s.userId)) continue;
    seen.add(s.userId);
    out.push(...personWarnings(s.user));
  }
  out.push(...gapWarnings(shifts));
  return out;
}

/** "•••• 0142": enough to tell numbers apart, never the number. */
export function maskPhone(phone: string | null): string | null {
  if (!phone) return null;
  const digits = phone.replace(/[^0-9]/g, "");
  return `•••• ${digits.slice(-4)}`;
}

/** A shift as the API and the page show it: no phone number, only whether one is set. */
export function presentShift(s: RotaShift) {
  return {
    id: s.id,
    name: s.name,
    user_id: s.userId,
    user_name: s.user.name,
    role: s.user.role,
    active: s.user.active,
    has_phone: s.user.phone !== null && s.user.phone !== "",
    phone_masked: maskPhone(s.user.phone),
    sms: s.user.notify.sms,
    email: s.user.notify.email,
    weekdays: maskToWeekdays(s.weekdays),
    start: formatClockTime(s.startMinute),
    end: formatClockTime(s.endMinute),
    crosses_midnight: crossesMidnight(s),
    escalation_order: s.escalationOrder,
  };
}
export type ShiftJson = ReturnType<typeof presentShift>;

/** One person on call as the API and the page show them. */
export function presentOnCall(s: RotaShift) {
  return {
    user_id: s.userId,
    name: s.user.name,
    role: s.user.role,
    escalation_order: s.escalationOrder,
    shift_id: s.id,
    shift_name: s.name,
    has_phone: s.user.phone !== null && s.user.phone !== "",
    sms: s.user.notify.sms,
    email: s.user.notify.email,
  };
}
export type OnCallPersonJson = ReturnType<typeof presentOnCall>;

/** The whole rota as GET /api/v1/on-call answers it. */
export function presentRota(nowMs: number = Date.now()) {
  const shifts = listRota();
  const now = onCallNow(nowMs, shifts);
  return {
    time_zone: now.timeZone,
    now: {
      at: new Date(now.atMs).toISOString(),
      on_call: now.onCall.map(presentOnCall),
      until: now.until ? new Date(now.until.atMs).toISOString() : null,
      next: now.until ? now.until.onCall.map(presentOnCall) : null,
    },
    shifts: shifts.map(presentShift),
    warnings: rotaWarnings(shifts),
  };
}
export type RotaJson = ReturnType<typeof presentRota>;

/** People a manager may put on the rota: active, and allowed to acknowledge alerts. */
export function rotaCandidates() {
  return getDb()
    .select(personColumns)
    .from(users)
    .where(eq(users.active, true))
    .orderBy(asc(users.name))
    .all()
    .filter((u) => u.role !== "viewer")
    .map((u) => {
      const notify = readNotifyChoices(u.notifyJson, u.role);
      return {
        id: u.id,
        name: u.name,
        role: u.role,
        has_phone: u.phone !== null && u.phone !== "",
        sms: notify.sms,
        email: notify.email,
      };
    });
}
export type RotaCandidate = ReturnType<typeof rotaCandidates>[number];

/**
 * Why this person cannot go on the rota, or null when they can: they must exist, be active,
 * and be allowed to acknowledge alerts (viewers only read).
 */
export function rotaPersonProblem(userId: number): string | null {
  const u = getDb().select(personColumns).from(users).where(eq(users.id, userId)).get();
  if (!u) return "No such person.";
  if (!u.active) return `${u.name} is deactivated: reactivate them on the Team page first.`;
  if (u.role === "viewer")
    return `${u.name} is a viewer and cannot acknowledge alerts: choose an operator, QC or a manager.`;
  return null;
}

/** What the audit log keeps of a shift. */
function auditShape(s: RotaShift) {
  return {
    name: s.name,
    user_id: s.userId,
    user_name: s.user.name,
    weekdays: maskToWeekdays(s.weekdays),
    start: formatClockTime(s.startMinute),
    end: formatClockTime(s.endMinute),
    escalation_order: s.escalationOrder,
  };
}

const minuteOf = (hhmm: string) => {
  const m = parseClockTime(hhmm);
  if (m === null) throw new RangeError(`Not a clock time: ${hhmm}`);
  return m;
};

/** Adds a shift (the person checked first with rotaPersonProblem). */
export function createShift(input: OnCallCreate, actor: AuditActor): RotaShift {
  const id = getSqlite().transaction(() => {
    const row = getDb()
      .insert(onCallShifts)
      .values({
        name: input.name,
        userId: input.user_id,
        weekdays: weekdaysToMask(input.weekdays),
        startMinute: minuteOf(input.start),
        endMinute: minuteOf(input.end),
        escalationOrder: input.escalation_order,
      })
      .returning({ id: onCallShifts.id })
      .get();
    const made = getRotaShift(row.id)!;
    writeAudit(actor, {
      action: "on_call.create",
      entityType: "on_call_shift",
      entityId: row.id,
      detail: auditShape(made),
    });
    return row.id;
  })();
  bus().emit("alertConfig", { what: "on_call" });
  return getRotaShift(id)!;
}

/** Changes a shift; the audit keeps what it was and what it became. */
export function updateShift(before: RotaShift, patch: OnCallPatch, actor: AuditActor): RotaShift {
  getSqlite().transaction(() => {
    getDb()
      .update(onCallShifts)
      .set({
        ...(patch.name !== undefined && { name: patch.name }),
        ...(patch.user_id !== undefined && { userId: patch.user_id }),
        ...(patch.weekdays !== undefined && { weekdays: weekdaysToMask(patch.weekdays) }),
        ...(patch.start !== undefined && { startMinute: minuteOf(patch.start) }),
        ...(patch.end !== undefined && { endMinute: minuteOf(patch.end) }),
        ...(patch.escalation_order !== undefined && { escalationOrder: patch.escalation_order }),
      })
      .where(eq(onCallShifts.id, before.id))
      .run();
    const after = getRotaShift(before.id)!;
    writeAudit(actor, {
      action: "on_call.update",
      entityType: "on_call_shift",
      entityId: before.id,
      detail: { before: auditShape(before), after: auditShape(after) },
    });
  })();
  bus().emit("alertConfig", { what: "on_call" });
  return getRotaShift(before.id)!;
}

/** Removes a shift; the audit keeps what it was. */
export function deleteShift(shift: RotaShift, actor: AuditActor): void {
  getSqlite().transaction(() => {
    getDb().delete(onCallShifts).where(eq(onCallShifts.id, shift.id)).run();
    writeAudit(actor, {
      action: "on_call.delete",
      entityType: "on_call_shift",
      entityId: shift.id,
      detail: auditShape(shift),
    });
  })();
  bus().emit("alertConfig", { what: "on_call" });
}
