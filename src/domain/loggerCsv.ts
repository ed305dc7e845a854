/**
 * Logger files: a table of cells (already split into rows and cells at the edge) turned into
 * readings. Finds the header row, proposes a column mapping from the header names, reads
 * local wall times in a chosen IANA time zone, converts °F, and checks every row with the
 * readings contract's own rules (`checkReading`), so one bad row never sinks the others.
 *
 * Times. A value with an offset ("2026-03-02T04:10:00Z", "…-06:00") or in epoch
 * milliseconds or seconds is an instant and is taken as it is. Any other value is a local
 * wall time in the chosen zone, read as follows (see `makeWallClock`):
 * - a wall time that does not exist (clocks go forward: 02:30 on 2026-03-08 in
 *   America/Chicago) is read with the offset in force before the change, UTC−06:00, so it is
 *   08:30Z (03:30 CDT): what a logger whose clock had not yet changed meant;
 * - a wall time that happens twice (clocks go back: 01:30 on 2026-11-01 in America/Chicago)
 *   is the first pass, in daylight time (06:30Z), unless the reading before it, in the
 *   file's own time order, already lies in the repeated hour at or after that instant; then
 *   it is the second pass, in standard time (07:30Z). A logger that kept writing through the
 *   repeated hour keeps both hours, and none of its readings is taken for a duplicate.
 * A logger that keeps standard time all year is read with a fixed-offset zone instead
 * (Etc/GMT+6 is UTC−06:00 all year).
 *
 * Pure: no I/O; "now" is passed in. Row numbers are 1-based as a spreadsheet shows them,
 * counting the header and any lines above it.
 */
import { tzOffset } from "@date-fns/tz";
import { checkReading, type CleanReading } from "./readings";

export type TempUnit = "c" | "f";
export const tempUnits = ["c", "f"] as const;

export const timeFormats = ["auto", "ymd", "mdy", "dmy", "epoch_ms", "epoch_s"] as const;
/** How the time column is written; "auto" detects it from the column's values. */
export type TimeFormat = (typeof timeFormats)[number];
export type ResolvedTimeFormat = Exclude<TimeFormat, "auto">;

export const timeFormatLabels: Record<TimeFormat, string> = {
  auto: "Detect from the file",
  ymd: "Year-month-day (2026-03-02 04:10)",
  mdy: "Month/day/year (03/02/2026 4:10 AM)",
  dmy: "Day/month/year (02/03/2026 04:10)",
  epoch_ms: "Epoch milliseconds",
  epoch_s: "Epoch seconds",
};

/** Rows a preview shows in full. */
export const PREVIEW_ROWS = 50;
/** Per-row errors kept with an upload's record (the counts are always complete). */
export const MAX_KEPT_ERRORS = 200;

const MIN_MS = 60_000;
const HOUR_MS = 3_600_000;

// ---------------------------------------------------------------------------------------
// Time zones and times

/**
 * The canonical IANA name of a time zone ("america/chicago" -> "America/Chicago"), or null
 * when the runtime does not know it. Offsets such as "+01:00" are refused: a zone name is
 * needed so that daylight saving is followed.
 */
export function canonicalTimeZone(name: string): string | null {
  if (!/^[A-Za-z][A-Za-z0-9_+\-/]{0,63}$/.test(name)) return null;
  try {
    const zone = new Intl.DateTimeFormat("en-US", { timeZone: name }).resolvedOptions().timeZone;
    return Number.isFinite(tzOffset(zone, new Date(0))) ? zone : null;
  } catch {
    return null;
  }
}

/** "UTC−06:00" for an offset of −360 minutes (east of Greenwich is positive). */
export function formatOffset(offsetMin: number): string {
  const sign = offsetMin < 0 ? "−" : "+";
  const abs = Math.abs(offsetMin);
  const hh = String(Math.floor(abs / 60)).padStart(2, "0");
  const mm = String(abs % 60).padStart(2, "0");
  return `UTC${sign}${hh}:${mm}`;
}

