/**
 * A mix's calibration points (ASTM C1074 calibration, domain.md §3.2): the maturity of cylinders
 * broken at one age, from a constant curing temperature or from the specimens' own temperature
 * record; moving stored points to a new datum temperature; reading a lab's file of breaks; and
 * what a fitted curve needs to be drawn and read against the strip and ship thresholds.
 *
 * Units: hours, °C, °C·h (Nurse-Saul temperature-time factor with the mix's datum), MPa, epoch ms.
 * Pure: tables of cells come in already split (papaparse runs at the edge), time zones are named.
 */
import {
  detectTimeFormat,
  makeWallClock,
  parseNumberText,
  parseTimeText,
  unitFromHeader,
  type TempUnit,
} from "./loggerCsv";
import { ageConversionFactor, equivalentAgeFromReadings } from "./maturity/arrhenius";
import { nurseSaulFromReadings } from "./maturity/nurseSaul";
import { MS_PER_H, type Reading } from "./maturity/readings";
import { maturityForStrength, strengthAt, type StrengthCurve } from "./strength/curves";
import { fToC, psiToMpa } from "./units";

/**
 * Laboratory curing temperature of standard-cured specimens, °C: the moist room of ASTM C511 at
 * 23.0 ± 2.0 °C (domain.md §7.1, sourced). The usual case for calibration cylinders.
 */
export const LAB_CURING_TEMP_C = 23;

// ---------------------------------------------------------------------------------------
// Maturity of a set of cylinders

function assertAge(ageH: number): void {
  if (!Number.isFinite(ageH) || ageH < 0)
    throw new RangeError(`age must be finite and >= 0 h, got ${ageH}`);
}

/**
 * The temperature-time factor (°C·h) of specimens held at one constant temperature for `ageH`
 * hours: max(tempC − datumC, 0)·ageH, which is ASTM C1074 Eq. 1 with every interval at the same
 * temperature (domain.md §1.5 N-1: 24 h at 20 °C, datum 0 °C → 480 °C·h). A temperature at or
 * below the datum adds nothing (domain.md §1.3). Throws a RangeError on a negative or non-finite
 * age or a non-finite temperature.
 */
export function ttfAtConstantTempCH(ageH: number, tempC: number, datumC: number): number {
  assertAge(ageH);
  if (!Number.isFinite(tempC) || !Number.isFinite(datumC))
    throw new RangeError("temperatures must be finite");
  return Math.max(tempC - datumC, 0) * ageH;
}

/**
 * The equivalent age (hours at 20 °C) of specimens held at one constant temperature for `ageH`
 * hours: α(tempC)·ageH with the Arrhenius age conversion factor (ASTM C1074 Eq. 2; domain.md §2.5
 * E-1: 24 h at 30 °C, Q = 5000 K → 42.127 h). Throws as `ageConversionFactor`, or on a bad age.
 */
export function equivalentAgeAtConstantTempH(
  ageH: number,
  tempC: number,
  activationEnergyJMol: number,
): number {
  assertAge(ageH);
  return ageConversionFactor(tempC, { activationEnergyJMol }) * ageH;
}

/** The maturity of a specimen's own temperature record, from its first reading to its last. */
export interface RecordMaturity {
  ttfCH: number;
  equivalentAgeH: number;
  /** Hours from the first reading to the last. */
  spanH: number;
  /** False when two readings are more than 2 h apart (that interval then adds nothing). */
  complete: boolean;
  readingCount: number;
}

/**
 * The temperature-time factor and equivalent age of a specimen's logger record (the readings from
 * moulding to the break), by the same rules as a pour's sensors: trapezoid interval mean, clip at
 * the datum, a gap over 2 h adds nothing (ASTM C1074 Eq. 1 and 2; Plinth contract). Throws a
 * RangeError with fewer than two readings or a non-finite one.
 */
