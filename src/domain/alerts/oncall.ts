/**
 * The on-call rota as pure functions: which weekly windows cover a moment in the plant's own
 * time zone, who is told first and who on each escalation, and when that next changes.
 *
 * A shift is a weekly window on the plant's wall clock: a bit mask of the days it starts on
 * (Sunday = bit 0, 127 = every day) and a start and end minute from local midnight (0-1439).
 * - start < end: [start, end) on each masked day;
 * - start > end: crosses midnight: [start, 1440) on a masked day and [0, end) on the next day
 *   (the mask names the day the shift starts, so Friday's night shift runs into Saturday);
 * - start = end: the whole of each masked day.
 *
 * Time is always passed in (epoch ms); the wall clock comes from the IANA tz database through
 * @date-fns/tz, so a night that springs forward is an hour shorter and one that falls back an
 * hour longer, while "22:00 to 06:00" keeps meaning what the plant's clocks say.
 */
import { TZDate, tzOffset } from "@date-fns/tz";

export const MINUTES_PER_DAY = 1440;
/** The weekday mask with every day set. */
export const EVERY_DAY_MASK = 127;

const MINUTE_MS = 60_000;
const DAY_MS = 86_400_000;

/** A weekly on-call window as stored in `on_call_shifts`. */
export interface ShiftWindow {
  id: number;
  userId: number;
  /** Days the window starts on, Sunday = bit 0. */
  weekdays: number;
  /** Minutes from local midnight, 0-1439. */
  startMinute: number;
  /** Minutes from local midnight, 0-1439; below the start the window crosses midnight. */
  endMinute: number;
  /** 0 is told first, 1 on the first escalation, and so on. */
  escalationOrder: number;
}

/** The plant's wall clock at one moment: weekday (0 = Sunday) and minute of the day. */
export interface LocalClock {
  weekday: number;
  minute: number;
}

/**
 * The weekday (0 = Sunday) and minute of the day (0-1439) at `nowMs` on the wall clocks of
 * `timeZone` (an IANA name such as "America/Chicago"), daylight saving included.
 * Throws a RangeError for a time zone the runtime does not know.
 */
export function localClock(nowMs: number, timeZone: string): LocalClock {
  const d = new TZDate(nowMs, timeZone);
  const weekday = d.getDay();
  const minute = d.getHours() * 60 + d.getMinutes();
  if (!Number.isInteger(weekday) || !Number.isInteger(minute)) {
    throw new RangeError(`Unknown time zone or time: ${timeZone} at ${nowMs}`);
  }
  return { weekday, minute };
}

/** True when the runtime knows this IANA time zone. */
export function isKnownTimeZone(timeZone: string): boolean {
  try {
    new Intl.DateTimeFormat("en-US", { timeZone });
    return timeZone.length > 0;
  } catch {
    return false;
  }
}

/** True when `weekday` (0 = Sunday) is set in the mask. */
export function dayInMask(mask: number, weekday: number): boolean {
  return ((mask >> weekday) & 1) === 1;
}

/** The mask of a list of weekdays (0 = Sunday ... 6 = Saturday). */
export function weekdaysToMask(days: readonly number[]): number {
  let mask = 0;
  for (const d of days) mask |= 1 << d;
  return mask & EVERY_DAY_MASK;
}

/** The weekdays set in a mask, Sunday first. */
export function maskToWeekdays(mask: number): number[] {
  const out: number[] = [];
  for (let d = 0; d < 7; d++) if (dayInMask(mask, d)) out.push(d);
  return out;
}

/** "22:00" -> 1320; null when not a 24-hour clock time. */
export function parseClockTime(text: string): number | null {
  const m = /^([01][0-9]|2[0-3]):([0-5][0-9])$/.exec(text);
  return m ? Number(m[1]) * 60 + Number(m[2]) : null;
}

/** 1320 -> "22:00" (minutes past 1439 wrap into the next day). */
export function formatClockTime(minute: number): string {
  const m = ((minute % MINUTES_PER_DAY) + MINUTES_PER_DAY) % MINUTES_PER_DAY;
  return `${String(Math.floor(m / 60)).padStart(2, "0")}:${String(m % 60).padStart(2, "0")}`;
}