/** A time value read from a cell: a local wall time (as if it were UTC) or an instant. */
export type ParsedTime = { kind: "wall"; wallMs: number } | { kind: "instant"; ms: number };

const CLOCK = String.raw`(\d{1,2}):(\d{2})(?::(\d{2})(?:[.,](\d{1,9}))?)?(?:\s*([AaPp])\.?\s*[Mm]\.?)?`;
const OFFSET = String.raw`(?:\s*(Z|z|[+-]\d{2}(?::?\d{2})?|(?:UTC|GMT)(?:[+-]\d{1,2}(?::?\d{2})?)?))?`;
const YMD = new RegExp(
  String.raw`^(\d{4})([-/.])(\d{1,2})\2(\d{1,2})(?:(?:[Tt]|\s*,?\s+)${CLOCK})?${OFFSET}$`,
);
const DMY_OR_MDY = new RegExp(
  String.raw`^(\d{1,2})([-/.])(\d{1,2})\2(\d{4}|\d{2})(?:(?:[Tt]|\s*,?\s+)${CLOCK})?${OFFSET}$`,
);
const EPOCH_MS = /^\d{11,13}$/;
const EPOCH_S = /^\d{9,10}$/;

function offsetMinutes(text: string): number {
  const t = text.toUpperCase();
  if (t === "Z" || t === "UTC" || t === "GMT") return 0;
  const m = /^(?:UTC|GMT)?([+-])(\d{1,2})(?::?(\d{2}))?$/.exec(t);
  if (!m) return Number.NaN;
  const minutes = Number(m[2]) * 60 + Number(m[3] ?? 0);
  return m[1] === "-" ? -minutes : minutes;
}

function buildTime(
  y: number,
  mo: number,
  d: number,
  clock: (string | undefined)[],
  offset: string | undefined,
): ParsedTime | string {
  const [hText, miText, sText, fracText, meridiem] = clock;
  if (hText === undefined) return "has a date but no time of day";
  let h = Number(hText);
  const mi = Number(miText);
  const s = Number(sText ?? 0);
  const ms = fracText ? Number(fracText.slice(0, 3).padEnd(3, "0")) : 0;
  if (meridiem) {
    if (h < 1 || h > 12) return "has an hour outside 1 to 12 with AM/PM";
    const pm = meridiem.toLowerCase() === "p";
    h = (h % 12) + (pm ? 12 : 0);
  }
  if (h > 23 || mi > 59 || s > 59) return "has a time of day that does not exist";
  if (mo < 1 || mo > 12) return "has a month outside 1 to 12";
  const wallMs = Date.UTC(y, mo - 1, d, h, mi, s, ms);
  const check = new Date(wallMs);
  if (check.getUTCFullYear() !== y || check.getUTCMonth() !== mo - 1 || check.getUTCDate() !== d) {
    return "has a day that does not exist in that month";
  }
  if (offset !== undefined) {
    const off = offsetMinutes(offset);
    if (!Number.isFinite(off) || Math.abs(off) > 18 * 60) return "has an offset that is not valid";
    return { kind: "instant", ms: wallMs - off * MIN_MS };
  }
  return { kind: "wall", wallMs };
}

/**
 * Reads one time cell in the given format. Values with an offset are instants; epoch
 * values are instants; everything else is a wall time. Returns an error phrase when the
 * value cannot be read ("is empty", "is not a date and time in the chosen format", …).
 */
export function parseTimeText(raw: string, format: ResolvedTimeFormat): ParsedTime | string {
  const text = raw.trim();
  if (text === "") return "is empty";
  if (format === "epoch_ms" || format === "epoch_s") {
    if (!/^\d{1,16}$/.test(text))
      return `is not ${format === "epoch_ms" ? "epoch milliseconds" : "epoch seconds"}`;
    const ms = Number(text) * (format === "epoch_s" ? 1000 : 1);
    return Number.isSafeInteger(ms) ? { kind: "instant", ms } : "is out of range";
  }
  if (format === "ymd") {
    const m = YMD.exec(text);
    if (!m) return "is not a date and time written year-month-day";
    return buildTime(Number(m[1]), Number(m[3]), Number(m[4]), m.slice(5, 10), m[10]);
  }
  const m = DMY_OR_MDY.exec(text);
  if (!m)
    return `is not a date and time written ${format === "mdy" ? "month/day/year" : "day/month/year"}`;
  const a = Number(m[1]);
  const b = Number(m[3]);
  const year = m[4]!.length === 2 ? 2000 + Number(m[4]) : Number(m[4]);
  const [mo, d] = format === "mdy" ? [a, b] : [b, a];
  return buildTime(year, mo, d, m.slice(5, 10), m[10]);
}