export function recordMaturity(
  readings: readonly Reading[],
  datumC: number,
  activationEnergyJMol: number,
): RecordMaturity {
  const ts = readings.map((r) => r.tsMs);
  if (new Set(ts).size < 2) throw new RangeError("a temperature record needs two or more readings");
  const ns = nurseSaulFromReadings(readings, datumC);
  const ea = equivalentAgeFromReadings(readings, { activationEnergyJMol });
  return {
    ttfCH: ns.ttfCH,
    equivalentAgeH: ea.equivalentAgeH,
    spanH: (Math.max(...ts) - Math.min(...ts)) / MS_PER_H,
    complete: ns.complete,
    readingCount: new Set(ts).size,
  };
}

/**
 * How far a specimen's record may fall short of, or run past, the age at the break: 1 h, or 5 % of
 * the age when that is more. Plinth policy; ASTM C1074 wants a specimen's recorder started within
 * about ½ h of moulding (domain.md §1.4, from memory), so a record that covers the age to within
 * an hour describes those cylinders.
 */
export function recordAgeToleranceH(ageH: number): number {
  return Math.max(1, 0.05 * ageH);
}

/**
 * Null when a record of `spanH` hours describes cylinders broken at `ageH` hours, else why not.
 * A record much shorter than the age would understate the maturity and so overstate every
 * strength estimate read from the curve; one much longer belongs to other cylinders.
 */
export function recordAgeMismatch(spanH: number, ageH: number): string | null {
  const tol = recordAgeToleranceH(ageH);
  if (Math.abs(spanH - ageH) <= tol) return null;
  return `the record covers ${spanH.toFixed(1)} h but the cylinders were broken at ${ageH.toFixed(1)} h (at most ${tol.toFixed(1)} h apart)`;
}

/**
 * A stored point's maturity at a new datum temperature. The point's mean temperature above the old
 * datum is recovered as T = ttf/age + oldDatum, and the factor rebuilt as age·max(T − newDatum, 0);
 * the equivalent age as age·α(T). Exact for cylinders cured at one constant temperature (the usual
 * lab-cured case, domain.md §7.1), and for any record that stayed above both datums; null when the
 * point has no age, which cannot be moved. Source: ASTM C1074 Eq. 1 and 2.
 */
export function rebasePointMaturity(
  point: { ageH: number | null; ttfCH: number },
  fromDatumC: number,
  toDatumC: number,
  activationEnergyJMol: number,
): { ttfCH: number; equivalentAgeH: number } | null {
  if (point.ageH === null || !(point.ageH > 0)) return null;
  const meanC = point.ttfCH / point.ageH + fromDatumC;
  return {
    ttfCH: ttfAtConstantTempCH(point.ageH, meanC, toDatumC),
    equivalentAgeH: equivalentAgeAtConstantTempH(point.ageH, meanC, activationEnergyJMol),
  };
}

// ---------------------------------------------------------------------------------------
// A fitted curve, for drawing and for the thresholds

/**
 * `count` points of a curve for drawing, spaced evenly on a log scale of maturity from `fromCH` to
 * `toCH` (both > 0), each with `strengthAt` (floored at 0, as estimates are).
 */
export function sampleCurve(
  curve: StrengthCurve,
  fromCH: number,
  toCH: number,
  count = 64,
): { ttfCH: number; strengthMpa: number }[] {
  if (!(fromCH > 0) || !(toCH > fromCH) || count < 2)
    throw new RangeError("a curve is drawn over 0 < from < to with two or more points");
  const step = Math.log(toCH / fromCH) / (count - 1);
  return Array.from({ length: count }, (_, i) => {
    const ttfCH = i === count - 1 ? toCH : fromCH * Math.exp(step * i);
    return { ttfCH, strengthMpa: strengthAt(curve, ttfCH) };
  });
}

/**
 * The maturity range a calibration chart shows: from half the lowest to one and a half times the
 * highest of the breaks' maturities and the thresholds' (a threshold far past the breaks is kept
 * in view up to ten times the highest break, no further).
 */