/** True when a window runs past midnight into the next day. */
export function crossesMidnight(shift: Pick<ShiftWindow, "startMinute" | "endMinute">): boolean {
  return shift.startMinute > shift.endMinute;
}

/**
 * True when the window covers this wall-clock moment (see the module comment for the three
 * shapes of window). Only the after-midnight tail of a crossing window lies on a day outside
 * its mask.
 */
export function shiftCovers(
  shift: Pick<ShiftWindow, "weekdays" | "startMinute" | "endMinute">,
  weekday: number,
  minute: number,
): boolean {
  const { weekdays: mask, startMinute: start, endMinute: end } = shift;
  if (start === end) return dayInMask(mask, weekday);
  if (start < end) return dayInMask(mask, weekday) && minute >= start && minute < end;
  return (
    (dayInMask(mask, weekday) && minute >= start) ||
    (dayInMask(mask, (weekday + 6) % 7) && minute < end)
  );
}

/** The covering shifts in telling order (escalation order, then shift id), each person once. */
function ranked<T extends ShiftWindow>(shifts: readonly T[], clock: LocalClock): T[] {
  const covering = shifts
    .filter((s) => shiftCovers(s, clock.weekday, clock.minute))
    .sort((a, b) => a.escalationOrder - b.escalationOrder || a.id - b.id);
  const seen = new Set<number>();
  return covering.filter((s) => (seen.has(s.userId) ? false : (seen.add(s.userId), true)));
}

/**
 * Who is on call at `nowMs`: one entry per person, the shift that puts them highest in the
 * telling order, ordered by escalation order then shift id (ties between two people at the
 * same order go to the older shift). Empty when nobody is on call.
 */
export function onCallAt<T extends ShiftWindow>(
  shifts: readonly T[],
  nowMs: number,
  timeZone: string,
): T[] {
  return ranked(shifts, localClock(nowMs, timeZone));
}

/**
 * Who is told at escalation level `level` of an unacknowledged alert: level 0 is the first
 * person told, level 1 the first escalation, and so on down the list `onCallAt` gave, one
 * person a level. Past the end of the list it is null: the rota has nobody further. What
 * then is the alert engine's choice: it tells the plant's managers, so that by then everyone
 * on call and the managers have heard.
 */
export function escalationTarget<T>(onCall: readonly T[], level: number): T | null {
  if (!Number.isInteger(level) || level < 0) {
    throw new RangeError(`An escalation level is a whole number from 0: ${level}`);
  }
  return onCall[level] ?? null;
}

/** The next change of who is on call: when, and who is on call from then. */
export interface RotaChange<T> {
  atMs: number;
  onCall: T[];
}

/** The offset (minutes east of UTC) of the zone at each moment, found cheaply over a span. */
function offsetFinder(timeZone: string): (ms: number) => number {
  const cache = new Map<number, number>();
  return (ms) => {
    let v = cache.get(ms);
    if (v === undefined) {
      v = tzOffset(timeZone, new Date(ms));
      if (!Number.isFinite(v)) throw new RangeError(`Unknown time zone: ${timeZone}`);
      cache.set(ms, v);
    }
    return v;
  };
}

/** The wall clock from an epoch ms and the zone's offset at it (1970-01-01 was a Thursday). */
function clockFromOffset(ms: number, offsetMin: number): LocalClock {
  const local = ms + Math.round(offsetMin * MINUTE_MS);
  const days = Math.floor(local / DAY_MS);
  return {
    weekday: (((days + 4) % 7) + 7) % 7,
    minute: Math.floor((local - days * DAY_MS) / MINUTE_MS),
  };
}

const signature = (list: readonly ShiftWindow[]) => list.map((s) => s.userId).join(",");
const firstSignature = (list: readonly ShiftWindow[]) => String(list[0]?.userId ?? "");

export interface NextChangeOptions {
  /** How far ahead to look; a week and a day by default (a rota holding that long holds every week). */
  horizonMs?: number;
  /** Watch only who is told first, not the whole escalation list. */
  firstOnly?: boolean;
}

