import { TZDate } from "@date-fns/tz";
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  canonicalTimeZone,
  detectTimeFormat,
  findHeaderRow,
  formatOffset,
  guessColumns,
  makeWallClock,
  mapLoggerRows,
  parseNumberText,
  parseTimeText,
  readLoggerTable,
  type LoggerFileRead,
} from "./loggerCsv";

const CHICAGO = "America/Chicago";
const now = Date.parse("2026-12-01T00:00:00Z");
const utc = (iso: string) => Date.parse(iso);
const wall = (text: string) => {
  const t = parseTimeText(text, "ymd");
  if (typeof t === "string" || t.kind !== "wall") throw new Error(`not a wall time: ${text}`);
  return t.wallMs;
};
const read = (
  table: string[][],
  req: Partial<Parameters<typeof readLoggerTable>[1]> = {},
): LoggerFileRead => {
  const r = readLoggerTable(table, {
    sensorId: "CB-07",
    timeZone: CHICAGO,
    tempUnit: "c",
    timeFormat: "auto",
    nowMs: now,
    ...req,
  });
  if (!r.ok) throw new Error(JSON.stringify(r.errors));
  return r.file;
};

// The daylight-saving dates below follow US law (15 U.S.C. §260a, as amended by the Energy
// Policy Act of 2005): clocks go forward at 02:00 on the second Sunday of March and back at
// 02:00 on the first Sunday of November. In 2026 those are March 8 and November 1; Central
// time is UTC−06:00 (CST) and UTC−05:00 (CDT).
describe("reading a time cell", () => {
  it.each([
    ["2026-03-02 04:10", "ymd", { kind: "wall", wallMs: utc("2026-03-02T04:10:00Z") }],
    ["2026-03-02 04:10:30", "ymd", { kind: "wall", wallMs: utc("2026-03-02T04:10:30Z") }],
    ["2026-03-02T04:10:30.25", "ymd", { kind: "wall", wallMs: utc("2026-03-02T04:10:30.250Z") }],
    ["2026/03/02 4:10 PM", "ymd", { kind: "wall", wallMs: utc("2026-03-02T16:10:00Z") }],
    // ISO 8601 with an offset is an instant, whatever the chosen zone.
    ["2026-03-02T04:10:00Z", "ymd", { kind: "instant", ms: utc("2026-03-02T04:10:00Z") }],
    ["2026-03-01T22:10:00-06:00", "ymd", { kind: "instant", ms: utc("2026-03-02T04:10:00Z") }],
    ["2026-03-02 04:10:00 +0100", "ymd", { kind: "instant", ms: utc("2026-03-02T03:10:00Z") }],
    ["03/02/2026 4:10:00 AM", "mdy", { kind: "wall", wallMs: utc("2026-03-02T04:10:00Z") }],
    ["3/2/26 12:05 AM", "mdy", { kind: "wall", wallMs: utc("2026-03-02T00:05:00Z") }],
    ["03/02/2026 12:05 p.m.", "mdy", { kind: "wall", wallMs: utc("2026-03-02T12:05:00Z") }],
    ["02.03.2026 04:10", "dmy", { kind: "wall", wallMs: utc("2026-03-02T04:10:00Z") }],
    ["1772424600000", "epoch_ms", { kind: "instant", ms: 1772424600000 }],
    ["1772424600", "epoch_s", { kind: "instant", ms: 1772424600000 }],
  ] as const)("%s (%s)", (text, format, expected) => {
    expect(parseTimeText(text, format)).toEqual(expected);
  });

  it.each([
    ["", "ymd", /empty/],
    ["2026-02-30 04:10", "ymd", /day that does not exist/],
    ["2026-03-02 25:10", "ymd", /time of day that does not exist/],
    ["2026-03-02", "ymd", /no time of day/],
    ["13/30/2026 04:10", "mdy", /month/],
    ["13:10 PM 03/02/2026", "mdy", /not a date and time/],
    ["yesterday", "ymd", /not a date and time/],
    ["17724246000x", "epoch_ms", /not epoch milliseconds/],
  ] as const)("%j in %s is refused", (text, format, pattern) => {
    const r = parseTimeText(text, format);
    expect(typeof r).toBe("string");
    expect(r).toMatch(pattern);
  });
});

describe("detecting how a time column is written", () => {
  it.each([
    [["2026-03-02 04:10", "2026-03-02 04:20"], "ymd", false],
    [["03/02/2026 4:10 AM", "03/14/2026 4:20 AM"], "mdy", false],
    [["14/03/2026 04:10", "02/03/2026 04:20"], "dmy", false],
    [["03/02/2026 04:10", "03/03/2026 04:20"], "mdy", true],
    [["02.03.2026 04:10", "03.03.2026 04:20"], "dmy", true],
    [["1772424600000", "1772425200000"], "epoch_ms", false],
    [["1772424600", "1772425200"], "epoch_s", false],
  ] as const)("%j -> %s", (values, format, ambiguous) => {
    expect(detectTimeFormat(values)).toEqual({ format, ambiguous });
  });
});

