import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  coverageGaps,
  daySegments,
  dayInMask,
  escalationTarget,
  formatClockTime,
  localClock,
  maskToWeekdays,
  nextChange,
  onCallAt,
  parseClockTime,
  shiftCovers,
  weekdaysToMask,
  type ShiftWindow,
} from "./oncall";

const CHICAGO = "America/Chicago";
const SUN = 0;
const MON = 1;
const FRI = 5;
const SAT = 6;
const at = (iso: string) => Date.parse(iso);
const hm = (h: number, m = 0) => h * 60 + m;

let nextId = 1;
function shift(p: Partial<ShiftWindow> & Pick<ShiftWindow, "startMinute" | "endMinute">) {
  return { id: nextId++, userId: 1, weekdays: 127, escalationOrder: 0, ...p } as ShiftWindow;
}
const users = (list: readonly ShiftWindow[]) => list.map((s) => s.userId);

describe("the plant's wall clock", () => {
  // IANA tz database (rule US, 2007 on): in 2026 daylight saving starts Sunday 8 March at
  // 02:00 CST (08:00 UTC) and ends Sunday 1 November at 02:00 CDT (07:00 UTC).
  it.each([
    ["2026-03-08T07:59:00Z", SUN, hm(1, 59)], // last minute of CST
    ["2026-03-08T08:00:00Z", SUN, hm(3, 0)], // clocks jump to 03:00 CDT
    ["2026-11-01T06:59:00Z", SUN, hm(1, 59)], // last minute of CDT
    ["2026-11-01T07:00:00Z", SUN, hm(1, 0)], // clocks fall back to 01:00 CST
    ["2026-03-07T04:00:00Z", FRI, hm(22, 0)], // Friday 22:00 CST, Saturday in UTC
  ])("reads %s as weekday %i minute %i in Chicago", (iso, weekday, minute) => {
    expect(localClock(at(iso), CHICAGO)).toEqual({ weekday, minute });
  });

  it("refuses a time zone it does not know", () => {
    expect(() => localClock(0, "Mars/Olympus_Mons")).toThrow(RangeError);
  });

  it("turns days into a mask and back, Sunday as bit 0", () => {
    expect(weekdaysToMask([0, 1, 2, 3, 4, 5, 6])).toBe(127);
    expect(weekdaysToMask([SAT, SUN])).toBe(65);
    expect(maskToWeekdays(65)).toEqual([SUN, SAT]);
    expect(parseClockTime("22:00")).toBe(1320);
    expect(parseClockTime("24:00")).toBeNull();
    expect(parseClockTime("6:00")).toBeNull();
    expect(formatClockTime(1320)).toBe("22:00");
    expect(formatClockTime(0)).toBe("00:00");
  });
});

describe("a shift's window", () => {
  const nightsEveryDay = shift({ startMinute: hm(22), endMinute: hm(6) });
  const fridayNight = shift({
    weekdays: weekdaysToMask([FRI]),
    startMinute: hm(22),
    endMinute: hm(6),
  });
  const weekendDays = shift({
    weekdays: weekdaysToMask([SAT, SUN]),
    startMinute: hm(6),
    endMinute: hm(18),
  });
  const weekendNights = shift({
    weekdays: weekdaysToMask([SAT, SUN]),
    startMinute: hm(22),
    endMinute: hm(6),
  });
  const sundayWhole = shift({ weekdays: weekdaysToMask([SUN]), startMinute: 0, endMinute: 0 });
  const sundayFrom6 = shift({
    weekdays: weekdaysToMask([SUN]),
    startMinute: hm(6),
    endMinute: hm(6),
  });

  it.each([
    ["night shift at 22:00", nightsEveryDay, MON, hm(22), true],
    ["night shift at 05:59 next morning", nightsEveryDay, MON, hm(5, 59), true],
    ["night shift at 06:00 (its end is not covered)", nightsEveryDay, MON, hm(6), false],
    ["night shift at 21:59", nightsEveryDay, MON, hm(21, 59), false],
    ["Friday night on Friday 22:00", fridayNight, FRI, hm(22), true],
    ["Friday night's tail on Saturday 03:00", fridayNight, SAT, hm(3), true],
    ["Friday night not on Saturday 22:00", fridayNight, SAT, hm(22), false],
    ["Friday night not on Friday 03:00 (Thursday's tail)", fridayNight, FRI, hm(3), false],
    ["weekend days on Saturday 10:00", weekendDays, SAT, hm(10), true],
    ["weekend days on Sunday 17:59", weekendDays, SUN, hm(17, 59), true],
    ["weekend days not on Monday 10:00", weekendDays, MON, hm(10), false],
    ["weekend days not on Friday 10:00", weekendDays, FRI, hm(10), false],
    ["weekend nights on Sunday 03:00 (Saturday's tail)", weekendNights, SUN, hm(3), true],
    ["weekend nights on Monday 03:00 (Sunday's tail)", weekendNights, MON, hm(3), true],
    [
      "weekend nights not on Saturday 03:00 (Friday is not masked)",
      weekendNights,
      SAT,
      hm(3),
      false,
    ],
    ["a whole Sunday at 00:00", sundayWhole, SUN, 0, true],
    ["a whole Sunday at 23:59", sundayWhole, SUN, hm(23, 59), true],
    ["a whole Sunday not on Monday 00:00", sundayWhole, MON, 0, false],
    [
      "start = end at 06:00 is still the whole Sunday, 05:00 included",
      sundayFrom6,
      SUN,
      hm(5),
      true,
    ],
    ["start = end at 06:00 does not spill into Monday", sundayFrom6, MON, hm(5), false],
  ])("%s", (_label, s, weekday, minute, covered) => {
    expect(shiftCovers(s, weekday, minute)).toBe(covered);
  });
});