/**
 * When who is on call (the people and their order, or with `firstOnly` the person told
 * first) next changes after `nowMs`, and who is on call from then; null when it does not
 * change within the horizon. Changes fall on whole minutes. A window's edge that a
 * spring-forward jump skips takes effect at the jump.
 */
export function nextChange<T extends ShiftWindow>(
  shifts: readonly T[],
  nowMs: number,
  timeZone: string,
  { horizonMs = 8 * DAY_MS, firstOnly = false }: NextChangeOptions = {},
): RotaChange<T> | null {
  const sign = firstOnly ? firstSignature : signature;
  const current = sign(onCallAt(shifts, nowMs, timeZone));
  if (shifts.length === 0) return null;
  const edges = new Set<number>([0]);
  for (const s of shifts) {
    edges.add(s.startMinute);
    edges.add(s.endMinute);
  }
  const offsetAt = offsetFinder(timeZone);
  // Offsets change rarely: look them up a quarter-hour apart (every modern transition falls
  // on a quarter-hour of UTC) and minute by minute only inside a quarter that holds one.
  const QUARTER_MS = 15 * MINUTE_MS;
  const first = Math.floor(nowMs / MINUTE_MS) * MINUTE_MS + MINUTE_MS;
  const last = nowMs + horizonMs;
  let prev = clockFromOffset(first - MINUTE_MS, offsetAt(first - MINUTE_MS));
  for (let q = Math.floor(first / QUARTER_MS) * QUARTER_MS; q <= last; q += QUARTER_MS) {
    const a = offsetAt(q);
    const b = offsetAt(q + QUARTER_MS);
    for (let t = Math.max(q, first); t < q + QUARTER_MS && t <= last; t += MINUTE_MS) {
      const clock = clockFromOffset(t, a === b ? a : offsetAt(t));
      const stepped =
        clock.weekday === prev.weekday
          ? clock.minute === prev.minute + 1
          : clock.minute === 0 && prev.minute === MINUTES_PER_DAY - 1;
      if (!stepped || edges.has(clock.minute)) {
        const now = ranked(shifts, clock);
        if (sign(now) !== current) return { atMs: t, onCall: now };
      }
      prev = clock;
    }
  }
  return null;
}

/** A stretch of one weekday with the same people on call, in telling order. */
export interface DaySegment<T> {
  startMinute: number;
  /** Exclusive; 1440 is the day's end. */
  endMinute: number;
  onCall: T[];
}

/**
 * One weekday on the wall clock, cut into stretches with the same people on call (an empty
 * list is a gap nobody covers). For the rota's week view; a day whose clocks jump keeps its
 * nominal 24 hours here.
 */
export function daySegments<T extends ShiftWindow>(
  shifts: readonly T[],
  weekday: number,
): DaySegment<T>[] {
  const edges = new Set<number>([0]);
  for (const s of shifts) {
    edges.add(s.startMinute);
    edges.add(s.endMinute);
  }
  const cuts = [...edges].sort((a, b) => a - b);
  const out: DaySegment<T>[] = [];
  cuts.forEach((start, i) => {
    const end = cuts[i + 1] ?? MINUTES_PER_DAY;
    const onCall = ranked(shifts, { weekday, minute: start });
    const before = out[out.length - 1];
    if (before && signature(before.onCall) === signature(onCall)) before.endMinute = end;
    else out.push({ startMinute: start, endMinute: end, onCall });
  });
  return out;
}

/** The stretches of the week nobody covers, by weekday, on the wall clock. */
export function coverageGaps(
  shifts: readonly ShiftWindow[],
): { weekday: number; startMinute: number; endMinute: number }[] {
  const gaps: { weekday: number; startMinute: number; endMinute: number }[] = [];
  for (let d = 0; d < 7; d++) {
    for (const seg of daySegments(shifts, d)) {
      if (seg.onCall.length === 0)
        gaps.push({ weekday: d, startMinute: seg.startMinute, endMinute: seg.endMinute });
    }
  }
  return gaps;
}