describe("local wall time in America/Chicago", () => {
  const clock = makeWallClock(CHICAGO);

  it.each([
    // CST is UTC−06:00; CDT is UTC−05:00 (15 U.S.C. §260a and §263).
    ["2026-03-02 04:10", null, "2026-03-02T10:10:00Z", null],
    ["2026-07-01 12:00", null, "2026-07-01T17:00:00Z", null],
    ["2026-03-08 01:59", null, "2026-03-08T07:59:00Z", null],
    ["2026-03-08 03:00", null, "2026-03-08T08:00:00Z", null],
    // 02:30 on 2026-03-08 does not exist: read with the offset before the change (CST).
    ["2026-03-08 02:30", null, "2026-03-08T08:30:00Z", "gap"],
    // 01:30 on 2026-11-01 happens twice: the first pass (CDT) unless the reading before it
    // already lies in the repeated hour at or after that instant.
    ["2026-11-01 01:30", null, "2026-11-01T06:30:00Z", "first"],
    ["2026-11-01 01:30", "2026-11-01T06:10:00Z", "2026-11-01T06:30:00Z", "first"],
    ["2026-11-01 01:30", "2026-11-01T06:30:00Z", "2026-11-01T07:30:00Z", "second"],
    ["2026-11-01 01:30", "2026-11-01T06:50:00Z", "2026-11-01T07:30:00Z", "second"],
    ["2026-11-01 01:30", "2026-11-01T07:20:00Z", "2026-11-01T07:30:00Z", "second"],
    ["2026-11-01 02:00", "2026-11-01T07:50:00Z", "2026-11-01T08:00:00Z", null],
  ] as const)("%s after %s is %s (%s)", (local, prev, expected, dst) => {
    const placed = clock(wall(local), prev === null ? null : utc(prev));
    expect(new Date(placed.ms).toISOString()).toBe(new Date(utc(expected)).toISOString());
    expect(placed.dst).toBe(dst);
  });

  it("agrees with TZDate wherever a wall time happens exactly once", () => {
    for (const local of [
      "2026-01-15 08:00",
      "2026-03-08 01:59",
      "2026-03-08 03:00",
      "2026-06-30 23:45",
      "2026-11-01 00:59",
      "2026-11-01 02:00",
    ]) {
      const [d, t] = local.split(" ") as [string, string];
      const [y, mo, day] = d.split("-").map(Number) as [number, number, number];
      const [h, mi] = t.split(":").map(Number) as [number, number];
      expect(clock(wall(local), null).ms).toBe(
        new TZDate(y, mo - 1, day, h, mi, CHICAGO).getTime(),
      );
    }
  });

  it("reads a fixed-offset zone without any daylight-saving change", () => {
    // Etc/GMT+6 is UTC−06:00 all year (IANA tz database, file "etcetera": the sign is inverted).
    const fixed = makeWallClock("Etc/GMT+6");
    expect(fixed(wall("2026-03-08 02:30"), null)).toEqual({
      ms: utc("2026-03-08T08:30:00Z"),
      offsetMin: -360,
      dst: null,
    });
    expect(fixed(wall("2026-07-01 12:00"), null).ms).toBe(utc("2026-07-01T18:00:00Z"));
  });

  it("gives back every instant of 2026 for a logger reading once a minute", () => {
    // Property: a wall time written by a logger in Chicago, read after the minute before it,
    // is the instant it was written, in both passes of the repeated hour.
    const parts = new Intl.DateTimeFormat("en-US", {
      timeZone: CHICAGO,
      hourCycle: "h23",
      year: "numeric",
      month: "2-digit",
      day: "2-digit",
      hour: "2-digit",
      minute: "2-digit",
    });
    const wallOf = (ms: number) => {
      const p = Object.fromEntries(parts.formatToParts(new Date(ms)).map((x) => [x.type, x.value]));
      return Date.UTC(
        Number(p.year),
        Number(p.month) - 1,
        Number(p.day),
        Number(p.hour),
        Number(p.minute),
      );
    };
    const start = utc("2026-01-01T00:00:00Z") / 60_000;
    const end = utc("2026-12-31T00:00:00Z") / 60_000;
    const edges = [
      utc("2026-11-01T06:00:00Z"),
      utc("2026-11-01T07:00:00Z"),
      utc("2026-11-01T07:59:00Z"),
      utc("2026-03-08T08:00:00Z"),
    ];
    for (const t of edges) expect(clock(wallOf(t), t - 60_000).ms).toBe(t);
    fc.assert(
      fc.property(fc.integer({ min: start, max: end }), (minute) => {
        const t = minute * 60_000;
        return clock(wallOf(t), t - 60_000).ms === t;
      }),
      { numRuns: 2_000 },
    );
  });
});