describe("who is on call", () => {
  it("orders by escalation order then shift id, each person once", () => {
    const list = [
      shift({ id: 3, userId: 30, escalationOrder: 1, startMinute: 0, endMinute: 0 }),
      shift({ id: 1, userId: 10, escalationOrder: 0, startMinute: 0, endMinute: 0 }),
      shift({ id: 2, userId: 20, escalationOrder: 0, startMinute: 0, endMinute: 0 }),
      shift({ id: 4, userId: 10, escalationOrder: 2, startMinute: 0, endMinute: 0 }),
      // Not covering at noon: left out.
      shift({ id: 5, userId: 50, escalationOrder: 0, startMinute: hm(22), endMinute: hm(6) }),
    ];
    const now = onCallAt(list, at("2026-06-10T17:00:00Z"), CHICAGO); // Wednesday 12:00 CDT
    expect(users(now)).toEqual([10, 20, 30]);
    expect(now[0]!.id).toBe(1); // the shift that ranks the person highest
    expect(escalationTarget(now, 0)?.userId).toBe(10);
    expect(escalationTarget(now, 1)?.userId).toBe(20);
    expect(escalationTarget(now, 2)?.userId).toBe(30);
    // Past the list: the engine tells everyone on call and the managers.
    expect(escalationTarget(now, 3)).toBeNull();
    expect(escalationTarget([], 0)).toBeNull();
    expect(() => escalationTarget(now, -1)).toThrow(RangeError);
  });

  // IANA tz database: 2026-03-08 02:00 CST -> 03:00 CDT (08:00 UTC) in America/Chicago.
  it("keeps a Saturday night shift to the wall clock across spring-forward: 7 real hours", () => {
    const night = [
      shift({ userId: 7, weekdays: weekdaysToMask([SAT]), startMinute: hm(22), endMinute: hm(6) }),
    ];
    const on = (iso: string) => users(onCallAt(night, at(iso), CHICAGO));
    expect(on("2026-03-08T03:59:00Z")).toEqual([]); // Sat 21:59 CST
    expect(on("2026-03-08T04:00:00Z")).toEqual([7]); // Sat 22:00 CST
    expect(on("2026-03-08T07:59:00Z")).toEqual([7]); // Sun 01:59 CST
    expect(on("2026-03-08T08:00:00Z")).toEqual([7]); // Sun 03:00 CDT
    expect(on("2026-03-08T10:59:00Z")).toEqual([7]); // Sun 05:59 CDT
    expect(on("2026-03-08T11:00:00Z")).toEqual([]); // Sun 06:00 CDT
    const change = nextChange(night, at("2026-03-08T05:00:00Z"), CHICAGO);
    expect(change).toEqual({ atMs: at("2026-03-08T11:00:00Z"), onCall: [] });
    expect(change!.atMs - at("2026-03-08T04:00:00Z")).toBe(7 * 3_600_000);
  });

  // IANA tz database: 2026-11-01 02:00 CDT -> 01:00 CST (07:00 UTC) in America/Chicago.
  it("keeps a Saturday night shift to the wall clock across fall-back: 9 real hours", () => {
    const night = [
      shift({ userId: 7, weekdays: weekdaysToMask([SAT]), startMinute: hm(22), endMinute: hm(6) }),
    ];
    const on = (iso: string) => users(onCallAt(night, at(iso), CHICAGO));
    expect(on("2026-11-01T03:00:00Z")).toEqual([7]); // Sat 22:00 CDT
    expect(on("2026-11-01T06:30:00Z")).toEqual([7]); // Sun 01:30 CDT
    expect(on("2026-11-01T07:30:00Z")).toEqual([7]); // Sun 01:30 CST, the second time
    expect(on("2026-11-01T11:59:00Z")).toEqual([7]); // Sun 05:59 CST
    expect(on("2026-11-01T12:00:00Z")).toEqual([]); // Sun 06:00 CST
    expect(nextChange(night, at("2026-11-01T03:00:00Z"), CHICAGO)?.atMs).toBe(
      at("2026-11-01T12:00:00Z"),
    );
  });

  it("covers a window inside the repeated fall-back hour twice", () => {
    // Sunday 01:30-01:45 happens at 06:30Z (CDT) and again at 07:30Z (CST): IANA tz database.
    const s = [
      shift({
        userId: 9,
        weekdays: weekdaysToMask([SUN]),
        startMinute: hm(1, 30),
        endMinute: hm(1, 45),
      }),
    ];
    expect(nextChange(s, at("2026-11-01T06:35:00Z"), CHICAGO)?.atMs).toBe(
      at("2026-11-01T06:45:00Z"),
    );
    expect(nextChange(s, at("2026-11-01T06:50:00Z"), CHICAGO)).toEqual({
      atMs: at("2026-11-01T07:30:00Z"),
      onCall: s,
    });
  });

  it("starts a window whose start the spring-forward jump skips at the jump", () => {
    // Sunday 02:30 never happens on 2026-03-08 in Chicago (IANA tz database): 03:00 CDT follows 01:59 CST.
    const s = [
      shift({
        userId: 9,
        weekdays: weekdaysToMask([SUN]),
        startMinute: hm(2, 30),
        endMinute: hm(4),
      }),
    ];
    expect(users(onCallAt(s, at("2026-03-08T07:59:00Z"), CHICAGO))).toEqual([]);
    expect(users(onCallAt(s, at("2026-03-08T08:00:00Z"), CHICAGO))).toEqual([9]);
    expect(nextChange(s, at("2026-03-08T07:00:00Z"), CHICAGO)?.atMs).toBe(
      at("2026-03-08T08:00:00Z"),
    );
  });

  it("names the next handover and who takes over", () => {
    const days = shift({ userId: 1, startMinute: hm(6), endMinute: hm(18) });
    const nights = shift({ userId: 2, startMinute: hm(18), endMinute: hm(6) });
    // Wednesday 2026-06-10 12:00 CDT (UTC-5): the day shift hands over at 18:00 CDT = 23:00Z.
    const change = nextChange([days, nights], at("2026-06-10T17:00:00Z"), CHICAGO);
    expect(change?.atMs).toBe(at("2026-06-10T23:00:00Z"));
    expect(users(change!.onCall)).toEqual([2]);
  });

  it("can watch only who is told first", () => {
    const allWeek = shift({ userId: 1, startMinute: 0, endMinute: 0 });
    const nights = shift({ userId: 2, escalationOrder: 1, startMinute: hm(18), endMinute: hm(6) });
    const noon = at("2026-06-10T17:00:00Z"); // Wednesday 12:00 CDT
    // The escalation list changes at 18:00 CDT (23:00Z); the person told first never does.
    expect(nextChange([allWeek, nights], noon, CHICAGO)?.atMs).toBe(at("2026-06-10T23:00:00Z"));
    expect(nextChange([allWeek, nights], noon, CHICAGO, { firstOnly: true })).toBeNull();
  });

  it("has no next change for a rota that is the same all week, or an empty one", () => {
    const allWeek = [shift({ userId: 1, startMinute: 0, endMinute: 0 })];
    expect(nextChange(allWeek, at("2026-06-10T17:00:00Z"), CHICAGO)).toBeNull();
    expect(nextChange([], at("2026-06-10T17:00:00Z"), CHICAGO)).toBeNull();
    // One person on two back-to-back shifts is one unbroken turn on call.
    const split = [
      shift({ userId: 1, startMinute: hm(6), endMinute: hm(18) }),
      shift({ userId: 1, startMinute: hm(18), endMinute: hm(6) }),
    ];
    expect(nextChange(split, at("2026-06-10T17:00:00Z"), CHICAGO)).toBeNull();
  });

  it("lays out a day's stretches and the week's gaps", () => {
    const weekdayDays = shift({
      userId: 1,
      weekdays: weekdaysToMask([1, 2, 3, 4, 5]),
      startMinute: hm(6),
      endMinute: hm(18),
    });
    const nights = shift({ userId: 2, startMinute: hm(18), endMinute: hm(6) });
    const monday = daySegments([weekdayDays, nights], MON);
    expect(monday.map((s) => [s.startMinute, s.endMinute, users(s.onCall)])).toEqual([
      [0, hm(6), [2]],
      [hm(6), hm(18), [1]],
      [hm(18), 1440, [2]],
    ]);
    expect(coverageGaps([weekdayDays, nights])).toEqual([
      { weekday: SUN, startMinute: hm(6), endMinute: hm(18) },
      { weekday: SAT, startMinute: hm(6), endMinute: hm(18) },
    ]);
  });
});