export function chartRangeCH(
  pointsCH: readonly number[],
  thresholdsCH: readonly (number | null)[],
): { fromCH: number; toCH: number } {
  const pts = pointsCH.filter((m) => m > 0);
  if (pts.length === 0) throw new RangeError("no maturity above 0 to draw");
  const maxPt = Math.max(...pts);
  const all = [
    ...pts,
    ...thresholdsCH.filter((m): m is number => m !== null && m > 0 && Number.isFinite(m)),
  ].map((m) => Math.min(m, 10 * maxPt));
  return { fromCH: Math.min(...all) / 2, toCH: Math.max(...all) * 1.5 };
}

/** Where a threshold's maturity lies against the breaks' maturities. */
export type ThresholdStanding = "within" | "below" | "above" | "unreachable";

/**
 * Where the maturity a threshold needs (from the curve) lies against the breaks: "below" the
 * earliest or "above" the latest break means the curve is read outside the data it was fitted to;
 * "unreachable" when the curve never gets there (see `maturityForStrength`).
 */
export function thresholdStanding(
  curve: StrengthCurve,
  thresholdMpa: number,
  pointsCH: readonly number[],
): { ttfCH: number | null; standing: ThresholdStanding } {
  const ttfCH = maturityForStrength(curve, thresholdMpa);
  if (ttfCH === null || !Number.isFinite(ttfCH)) return { ttfCH: null, standing: "unreachable" };
  const lo = Math.min(...pointsCH);
  const hi = Math.max(...pointsCH);
  return { ttfCH, standing: ttfCH < lo ? "below" : ttfCH > hi ? "above" : "within" };
}

// ---------------------------------------------------------------------------------------
// A specimen's temperature record pasted or read as text

/**
 * Reads a specimen logger's record written one reading a line, "time, temperature" (comma,
 * semicolon or tab between; a first line of names is skipped). Times with an offset or in epoch
 * milliseconds are instants; others are wall times in `timeZone`. A temperature's own unit ("23.1 °F")
 * wins over `tempUnit`. Lines are numbered from 1.
 */
export function readTempRecordText(
  text: string,
  options: { timeZone: string; tempUnit: TempUnit },
): { readings: Reading[]; errors: { line: number; error: string }[] } {
  const lines = text.replace(/^\uFEFF/, "").split(/\r?\n/);
  const rows = lines
    .map((raw, i) => {
      const cells = raw.includes("\t")
        ? raw.split("\t")
        : raw.includes(";")
          ? raw.split(";")
          : raw.split(",");
      return { line: i + 1, cells: cells.map((c) => c.trim()) };
    })
    .filter((r) => r.cells.some((c) => c !== ""));
  const errors: { line: number; error: string }[] = [];
  const readings: Reading[] = [];
  if (rows.length === 0) return { readings, errors };
  const { format } = detectTimeFormat(rows.map((r) => r.cells[0] ?? ""));
  const clock = makeWallClock(options.timeZone);
  let prevMs: number | null = null;
  rows.forEach((r, idx) => {
    const [timeCell = "", tempCell = ""] = r.cells;
    const time = parseTimeText(timeCell, format);
    const temp = parseNumberText(tempCell);
    if (idx === 0 && typeof time === "string" && temp === null) return; // a line of names
    if (typeof time === "string") {
      errors.push({ line: r.line, error: `the time "${timeCell}" ${time}` });
      return;
    }
    if (temp === null || temp.unit === "%") {
      errors.push({ line: r.line, error: `the temperature "${tempCell}" is not a number` });
      return;
    }
    const unit = temp.unit ?? options.tempUnit;
    const tempC = unit === "f" ? fToC(temp.value) : temp.value;
    if (tempC < -40 || tempC > 120) {
      errors.push({ line: r.line, error: `${tempCell} is outside −40 to 120 °C` });
      return;
    }
    const tsMs = time.kind === "instant" ? time.ms : clock(time.wallMs, prevMs).ms;
    prevMs = tsMs;
    readings.push({ tsMs, tempC });
  });
  return { readings, errors };
}