describe("a whole file across the daylight-saving changes", () => {
  const rowsOf = (times: string[]) => [
    ["Date/Time", "Temp (°C)"],
    ...times.map((t) => [t, "21.0"]),
  ];
  const fallBack = [
    "2026-11-01 00:40",
    "2026-11-01 01:00",
    "2026-11-01 01:20",
    "2026-11-01 01:40",
    "2026-11-01 01:00",
    "2026-11-01 01:20",
    "2026-11-01 01:40",
    "2026-11-01 02:00",
  ];
  const expected = ["05:40", "06:00", "06:20", "06:40", "07:00", "07:20", "07:40", "08:00"].map(
    (hm) => utc(`2026-11-01T${hm}:00Z`),
  );

  it("keeps both passes of the repeated hour, 20 minutes apart", () => {
    const file = read(rowsOf(fallBack));
    expect(file.readings.map((r) => r.tsMs)).toEqual(expected);
    expect(file.rows[4]!.note).toMatch(/happens twice .* second pass, UTC−06:00/);
    expect(file.rows[1]!.note).toMatch(/first pass, UTC−05:00/);
  });

  it("reads a newest-first file the same way", () => {
    const file = read(rowsOf([...fallBack].reverse()));
    expect(file.readings.map((r) => r.tsMs)).toEqual([...expected].reverse());
  });

  it("notes a time in the spring gap and reads it as standard time", () => {
    const file = read(rowsOf(["2026-03-08 01:30", "2026-03-08 02:30", "2026-03-08 03:30"]));
    expect(file.readings.map((r) => r.tsMs)).toEqual([
      utc("2026-03-08T07:30:00Z"),
      utc("2026-03-08T08:30:00Z"),
      utc("2026-03-08T08:30:00Z"),
    ]);
    expect(file.rows[1]!.note).toMatch(
      /does not exist \(clocks go forward\); read with the offset before the change, UTC−06:00/,
    );
    expect(file.rows[0]!.note).toBeNull();
  });
});

describe("temperatures", () => {
  // domain.md §8.3: °F = 1.8·°C + 32; check pairs 20 °C = 68 °F, −10 °C = 14 °F, 88 °C = 190.4 °F.
  it.each([
    ["68", 20],
    ["68.0 °F", 20],
    ["14", -10],
    ["190.4", 88],
  ])("%s °F is %d °C (domain.md §8.3)", (text, c) => {
    const file = read(
      [
        ["Time", "Temp °F"],
        ["2026-03-02 04:10", text],
      ],
      { tempUnit: "f" },
    );
    expect(file.rows[0]!.error).toBeNull();
    expect(file.readings[0]!.tempC).toBeCloseTo(c, 9);
  });

  it.each([
    ["21,5", { value: 21.5, unit: null }],
    ["-3", { value: -3, unit: null }],
    ["20.1C", { value: 20.1, unit: "c" }],
    ["55 %", { value: 55, unit: "%" }],
    ["n/a", null],
    ["", null],
    ["1.2.3", null],
  ] as const)("%j reads as %j", (text, expected) => {
    expect(parseNumberText(text)).toEqual(expected);
  });

  it("refuses a value whose written unit differs from the chosen one", () => {
    const file = read(
      [
        ["Time", "Temp"],
        ["2026-03-02 04:10", "20 °C"],
      ],
      { tempUnit: "f" },
    );
    expect(file.rows[0]!.error).toMatch(/in °C, but the file is read in °F/);
  });
});