/**
 * The format of a time column, from up to 500 of its values: epoch milliseconds or
 * seconds, year-month-day, or for dates like 03/02/2026 month/day/year unless some first
 * part is over 12 (then day/month/year). When every date reads both ways, dates written
 * with dots are taken as day.month.year and others as month/day/year, and `ambiguous` says so.
 */
export function detectTimeFormat(values: readonly string[]): {
  format: ResolvedTimeFormat;
  ambiguous: boolean;
} {
  const sample = values
    .map((v) => v.trim())
    .filter((v) => v !== "")
    .slice(0, 500);
  let ms = 0;
  let s = 0;
  let ymd = 0;
  let dm = 0;
  let firstOver12 = false;
  let secondOver12 = false;
  let dots = 0;
  for (const v of sample) {
    if (EPOCH_MS.test(v)) ms++;
    else if (EPOCH_S.test(v)) s++;
    else if (YMD.test(v)) ymd++;
    else {
      const m = DMY_OR_MDY.exec(v);
      if (!m) continue;
      dm++;
      if (Number(m[1]) > 12) firstOver12 = true;
      if (Number(m[3]) > 12) secondOver12 = true;
      if (m[2] === ".") dots++;
    }
  }
  const best = Math.max(ms, s, ymd, dm);
  if (best === 0 || best === ymd) return { format: "ymd", ambiguous: false };
  if (best === ms) return { format: "epoch_ms", ambiguous: false };
  if (best === s) return { format: "epoch_s", ambiguous: false };
  if (firstOver12 && !secondOver12) return { format: "dmy", ambiguous: false };
  if (secondOver12 && !firstOver12) return { format: "mdy", ambiguous: false };
  return { format: dots > dm / 2 ? "dmy" : "mdy", ambiguous: !(firstOver12 && secondOver12) };
}

/** How a wall time was placed on the time line. */
export interface PlacedTime {
  ms: number;
  offsetMin: number;
  /** "gap": the wall time does not exist; "first"/"second": it happens twice and this is that pass. */
  dst: "gap" | "first" | "second" | null;
}

/**
 * A reader of wall times in one IANA zone, following the daylight-saving rule in this
 * module's heading. `prevMs` is the instant of the reading before this one in the file's
 * time order (null for the first). Offsets are looked up with @date-fns/tz and cached per
 * hour, so a file of many thousand rows costs a few lookups per hour it covers.
 */
export function makeWallClock(
  timeZone: string,
): (wallMs: number, prevMs: number | null) => PlacedTime {
  const probes = new Map<number, readonly [number, number]>();
  const offsetAt = (ms: number) => tzOffset(timeZone, new Date(ms));
  let lastHour = Number.NaN;
  let lastProbe: readonly [number, number] | undefined;
  return (wallMs, prevMs) => {
    const hour = Math.floor(wallMs / HOUR_MS);
    let probe = hour === lastHour ? lastProbe : probes.get(hour);
    if (!probe) {
      // Offsets well before and well after this hour: equal unless a change lies between.
      probe = [
        offsetAt(hour * HOUR_MS - 30 * HOUR_MS),
        offsetAt(hour * HOUR_MS + 30 * HOUR_MS),
      ] as const;
      probes.set(hour, probe);
    }
    [lastHour, lastProbe] = [hour, probe];
    const [before, after] = probe;
    if (before === after) return { ms: wallMs - before * MIN_MS, offsetMin: before, dst: null };
    const fits = [before, after].filter((o) => offsetAt(wallMs - o * MIN_MS) === o);
    if (fits.length === 0) return { ms: wallMs - before * MIN_MS, offsetMin: before, dst: "gap" };
    if (fits.length === 1)
      return { ms: wallMs - fits[0]! * MIN_MS, offsetMin: fits[0]!, dst: null };
    // Happens twice: the larger offset gives the earlier instant.
    const earlyOff = Math.max(before, after);
    const lateOff = Math.min(before, after);
    const early = wallMs - earlyOff * MIN_MS;
    const late = wallMs - lateOff * MIN_MS;
    if (prevMs !== null && prevMs >= early && prevMs < late)
      return { ms: late, offsetMin: lateOff, dst: "second" };
    return { ms: early, offsetMin: earlyOff, dst: "first" };
  };
}