// ---------------------------------------------------------------------------------------
// The lab's file of breaks

export type AgeUnit = "d" | "h";
export type StrengthUnit = "psi" | "mpa";
/** Maturity as the file writes it: °C·h, °C·d, °F·h or °F·d (°F·h = 1.8 °C·h, domain.md §8.4). */
export type MaturityUnit = "c_h" | "c_d" | "f_h" | "f_d";

/** °C·h from a maturity in the file's unit (°F·h = 1.8 °C·h with matching datums, domain.md §8.4). */
export function maturityToCH(value: number, unit: MaturityUnit): number {
  const perHour = unit === "c_d" || unit === "f_d" ? value * 24 : value;
  return unit === "f_h" || unit === "f_d" ? perHour / 1.8 : perHour;
}

export const labColumnNames = [
  "specimen",
  "age",
  "strength",
  "maturity",
  "curing_temp",
  "broken_at",
] as const;
export type LabColumn = (typeof labColumnNames)[number];
export type LabColumns = Record<LabColumn, number | null>;

/** Strength a cylinder break may report: 100 to 30,000 psi (Plinth policy: outside, a unit is wrong). */
export const MIN_BREAK_PSI = 100;
export const MAX_BREAK_PSI = 30_000;
/** Oldest break age Plinth takes, hours (400 days). */
export const MAX_BREAK_AGE_H = 400 * 24;
/**
 * The spread of the cylinders at one age, as a percentage of their mean, above which another
 * specimen should be tested: 10 % (ASTM C1074 calibration procedure, domain.md §3.2, from memory).
 */
export const MAX_BREAK_RANGE_PCT = 10;
/** Rows of a lab file Plinth reads. */
export const MAX_LAB_ROWS = 2_000;

const norm = (h: string) => h.normalize("NFKC").toLowerCase().replace(/\s+/g, " ").trim();

const MATURITY_UNIT =
  /(?:°\s*|deg\.?\s*|(?<![a-z]))([cf])\s*[·.\-*×x_ ]?\s*(h|hr|hrs|hours?|d|days?)(?![a-z])/;

/** The unit a maturity header names; °C·h when it names none. */
export function maturityUnitFromHeader(header: string): MaturityUnit {
  const m = MATURITY_UNIT.exec(norm(header));
  if (!m) return "c_h";
  const perDay = m[2]!.startsWith("d");
  if (m[1] === "f") return perDay ? "f_d" : "f_h";
  return perDay ? "c_d" : "c_h";
}

/** The age unit a header names, if any: "Age (days)" → d, "Age, h" → h. */
export function ageUnitFromHeader(header: string): AgeUnit | null {
  const h = norm(header);
  if (/\bdays?\b|\(d\)|[\s_,]d$|^d$/.test(h)) return "d";
  if (/\bhours?\b|\bhrs?\b|\(h\)|[\s_,]h$|^h$/.test(h)) return "h";
  return null;
}

/** The strength unit a header names, if any. */
export function strengthUnitFromHeader(header: string): StrengthUnit | null {
  const h = norm(header);
  if (/psi/.test(h)) return "psi";
  if (/mpa|n\/mm/.test(h)) return "mpa";
  return null;
}

/**
 * Proposes which column holds what from a lab file's header names: maturity ("Maturity (°C·h)",
 * "TTF"), strength ("Strength (psi)", "f'c MPa"), age ("Age (days)"), curing temperature
 * ("Curing temp °C"), the date of the break ("Tested", "Break date") and the specimen ("Cylinder",
 * "Specimen"). Null where no header fits.
 */