describe("proposing a column mapping from the header", () => {
  it.each([
    [["Date/Time", "Temp (°F)", "RH %"], { time: 0, date: null, temp: 1, rh: 2, tempUnit: "f" }],
    [
      ["#", "Date Time, GMT-05:00", "Temp, °C", "RH, %"],
      { time: 1, date: null, temp: 2, rh: 3, tempUnit: "c" },
    ],
    [
      ["Date", "Time", "Temperature", "Humidity"],
      { time: 1, date: 0, temp: 2, rh: 3, tempUnit: null },
    ],
    [
      ["Timestamp", "Dew point (°F)", "Temperature (°F)"],
      { time: 0, date: null, temp: 2, rh: null, tempUnit: "f" },
    ],
    [["time", "deg C"], { time: 0, date: null, temp: 1, rh: null, tempUnit: "c" }],
    [["Reading", "Value"], { time: null, date: null, temp: null, rh: null, tempUnit: null }],
  ] as const)("%j", (headers, expected) => {
    expect(guessColumns(headers)).toEqual(expected);
  });

  it("finds the header below a logger's title lines", () => {
    const table = [
      ["Logger export"],
      ["Serial", "20512345"],
      [""],
      ["Date/Time", "Temp (°F)"],
      ["2026-03-02 04:10", "68.1"],
    ];
    expect(findHeaderRow(table)).toEqual({ headerIndex: 3, firstDataIndex: 4 });
    const file = read(table, { tempUnit: null });
    expect(file.rowsAboveHeader).toBe(2);
    expect(file.tempUnit).toBe("f");
    expect(file.rows[0]!.row).toBe(5);
  });

  it("proposes time and temperature from the first row when the file has no header", () => {
    const file = read([
      ["2026-03-02 04:10", "20.5", "80"],
      ["2026-03-02 04:20", "20.7", "81"],
    ]);
    expect(file.headerIndex).toBeNull();
    expect(file.headers).toEqual(["Column 1", "Column 2", "Column 3"]);
    expect(file.columns).toEqual({ time: 0, date: null, temp: 1, rh: null });
    expect(file.readings).toHaveLength(2);
  });

  it("refuses a mapping that names a column the file lacks", () => {
    const r = readLoggerTable(
      [
        ["Time", "Temp"],
        ["2026-03-02 04:10", "20"],
      ],
      {
        sensorId: "CB-07",
        timeZone: CHICAGO,
        tempUnit: "c",
        timeFormat: "auto",
        columns: { time: "Time", temp: "Temperature" },
        nowMs: now,
      },
    );
    expect(r).toEqual({
      ok: false,
      errors: [
        { field: "columns.temp", error: expect.stringMatching(/no column is named "Temperature"/) },
      ],
    });
  });
});

describe("rows", () => {
  it("a bad row keeps the others, and each error names its spreadsheet row", () => {
    const table = [
      ["Date/Time", "Temp (°C)", "RH %"],
      ["2026-03-02 04:10", "21.0", "95"],
      ["2026-03-02 04:20", "n/a", "95"],
      ["", ""],
      ["2026-03-02 04:30", "21.4", "120"],
      ["2027-01-01 00:00", "21.5", "95"],
      ["2026-02-30 04:50", "", ""],
      ["2026-03-02 05:00", "21.9", ""],
    ];
    const file = read(table);
    expect(file.blankRows).toBe(1);
    expect(file.rows.map((r) => [r.row, r.error])).toEqual([
      [2, null],
      [3, 'temperature "n/a" is not a number'],
      [5, "humidity is outside 0 to 100 %"],
      [6, "time is more than 10 minutes in the future (check the time zone)"],
      [
        7,
        'time "2026-02-30 04:50" has a day that does not exist in that month; temperature is empty',
      ],
      [8, null],
    ]);
    expect(file.readings).toEqual([
      {
        sensorId: "CB-07",
        tsMs: utc("2026-03-02T10:10:00Z"),
        tempC: 21,
        rhPct: 95,
        batteryPct: null,
      },
      {
        sensorId: "CB-07",
        tsMs: utc("2026-03-02T11:00:00Z"),
        tempC: 21.9,
        rhPct: null,
        batteryPct: null,
      },
    ]);
  });

  it("joins a separate date column to the time column", () => {
    const { rows, readings } = mapLoggerRows([["02/03/2026", "4:10 AM", "20"]], 0, {
      sensorId: "CB-07",
      timeZone: CHICAGO,
      tempUnit: "c",
      timeFormat: "mdy",
      columns: { time: 1, date: 0, temp: 2, rh: null },
      nowMs: now,
    });
    expect(rows[0]!.timeText).toBe("02/03/2026 4:10 AM");
    expect(readings[0]!.tsMs).toBe(utc("2026-02-03T10:10:00Z"));
  });
});

describe("time zone names", () => {
  it.each([
    ["America/Chicago", "America/Chicago"],
    ["america/chicago", "America/Chicago"],
    ["UTC", "UTC"],
    ["Etc/GMT+6", "Etc/GMT+6"],
    ["+01:00", null],
    ["Mars/Olympus_Mons", null],
    ["", null],
  ])("%j -> %j", (name, expected) => {
    expect(canonicalTimeZone(name)).toBe(expected);
  });

  it("writes offsets with a true minus sign", () => {
    expect(formatOffset(-360)).toBe("UTC−06:00");
    expect(formatOffset(330)).toBe("UTC+05:30");
  });
});