// ---------------------------------------------------------------------------------------
// Numbers

/**
 * A number from a cell: "20.5", "-3", "+4.0", "21,5" (decimal comma), optionally followed by
 * a unit ("68 °F", "20.1C", "55 %"). Returns the value and the unit letter written, if any.
 */
export function parseNumberText(
  raw: string,
): { value: number; unit: "c" | "f" | "%" | null } | null {
  const m = /^([+-]?(?:\d+(?:[.,]\d+)?|[.,]\d+))\s*(°\s*[CcFf]|[CcFf]|%)?$/.exec(raw.trim());
  if (!m) return null;
  const value = Number(m[1]!.replace(",", "."));
  if (!Number.isFinite(value)) return null;
  const u = m[2]?.replace(/[°\s]/g, "").toLowerCase();
  return { value, unit: u === "c" || u === "f" || u === "%" ? u : null };
}

// ---------------------------------------------------------------------------------------
// Header and columns

/** Column indices (0-based) a file's values are read from. */
export interface LoggerColumns {
  time: number;
  /** A separate date column, when the file splits date and time of day. */
  date: number | null;
  temp: number;
  rh: number | null;
}

export interface GuessedColumns {
  time: number | null;
  date: number | null;
  temp: number | null;
  rh: number | null;
  /** The temperature unit the header names, if it names one. */
  tempUnit: TempUnit | null;
}

const norm = (h: string) => h.normalize("NFKC").toLowerCase().replace(/\s+/g, " ").trim();

/** The unit a temperature header names: "Temp (°F)" -> "f", "Temperature, °C" -> "c". */
export function unitFromHeader(header: string): TempUnit | null {
  const h = norm(header);
  if (/°\s*f|\bdeg(?:rees?)?\.?\s*f\b|fahrenheit|[([]\s*f\s*[)\]]|\bf$/.test(h)) return "f";
  if (/°\s*c|\bdeg(?:rees?)?\.?\s*c\b|celsius|centigrade|[([]\s*c\s*[)\]]|\bc$/.test(h)) return "c";
  return null;
}

/**
 * Proposes a mapping from header names: a date-and-time column ("Date/Time", "Timestamp"),
 * or a date column and a time column; a temperature column ("Temp (°F)", "Temperature °C"),
 * not a dew point or set point; a humidity column ("RH %", "Humidity"). Null where no header fits.
 */
export function guessColumns(headers: readonly string[]): GuessedColumns {
  const h = headers.map(norm);
  const find = (test: (s: string) => boolean, taken: (number | null)[] = []) => {
    const i = h.findIndex((s, idx) => !taken.includes(idx) && test(s));
    return i === -1 ? null : i;
  };
  const dateTime = find((s) => /date.*time|time.*date|timestamp|time stamp/.test(s));
  const timeOnly = find((s) => /\btime\b/.test(s) && !/\bdate\b/.test(s));
  const dateOnly = find((s) => /\bdate\b|\bday\b/.test(s) && !/\btime\b/.test(s));
  let time: number | null = null;
  let date: number | null = null;
  if (dateTime !== null) time = dateTime;
  else if (timeOnly !== null && dateOnly !== null) [time, date] = [timeOnly, dateOnly];
  else time = timeOnly ?? dateOnly;

  const notTemp = /dew|set ?point|heat index|wet bulb|battery|volt|min\b|max\b/;
  const temp =
    find((s) => /temp/.test(s) && !notTemp.test(s), [time, date]) ??
    find(
      (s) => /°\s*[cf]|\bdeg(?:rees?)?\.?\s*[cf]\b|celsius|fahrenheit/.test(s) && !notTemp.test(s),
      [time, date],
    );
  const rh = find(
    (s) => /\brh\b|humid|%\s*rh|\brh\s*%/.test(s) && !/temp|dew/.test(s),
    [time, date, temp],
  );
  return { time, date, temp, rh, tempUnit: temp === null ? null : unitFromHeader(headers[temp]!) };
}