export function guessLabColumns(headers: readonly string[]): LabColumns {
  const h = headers.map(norm);
  const taken: number[] = [];
  const find = (test: (s: string) => boolean): number | null => {
    const i = h.findIndex((s, idx) => !taken.includes(idx) && test(s));
    if (i === -1) return null;
    taken.push(i);
    return i;
  };
  const maturity = find(
    (s) =>
      /maturity|\bttf\b|temperature[- ]?time|\bt-?t factor|\btt factor/.test(s) ||
      (MATURITY_UNIT.test(s) && !/\bage\b|temp\b/.test(s)),
  );
  const strength = find((s) => /strength|\bpsi\b|\bmpa\b|n\/mm|^f'?c\b|compressive/.test(s));
  const age = find((s) => /\bage|^days?\b|^hours?\b|^hrs?\b/.test(s));
  const curing = find(
    (s) => /temp|celsius|fahrenheit/.test(s) || (/°\s*[cf]\b/.test(s) && !MATURITY_UNIT.test(s)),
  );
  const brokenAt = find((s) => /broken|break date|tested|test date|\bdate\b/.test(s));
  const specimen = find((s) => /specimen|cylinder|sample|\bid\b|\bmark\b|\btag\b|\bset\b/.test(s));
  return { specimen, age, strength, maturity, curing_temp: curing, broken_at: brokenAt };
}

/**
 * A number from a lab cell: "4150", "4,150" and "4 150" (thousands, where `thousands` allows them:
 * psi and maturity), "28.6", "28,6" (decimal comma), optionally followed by a word of unit
 * ("4150 psi", "7 d"). Returns the value and the trailing word, lower-cased, if any.
 */
export function readLabNumber(
  raw: string,
  thousands: boolean,
): { value: number; unit: string | null } | null {
  const m = /^([+-]?[\d.,\s]*\d)\s*([a-z°·\-/ ]*[a-z])?$/i.exec(raw.trim());
  if (!m) return null;
  let num = m[1]!.trim();
  if (/^[+-]?\d{1,3}(?:[, ]\d{3})+(?:\.\d+)?$/.test(num) && thousands)
    num = num.replace(/[, ]/g, "");
  else if (/^[+-]?\d+,\d+$/.test(num)) num = num.replace(",", ".");
  if (!/^[+-]?(?:\d+(?:\.\d+)?|\.\d+)$/.test(num)) return null;
  const value = Number(num);
  if (!Number.isFinite(value)) return null;
  return { value, unit: m[2] ? norm(m[2]) : null };
}

const ageUnitOfWord = (w: string): AgeUnit | null =>
  /^(d|day|days)$/.test(w) ? "d" : /^(h|hr|hrs|hour|hours)$/.test(w) ? "h" : null;
const strengthUnitOfWord = (w: string): StrengthUnit | null =>
  w === "psi" ? "psi" : w === "mpa" || w === "n/mm2" || w === "n/mm²" ? "mpa" : null;

/** How a lab file is read: units (null: from the header or cell), the mix, the plant's zone. */
export interface LabReadOptions {
  ageUnit: AgeUnit | null;
  strengthUnit: StrengthUnit | null;
  /** Unit of the curing-temperature column when neither header nor cell says. */
  tempUnit: TempUnit | null;
  /** °C to use for rows with neither maturity nor curing temperature; null: such rows are errors. */
  defaultCuringTempC: number | null;
  datumC: number;
  activationEnergyJMol: number;
  /** Zone for dates without an offset ("2026-03-02": noon that day there). */
  timeZone: string;
}

/** One cylinder (one row) as read. */
export interface LabRow {
  /** 1-based, as a spreadsheet numbers the file's rows. */
  row: number;
  specimen: string | null;
  ageH: number | null;
  strengthMpa: number;
  ttfCH: number;
  equivalentAgeH: number | null;
  /** The curing temperature the maturity was computed from; null when the file gave the maturity. */
  curingTempC: number | null;
  brokenAtMs: number | null;
}

/** The cylinders of one age, made one calibration point: mean strength at mean maturity. */
export interface LabPoint {
  ageH: number | null;
  ttfCH: number;
  equivalentAgeH: number | null;
  strengthMpa: number;
  specimens: string | null;
  cylinderCount: number;
  /** (highest − lowest)/mean of the cylinders' strengths, %; null for a single cylinder. */
  rangePct: number | null;
  brokenAtMs: number | null;
  rows: number[];
}

export interface LabTable {
  /** 1-based row of the header. */
  headerRow: number;
  headers: string[];
  columns: LabColumns;
  /** The units the file was read in (null where no row needed one). */
  units: {
    age: AgeUnit | null;
    strength: StrengthUnit | null;
    temp: TempUnit | null;
    maturity: MaturityUnit;
  };
  rows: LabRow[];
  errors: { row: number; error: string }[];
  points: LabPoint[];
  warnings: string[];
}

export type LabTableResult = { ok: true; table: LabTable } | { ok: false; error: string };

function brokenAtReader(values: readonly string[], timeZone: string) {
  const dateOnly = /^(\d{4}-\d{1,2}-\d{1,2}|\d{1,2}[/.-]\d{1,2}[/.-]\d{2,4})$/;
  const withNoon = (v: string) => (dateOnly.test(v.trim()) ? `${v.trim()} 12:00` : v);
  const { format } = detectTimeFormat(values.map(withNoon));
  const clock = makeWallClock(timeZone);
  // The column's own format first; a cell written otherwise is tried year-month-day, then month/day/year.
  const formats = [...new Set([format, "ymd", "mdy"] as const)];
  return (cell: string): number | string => {
    let first: string | null = null;
    for (const f of formats) {
      const t = parseTimeText(withNoon(cell), f);
      if (typeof t !== "string") return t.kind === "instant" ? t.ms : clock(t.wallMs, null).ms;
      first ??= t;
    }
    return `the date "${cell}" ${first}`;
  };
}

function readLabRow(
  cells: readonly string[],
  row: number,
  c: LabColumns,
  units: { age: AgeUnit | null; strength: StrengthUnit | null; temp: TempUnit | null },
  maturityUnit: MaturityUnit,
  o: LabReadOptions,
  readDate: (cell: string) => number | string,
): LabRow | string {
  const cell = (i: number | null) => (i === null ? "" : (cells[i] ?? "").trim());

  const sText = cell(c.strength);
  if (sText === "") return "no strength";
  const sUnitGuess = units.strength;
  const s = readLabNumber(sText, sUnitGuess !== "mpa");
  if (!s) return `the strength "${sText}" is not a number`;
  const sUnit = (s.unit && strengthUnitOfWord(s.unit)) ?? sUnitGuess;
  if (s.unit && !strengthUnitOfWord(s.unit)) return `the strength "${sText}" has an unknown unit`;
  if (!sUnit) return "the strength unit is not known: choose psi or MPa";
  const strengthMpa = sUnit === "psi" ? psiToMpa(s.value) : s.value;
  if (strengthMpa < psiToMpa(MIN_BREAK_PSI) || strengthMpa > psiToMpa(MAX_BREAK_PSI)) {
    return `the strength ${sText} ${sUnit === "psi" ? "psi" : "MPa"} is outside ${MIN_BREAK_PSI} to ${MAX_BREAK_PSI.toLocaleString("en-US")} psi: check the unit`;
  }

  let ageH: number | null = null;
  const aText = cell(c.age);
  if (aText !== "") {
    const a = readLabNumber(aText, false);
    if (!a) return `the age "${aText}" is not a number`;
    const aUnit = (a.unit && ageUnitOfWord(a.unit)) ?? units.age;
    if (a.unit && !ageUnitOfWord(a.unit)) return `the age "${aText}" has an unknown unit`;
    if (!aUnit) return "the age unit is not known: choose days or hours";
    ageH = aUnit === "d" ? a.value * 24 : a.value;
    if (!(ageH > 0) || ageH > MAX_BREAK_AGE_H) return `the age ${aText} is outside 0 to 400 days`;
  }

  let ttfCH: number;
  let equivalentAgeH: number | null = null;
  let curingTempC: number | null = null;
  const mText = cell(c.maturity);
  const tText = cell(c.curing_temp);
  if (mText !== "") {
    const m = readLabNumber(mText, true);
    if (!m) return `the maturity "${mText}" is not a number`;
    ttfCH = maturityToCH(m.value, maturityUnit);
    if (!(ttfCH > 0) || ttfCH > 1e6) return `the maturity ${mText} is not above 0`;
  } else {
    if (tText !== "") {
      const t = parseNumberText(tText);
      if (!t || t.unit === "%") return `the curing temperature "${tText}" is not a number`;
      const unit = t.unit ?? units.temp;
      if (!unit) return "the curing temperature's unit is not known: choose °C or °F";
      curingTempC = unit === "f" ? fToC(t.value) : t.value;
      if (curingTempC < -10 || curingTempC > 100)
        return `the curing temperature ${tText} is outside −10 to 100 °C`;
    } else if (o.defaultCuringTempC !== null) {
      curingTempC = o.defaultCuringTempC;
    } else {
      return "no maturity and no curing temperature: give one, or the lab's curing temperature for the file";
    }
    if (ageH === null) return "a curing temperature needs the age to give a maturity";
    if (!(curingTempC > o.datumC)) {
      return `the curing temperature ${curingTempC.toFixed(1)} °C is not above the mix's datum temperature (${o.datumC} °C), so it adds no maturity`;
    }
    ttfCH = ttfAtConstantTempCH(ageH, curingTempC, o.datumC);
    equivalentAgeH = equivalentAgeAtConstantTempH(ageH, curingTempC, o.activationEnergyJMol);
  }

  let brokenAtMs: number | null = null;
  const dText = cell(c.broken_at);
  if (dText !== "") {
    const d = readDate(dText);
    if (typeof d === "string") return d;
    brokenAtMs = d;
  }
  const specimen = cell(c.specimen) || null;
  return { row, specimen, ageH, strengthMpa, ttfCH, equivalentAgeH, curingTempC, brokenAtMs };
}

/**
 * Makes calibration points of cylinder rows: the rows of one age (or, without an age, of one
 * maturity) become one point with their mean strength and mean maturity (ASTM C1074 calibration:
 * each age's mean strength against the mean maturity of its specimens, domain.md §3.2). In the
 * order of age, then maturity.
 */
export function groupBreaks(rows: readonly LabRow[]): LabPoint[] {
  const groups = new Map<string, LabRow[]>();
  for (const r of rows) {
    const key = r.ageH !== null ? `a${r.ageH.toFixed(2)}` : `m${r.ttfCH.toFixed(1)}`;
    groups.set(key, [...(groups.get(key) ?? []), r]);
  }
  const mean = (xs: number[]) => xs.reduce((s, x) => s + x, 0) / xs.length;
  return [...groups.values()]
    .map((g): LabPoint => {
      const strengths = g.map((r) => r.strengthMpa);
      const strengthMpa = mean(strengths);
      const eq = g.map((r) => r.equivalentAgeH);
      const specimens = g.map((r) => r.specimen).filter((s): s is string => s !== null);
      const dates = g.map((r) => r.brokenAtMs).filter((d): d is number => d !== null);
      return {
        ageH: g[0]!.ageH,
        ttfCH: mean(g.map((r) => r.ttfCH)),
        equivalentAgeH: eq.every((e) => e !== null) ? mean(eq as number[]) : null,
        strengthMpa,
        specimens: specimens.length > 0 ? specimens.join(", ") : null,
        cylinderCount: g.length,
        rangePct:
          g.length > 1
            ? ((Math.max(...strengths) - Math.min(...strengths)) / strengthMpa) * 100
            : null,
        brokenAtMs: dates.length > 0 ? Math.max(...dates) : null,
        rows: g.map((r) => r.row),
      };
    })
    .sort((a, b) => (a.ageH ?? Infinity) - (b.ageH ?? Infinity) || a.ttfCH - b.ttfCH);
}

/** An age in words: "3 d", "18 h". */
export function ageText(ageH: number): string {
  const days = ageH / 24;
  return Number.isInteger(Math.round(days * 100) / 100) && ageH >= 24
    ? `${Math.round(days)} d`
    : `${Number(ageH.toFixed(1))} h`;
}

/**
 * Reads a lab's file of cylinder breaks (cells already split): finds the header in the first 30
 * rows (a row naming a strength column and an age or maturity column), reads every row after it,
 * and groups the cylinders of each age into calibration points. A row that cannot be read is
 * listed with why and does not stop the others. Maturity comes from the file's maturity column,
 * else from the curing temperature (the row's, else `defaultCuringTempC`) and the age:
 * age·(T − datum) (domain.md §7.1; ASTM C1074 Eq. 1).
 */
export function readLabTable(
  table: readonly (readonly string[])[],
  o: LabReadOptions,
): LabTableResult {
  let headerIndex = -1;
  let columns: LabColumns | null = null;
  for (let i = 0; i < Math.min(table.length, 30); i++) {
    const g = guessLabColumns(table[i]!);
    if (g.strength !== null && (g.age !== null || g.maturity !== null)) {
      headerIndex = i;
      columns = g;
      break;
    }
  }
  if (!columns) {
    return {
      ok: false,
      error:
        "No header row naming a strength column and an age or maturity column was found in the first 30 rows.",
    };
  }
  const headers = table[headerIndex]!.map((h) => h.trim());
  const headerOf = (i: number | null) => (i === null ? "" : (headers[i] ?? ""));
  const units = {
    age: o.ageUnit ?? ageUnitFromHeader(headerOf(columns.age)),
    strength: o.strengthUnit ?? strengthUnitFromHeader(headerOf(columns.strength)),
    temp:
      o.tempUnit ??
      (columns.curing_temp === null ? null : unitFromHeader(headerOf(columns.curing_temp))),
  };
  const maturityUnit = maturityUnitFromHeader(headerOf(columns.maturity));
  const body = table.slice(headerIndex + 1, headerIndex + 1 + MAX_LAB_ROWS);
  const readDate = brokenAtReader(
    columns.broken_at === null ? [] : body.map((r) => r[columns.broken_at!] ?? ""),
    o.timeZone,
  );
  const rows: LabRow[] = [];
  const errors: { row: number; error: string }[] = [];
  body.forEach((cells, i) => {
    if (cells.every((c) => c.trim() === "")) return;
    const row = headerIndex + 2 + i;
    const r = readLabRow(cells, row, columns, units, maturityUnit, o, readDate);
    if (typeof r === "string") errors.push({ row, error: r });
    else rows.push(r);
  });
  const warnings: string[] = [];
  if (table.length - headerIndex - 1 > MAX_LAB_ROWS) {
    warnings.push(`Only the first ${MAX_LAB_ROWS.toLocaleString("en-US")} rows were read.`);
  }
  const points = groupBreaks(rows);
  for (const p of points) {
    if (p.rangePct !== null && p.rangePct > MAX_BREAK_RANGE_PCT) {
      const at = p.ageH !== null ? ageText(p.ageH) : `${Math.round(p.ttfCH)} °C·h`;
      warnings.push(
        `The ${p.cylinderCount} cylinders at ${at} differ by ${p.rangePct.toFixed(0)} % of their mean; above ${MAX_BREAK_RANGE_PCT} %, test another specimen.`,
      );
    }
  }
  const usedTemp = rows.some((r) => r.curingTempC !== null && columns.curing_temp !== null);
  return {
    ok: true,
    table: {
      headerRow: headerIndex + 1,
      headers,
      columns,
      units: {
        age: rows.some((r) => r.ageH !== null) ? units.age : null,
        strength: units.strength,
        temp: usedTemp ? units.temp : null,
        maturity: maturityUnit,
      },
      rows,
      errors,
      points,
      warnings,
    },
  };
}