describe("properties", () => {
  const zones = [CHICAGO, "Europe/London", "Australia/Lord_Howe", "Asia/Kathmandu", "UTC"];
  // 2025-01-01 to 2028-01-01: several daylight-saving changes in each zone.
  const instant = fc.integer({ min: Date.UTC(2025, 0, 1), max: Date.UTC(2028, 0, 1) });
  const minute = fc.integer({ min: 0, max: 1439 });
  const weekday = fc.integer({ min: 0, max: 6 });
  const mask = fc.integer({ min: 0, max: 127 });

  // Two shifts that meet end to end cover the day whatever the split: day [a, b), night [b, a).
  const allWeekRota = fc
    .tuple(minute, minute)
    .filter(([a, b]) => a !== b)
    .map(([a, b]) => [
      shift({ userId: 1, startMinute: a, endMinute: b }),
      shift({ userId: 2, startMinute: b, endMinute: a }),
    ]);

  it("every minute of a week is covered by a 24/7 rota", () => {
    fc.assert(
      fc.property(allWeekRota, (rota) => {
        for (let d = 0; d < 7; d++)
          for (let m = 0; m < 1440; m++) if (!rota.some((s) => shiftCovers(s, d, m))) return false;
        return true;
      }),
      { numRuns: 60 },
    );
    fc.assert(
      fc.property(allWeekRota, instant, fc.constantFrom(...zones), (rota, ms, tz) => {
        expect(onCallAt(rota, ms, tz).length).toBeGreaterThan(0);
      }),
    );
  });

  it("a shift never covers a day outside its mask except the after-midnight tail", () => {
    fc.assert(
      fc.property(mask, minute, minute, weekday, minute, (m, start, end, d, at) => {
        if (!shiftCovers({ weekdays: m, startMinute: start, endMinute: end }, d, at)) return;
        const tail = start > end && at < end && dayInMask(m, (d + 6) % 7);
        expect(dayInMask(m, d) || tail).toBe(true);
      }),
      { numRuns: 2000 },
    );
  });

  it("the next change is the first minute at which who is on call differs", () => {
    const halfHour = fc.integer({ min: 0, max: 47 }).map((h) => h * 30);
    const rota = fc.array(
      fc.record({
        userId: fc.integer({ min: 1, max: 3 }),
        weekdays: mask,
        startMinute: halfHour,
        endMinute: halfHour,
        escalationOrder: fc.integer({ min: 0, max: 2 }),
      }),
      { minLength: 1, maxLength: 3 },
    );
    // Half of the runs start within a day of a daylight-saving change (IANA tz database).
    const near = fc.oneof(
      instant,
      fc.integer({ min: at("2026-03-07T06:00:00Z"), max: at("2026-03-08T12:00:00Z") }),
      fc.integer({ min: at("2026-10-31T06:00:00Z"), max: at("2026-11-01T12:00:00Z") }),
    );
    fc.assert(
      fc.property(rota, near, (specs, nowMs) => {
        const list = specs.map((s, i) => ({ ...s, id: i + 1 }));
        const sig = (ms: number) => users(onCallAt(list, ms, CHICAGO)).join(",");
        const got = nextChange(list, nowMs, CHICAGO);
        const before = sig(nowMs);
        const limitMs = nowMs + 2 * 86_400_000;
        let expected: number | null = null;
        for (let t = Math.floor(nowMs / 60_000) * 60_000 + 60_000; t <= limitMs; t += 60_000) {
          if (sig(t) !== before) {
            expected = t;
            break;
          }
        }
        if (expected === null) expect(got === null || got.atMs > limitMs).toBe(true);
        else expect(got?.atMs).toBe(expected);
      }),
      { numRuns: 30 },
    );
  });
});