/**
 * For a file without a header: the first cell of the first data row that reads as a date and
 * time, and the first number after it as the temperature.
 */
export function guessColumnsFromData(cells: readonly string[]): GuessedColumns {
  const time = cells.findIndex(looksLikeTime);
  const temp =
    time === -1 ? -1 : cells.findIndex((c, i) => i > time && parseNumberText(c) !== null);
  return {
    time: time === -1 ? null : time,
    date: null,
    temp: temp === -1 ? null : temp,
    rh: null,
    tempUnit: null,
  };
}

const isBlankRow = (cells: readonly string[]) => cells.every((c) => c.trim() === "");

function looksLikeTime(cell: string): boolean {
  const v = cell.trim();
  return EPOCH_MS.test(v) || YMD.test(v) || DMY_OR_MDY.test(v);
}

/** A row of data: one cell reads as a date and time and another as a number. */
function looksLikeData(cells: readonly string[]): boolean {
  const t = cells.findIndex(looksLikeTime);
  return t !== -1 && cells.some((c, i) => i !== t && parseNumberText(c) !== null);
}

/** A header candidate: two or more cells, none of them a number or a time. */
function looksLikeHeader(cells: readonly string[]): boolean {
  const filled = cells.filter((c) => c.trim() !== "");
  return (
    filled.length >= 2 && filled.every((c) => parseNumberText(c) === null && !looksLikeTime(c))
  );
}

/**
 * Where the header and the data start (0-based row indices). The first row that looks like
 * data is found; the header is the nearest row above it whose names fit a time or a
 * temperature column, else the nearest row of names. Lines above the header (a logger's
 * title, serial number…) are not data. Without a header, every non-blank row is data.
 */
export function findHeaderRow(table: readonly (readonly string[])[]): {
  headerIndex: number | null;
  firstDataIndex: number;
} {
  const limit = Math.min(table.length, 200);
  let firstData = -1;
  for (let i = 0; i < limit; i++) {
    if (looksLikeData(table[i]!)) {
      firstData = i;
      break;
    }
  }
  const top = firstData === -1 ? 0 : Math.max(0, firstData - 50);
  const bottom = firstData === -1 ? limit : firstData;
  const candidates: number[] = [];
  for (let i = bottom - 1; i >= top; i--) if (looksLikeHeader(table[i]!)) candidates.push(i);
  if (firstData === -1) {
    // Nothing reads as data: take the first row of names, if any.
    const first = candidates.at(-1);
    return first === undefined
      ? { headerIndex: null, firstDataIndex: 0 }
      : { headerIndex: first, firstDataIndex: first + 1 };
  }
  const named = candidates.find((i) => {
    const g = guessColumns(table[i]!);
    return g.time !== null || g.temp !== null;
  });
  const header = named ?? candidates[0];
  return header === undefined
    ? { headerIndex: null, firstDataIndex: 0 }
    : { headerIndex: header, firstDataIndex: header + 1 };
}

/** A column given by its header name (case and spacing aside) or its 0-based index. */
export type ColumnRef = string | number;

/** The index of a column, or an error phrase. */
export function resolveColumn(ref: ColumnRef, headers: readonly string[]): number | string {
  if (typeof ref === "number") {
    return Number.isInteger(ref) && ref >= 0 && ref < headers.length
      ? ref
      : `there is no column ${ref} (the file has ${headers.length}, counted from 0)`;
  }
  const exact = headers.indexOf(ref);
  if (exact !== -1) return exact;
  const loose = headers.map(norm).indexOf(norm(ref));
  if (loose !== -1) return loose;
  return `no column is named "${ref}" (the columns are: ${headers.join(", ")})`;
}

// ---------------------------------------------------------------------------------------
// Rows

/** One data row of the file, as read. */
export interface LoggerRow {
  /** 1-based, as a spreadsheet numbers the file's rows (the header counts). */
  row: number;
  timeText: string;
  tempText: string;
  rhText: string | null;
  /** The instant read, when the time could be read. */
  tsMs: number | null;
  /** The checked reading's values; null when the row was rejected. */
  tempC: number | null;
  rhPct: number | null;
  error: string | null;
  /** How a daylight-saving change was handled for this row, if one was. */
  note: string | null;
}

export interface MapOptions {
  sensorId: string;
  timeZone: string;
  tempUnit: TempUnit;
  timeFormat: ResolvedTimeFormat;
  columns: LoggerColumns;
  nowMs: number;
}

/** The readings contract's words turned into the file's: "ts" is the time, "rh" the humidity. */
function inFileWords(error: string): string {
  return error
    .replace(
      /^ts is more than 10 minutes in the future$/,
      "time is more than 10 minutes in the future (check the time zone)",
    )
    .replace(/^ts must be .*$/, "time is out of range (before 1970?)")
    .replace(/^ts\b/, "time")
    .replace(/^rh\b/, "humidity")
    .replace(/^temp_[cf]\b/, "temperature");
}

const wallLabel = (wallMs: number) => new Date(wallMs).toISOString().slice(0, 16).replace("T", " ");

/**
 * Reads the data rows (from `firstDataIndex`) with a resolved mapping. Entirely blank rows
 * are skipped silently; every other row is either a reading that passed `checkReading` or
 * carries an error saying why not. Readings come out in file order.
 */
export function mapLoggerRows(
  table: readonly (readonly string[])[],
  firstDataIndex: number,
  o: MapOptions,
): { rows: LoggerRow[]; readings: CleanReading[]; blankRows: number } {
  const cell = (cells: readonly string[], i: number | null) =>
    i === null ? null : (cells[i] ?? "").trim();
  const entries: { row: LoggerRow; time: ParsedTime | string }[] = [];
  let blankRows = 0;
  for (let i = firstDataIndex; i < table.length; i++) {
    const cells = table[i]!;
    if (isBlankRow(cells)) {
      blankRows++;
      continue;
    }
    const dateText = cell(cells, o.columns.date);
    const timeOfDay = cell(cells, o.columns.time) ?? "";
    const timeText = dateText === null ? timeOfDay : `${dateText} ${timeOfDay}`.trim();
    entries.push({
      row: {
        row: i + 1,
        timeText,
        tempText: cell(cells, o.columns.temp) ?? "",
        rhText: cell(cells, o.columns.rh),
        tsMs: null,
        tempC: null,
        rhPct: null,
        error: null,
        note: null,
      },
      time: parseTimeText(timeText, o.timeFormat),
    });
  }

  // Place wall times in the file's own time order (newest-first files are walked backwards).
  const timed = entries.filter((e) => typeof e.time !== "string");
  const key = (t: ParsedTime) => (t.kind === "wall" ? t.wallMs : t.ms);
  const descending =
    timed.length > 1 && key(timed.at(-1)!.time as ParsedTime) < key(timed[0]!.time as ParsedTime);
  const clock = makeWallClock(o.timeZone);
  let prevMs: number | null = null;
  for (const e of descending ? [...timed].reverse() : timed) {
    const t = e.time as ParsedTime;
    if (t.kind === "instant") {
      e.row.tsMs = t.ms;
    } else {
      const placed = clock(t.wallMs, prevMs);
      e.row.tsMs = placed.ms;
      const at = `${wallLabel(t.wallMs)} in ${o.timeZone}`;
      if (placed.dst === "gap") {
        e.row.note = `${at} does not exist (clocks go forward); read with the offset before the change, ${formatOffset(placed.offsetMin)}`;
      } else if (placed.dst) {
        e.row.note = `${at} happens twice (clocks go back); read as the ${placed.dst} pass, ${formatOffset(placed.offsetMin)}`;
      }
    }
    prevMs = e.row.tsMs;
  }

  const readings: CleanReading[] = [];
  for (const { row, time } of entries) {
    const problems: string[] = [];
    if (typeof time === "string")
      problems.push(row.timeText === "" ? "time is empty" : `time "${row.timeText}" ${time}`);
    const temp = parseNumberText(row.tempText);
    if (row.tempText === "") problems.push("temperature is empty");
    else if (!temp || temp.unit === "%")
      problems.push(`temperature "${row.tempText}" is not a number`);
    else if (temp.unit !== null && temp.unit !== o.tempUnit) {
      problems.push(
        `temperature "${row.tempText}" is in °${temp.unit.toUpperCase()}, but the file is read in °${o.tempUnit.toUpperCase()}`,
      );
    }
    let rh: number | null = null;
    if (row.rhText) {
      const parsed = parseNumberText(row.rhText);
      if (!parsed || (parsed.unit !== null && parsed.unit !== "%"))
        problems.push(`humidity "${row.rhText}" is not a number`);
      else rh = parsed.value;
    }
    if (problems.length > 0) {
      row.error = problems.join("; ");
      continue;
    }
    const check = checkReading(
      {
        sensor: o.sensorId,
        ts: row.tsMs,
        [o.tempUnit === "f" ? "temp_f" : "temp_c"]: temp!.value,
        rh,
      },
      o.nowMs,
    );
    if (!check.ok) {
      row.error = inFileWords(check.error);
      continue;
    }
    row.tempC = check.reading.tempC;
    row.rhPct = check.reading.rhPct;
    readings.push(check.reading);
  }
  return { rows: entries.map((e) => e.row), readings, blankRows };
}

// ---------------------------------------------------------------------------------------
// A whole file

export interface LoggerFileRequest {
  sensorId: string;
  timeZone: string;
  /** The unit the temperature column is in; null takes the header's unit, else °C. */
  tempUnit: TempUnit | null;
  timeFormat: TimeFormat;
  /** 1-based row of the header; 0 when the file has none; null or undefined to find it. */
  headerRow?: number | null;
  /** The mapping to use; null or undefined to use the proposed one. */
  columns?: {
    time: ColumnRef;
    date?: ColumnRef | null;
    temp: ColumnRef;
    rh?: ColumnRef | null;
  } | null;
  nowMs: number;
}

export interface LoggerFileRead {
  /** 0-based index of the header row, null when the file has none. */
  headerIndex: number | null;
  /** Column names (the header's, or "Column 1", "Column 2", … without one). */
  headers: string[];
  guessed: GuessedColumns;
  /** The mapping used; null when no time or temperature column could be proposed. */
  columns: LoggerColumns | null;
  tempUnit: TempUnit;
  timeFormat: ResolvedTimeFormat;
  /** True when every date read both as month/day and as day/month. */
  timeFormatAmbiguous: boolean;
  rows: LoggerRow[];
  readings: CleanReading[];
  blankRows: number;
  /** Non-blank lines above the header (a logger's title, serial number…), not read as data. */
  rowsAboveHeader: number;
}

export type LoggerFileResult =
  { ok: true; file: LoggerFileRead } | { ok: false; errors: { field: string; error: string }[] };

/**
 * Reads a logger file's table end to end: header, mapping (given or proposed), time format
 * (given or detected), then every row. A mapping that names a column the file lacks is an
 * error of the request, not of a row.
 */
export function readLoggerTable(
  table: readonly (readonly string[])[],
  req: LoggerFileRequest,
): LoggerFileResult {
  let headerIndex: number | null;
  let firstDataIndex: number;
  if (req.headerRow === null || req.headerRow === undefined) {
    ({ headerIndex, firstDataIndex } = findHeaderRow(table));
  } else if (req.headerRow === 0) {
    [headerIndex, firstDataIndex] = [null, 0];
  } else {
    if (req.headerRow > table.length) {
      return {
        ok: false,
        errors: [{ field: "header_row", error: `the file has only ${table.length} rows` }],
      };
    }
    [headerIndex, firstDataIndex] = [req.headerRow - 1, req.headerRow];
  }

  let width = headerIndex === null ? 0 : table[headerIndex]!.length;
  for (let i = firstDataIndex; i < Math.min(table.length, firstDataIndex + 500); i++)
    width = Math.max(width, table[i]!.length);
  const headers = Array.from({ length: width }, (_, i) => {
    const name = headerIndex === null ? "" : (table[headerIndex]![i] ?? "").trim();
    return name === "" ? `Column ${i + 1}` : name;
  });
  const firstRow = table.slice(firstDataIndex).find((r) => looksLikeData(r));
  const guessed =
    headerIndex !== null
      ? guessColumns(headers)
      : firstRow
        ? guessColumnsFromData(firstRow)
        : guessColumns([]);
  const rowsAboveHeader =
    headerIndex === null ? 0 : table.slice(0, headerIndex).filter((r) => !isBlankRow(r)).length;

  let columns: LoggerColumns | null = null;
  if (req.columns) {
    const errors: { field: string; error: string }[] = [];
    const pick = (field: string, ref: ColumnRef | null | undefined): number | null => {
      if (ref === null || ref === undefined) return null;
      const r = resolveColumn(ref, headers);
      if (typeof r === "string") {
        errors.push({ field: `columns.${field}`, error: r });
        return null;
      }
      return r;
    };
    const c = {
      time: pick("time", req.columns.time),
      date: pick("date", req.columns.date),
      temp: pick("temp", req.columns.temp),
      rh: pick("rh", req.columns.rh),
    };
    if (errors.length > 0) return { ok: false, errors };
    if (c.time === c.temp)
      return {
        ok: false,
        errors: [
          { field: "columns.temp", error: "the temperature column is also the time column" },
        ],
      };
    columns = { time: c.time!, date: c.date, temp: c.temp!, rh: c.rh };
  } else if (guessed.time !== null && guessed.temp !== null) {
    columns = { time: guessed.time, date: guessed.date, temp: guessed.temp, rh: guessed.rh };
  }

  const tempUnit = req.tempUnit ?? guessed.tempUnit ?? "c";
  if (!columns) {
    return {
      ok: true,
      file: {
        headerIndex,
        headers,
        guessed,
        columns: null,
        tempUnit,
        timeFormat: req.timeFormat === "auto" ? "ymd" : req.timeFormat,
        timeFormatAmbiguous: false,
        rows: [],
        readings: [],
        blankRows: 0,
        rowsAboveHeader,
      },
    };
  }

  let timeFormat: ResolvedTimeFormat;
  let timeFormatAmbiguous = false;
  if (req.timeFormat === "auto") {
    const values: string[] = [];
    for (let i = firstDataIndex; i < table.length && values.length < 500; i++) {
      const cells = table[i]!;
      const t = (cells[columns.time] ?? "").trim();
      values.push(columns.date === null ? t : `${(cells[columns.date] ?? "").trim()} ${t}`.trim());
    }
    ({ format: timeFormat, ambiguous: timeFormatAmbiguous } = detectTimeFormat(values));
  } else {
    timeFormat = req.timeFormat;
  }

  const mapped = mapLoggerRows(table, firstDataIndex, {
    sensorId: req.sensorId,
    timeZone: req.timeZone,
    tempUnit,
    timeFormat,
    columns,
    nowMs: req.nowMs,
  });
  return {
    ok: true,
    file: {
      headerIndex,
      headers,
      guessed,
      columns,
      tempUnit,
      timeFormat,
      timeFormatAmbiguous,
      ...mapped,
      rowsAboveHeader,
    },
  };
}
