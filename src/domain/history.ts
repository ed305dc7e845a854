/**
 * A pour's cure history as time series: the running maturity of each sensor at each of its
 * readings, the strength the mix's curve reads from it, the governing (weakest) sensor over time,
 * when a threshold was crossed, and the thinning that keeps a chart light. Pure: plain numbers in,
 * plain values out. Temperatures °C, humidity % RH, maturity °C·h, strength MPa, times epoch ms.
 *
 * A week of one-minute readings from ten sensors is a hundred thousand readings, so the series
 * are kept as columns (typed arrays) and readings as the rows the database hands over, with no
 * object made per reading.
 */
import type { MaturityParams, MaturityState } from "./maturity/accumulator";
import { equivalentAgeStep } from "./maturity/arrhenius";
import { nurseSaulStep } from "./maturity/nurseSaul";
import { assertReading, isGap, MS_PER_H } from "./maturity/readings";
import { strengthAt, type StrengthCurve } from "./strength/curves";
import { cToF, type UnitSystem } from "./units";

/** One reading as it comes off the database: epoch ms, °C, and % RH (null when not sent). */
export type ReadingRow = readonly [tsMs: number, tempC: number, rhPct: number | null];

/** The running maturity of one sensor just after each of its readings was folded in. */
export interface MaturityTrack {
  length: number;
  /** Which row of the input each point comes from. */
  row: Uint32Array;
  tsMs: Float64Array;
  /** Nurse-Saul temperature-time factor since the record started, °C·h. */
  ttfCH: Float64Array;
  /** Equivalent age at 20 °C since the record started, hours. */
  equivalentAgeH: Float64Array;
  /** 0 once a gap over 2 h (or a start over 2 h after cast) has been met, else 1. */
  complete: Uint8Array;
}

/**
 * The order to read rows in: time order with one row per timestamp, the first in input order
 * standing (as at ingest). Rows already strictly in time order (as off the (sensor_id, ts) key)
 * are read as they are.
 */
function readingOrder(rows: readonly ReadingRow[]): ArrayLike<number> | null {
  let ordered = true;
  for (let i = 1; i < rows.length; i++) {
    if (!(rows[i]![0] > rows[i - 1]![0])) {
      ordered = false;
      break;
    }
  }
  if (ordered) return null;
  // Array.prototype.sort is stable, so equal timestamps keep their input order.
  const idx = Array.from({ length: rows.length }, (_, i) => i).sort(
    (a, b) => rows[a]![0] - rows[b]![0],
  );
  return idx.filter((r, k) => k === 0 || rows[r]![0] !== rows[idx[k - 1]!]![0]);
}

/**
 * The running maturity at every reading of one sensor's history, and the state after the last.
 *
 * The rules are the accumulator's (`advanceMaturity`, accumulator.ts) applied in one pass:
 * readings are taken in time order with one per timestamp (the first stands); readings before
 * `castAtMs` make no point; the first reading at or after cast starts the record (incomplete if
 * over 2 h after cast); each interval then adds per `nurseSaulStep` and `equivalentAgeStep`
 * (ASTM C1074 Eq. 1 and Eq. 2, trapezoid interval mean, below-datum intervals add nothing to the
 * temperature-time factor, intervals over 2 h add nothing and make the record incomplete).
 * So `state` equals `maturityFromHistory` of the same readings, and each point's factor equals
 * `nurseSaulFromReadings` of the readings up to it (when the first is at or after cast).
 * Throws a RangeError on a non-finite reading.
 */
export function maturityTrack(
  rows: readonly ReadingRow[],
  castAtMs: number,
  params: MaturityParams,
): { track: MaturityTrack; state: MaturityState } {
  const order = readingOrder(rows);
  const n = order ? order.length : rows.length;
  const track: MaturityTrack = {
    length: 0,
    row: new Uint32Array(n),
    tsMs: new Float64Array(n),
    ttfCH: new Float64Array(n),
    equivalentAgeH: new Float64Array(n),
    complete: new Uint8Array(n),
  };
  let firstTsMs: number | null = null;
  let lastTsMs: number | null = null;
  let lastTempC = 0;
  let ttfCH = 0;
  let equivalentAgeH = 0;
  let complete = false;
  let k = 0;
  for (let i = 0; i < n; i++) {
    const r = order ? order[i]! : i;
    const [tsMs, tempC] = rows[r]!;
    assertReading({ tsMs, tempC });
    if (tsMs < castAtMs) continue;
    if (lastTsMs === null) {
      firstTsMs = tsMs;
      complete = !isGap((tsMs - castAtMs) / MS_PER_H);
    } else {
      const hours = (tsMs - lastTsMs) / MS_PER_H;
      ttfCH = nurseSaulStep(ttfCH, lastTempC, tempC, hours, params.datumC);
      equivalentAgeH = equivalentAgeStep(equivalentAgeH, lastTempC, tempC, hours, params);
      complete = complete && !isGap(hours);
    }
    lastTsMs = tsMs;
    lastTempC = tempC;
    track.row[k] = r;
    track.tsMs[k] = tsMs;
    track.ttfCH[k] = ttfCH;
    track.equivalentAgeH[k] = equivalentAgeH;
    track.complete[k] = complete ? 1 : 0;
    k++;
  }
  track.length = k;
  const state: MaturityState = {
    castAtMs,
    firstTsMs,
    lastTsMs,
    lastTempC: lastTsMs === null ? null : lastTempC,
    ttfCH,
    equivalentAgeH,
    complete,
    readingCount: k,
  };
  return { track, state };
}

/**
 * Strength (MPa) read from the mix's strength-maturity curve at each temperature-time factor
 * (ASTM C1074 strength-maturity relationship; `strengthAt`, floored at 0), or null for every one
 * when the mix has no curve yet.
 */
export function strengthSeries(
  ttfCH: ArrayLike<number>,
  curve: StrengthCurve | null,
): (number | null)[] {
  return Array.from(ttfCH, (m) => (curve ? strengthAt(curve, m) : null));
}

/**
 * When a running temperature-time factor first reached `targetTtfCH` (°C·h): inside the interval
 * where the target falls the factor is taken to grow evenly (linear interpolation), as
 * `ttfReachedAt` does over the readings. A target at or below 0 is reached at the first point.
 * Null when the series never reaches it. Columns of equal length, in time order.
 */
export function ttfCrossingAt(
  tsMs: ArrayLike<number>,
  ttfCH: ArrayLike<number>,
  targetTtfCH: number,
): number | null {
  if (tsMs.length === 0) return null;
  if (targetTtfCH <= 0) return tsMs[0]!;
  for (let i = 1; i < tsMs.length; i++) {
    if (ttfCH[i]! >= targetTtfCH) {
      const gained = ttfCH[i]! - ttfCH[i - 1]!;
      const share = gained > 0 ? (targetTtfCH - ttfCH[i - 1]!) / gained : 1;
      return Math.round(tsMs[i - 1]! + share * (tsMs[i]! - tsMs[i - 1]!));
    }
  }
  return null;
}

/**
 * The value of a stepwise-held series at `atMs`: the value at the last point at or before it,
 * `before` when there is none. `from` is a search hint (index to start from) for walks in time
 * order; the returned `index` is the next hint. Columns in time order.
 */
export function heldValueAt(
  tsMs: ArrayLike<number>,
  values: ArrayLike<number>,
  atMs: number,
  before: number,
  from = 0,
): { value: number; index: number } {
  let i = Math.max(0, from);
  while (i < tsMs.length && tsMs[i]! <= atMs) i++;
  return { value: i > 0 ? values[i - 1]! : before, index: i };
}

/** One sensor's track on a pour, for the governing series: its columns and its window. */
export interface SensorTrack {
  sensor: string;
  tsMs: ArrayLike<number>;
  ttfCH: ArrayLike<number>;
  fromMs: number;
  /** Null while the sensor is still on the pour. */
  toMs: number | null;
}

/** `n` evenly spaced instants from `fromMs` to `toMs` inclusive (one when they are equal). */
export function timeGrid(fromMs: number, toMs: number, n: number): number[] {
  if (!(toMs > fromMs) || n < 2) return [fromMs];
  const step = (toMs - fromMs) / (n - 1);
  return Array.from({ length: n }, (_, i) => (i === n - 1 ? toMs : Math.round(fromMs + i * step)));
}

/**
 * The governing (weakest) temperature-time factor of a pour at each instant of `gridMs` (in time
 * order): the least factor among the sensors on the pour at that instant, each held at its last
 * reading (0 before its first). Decisions follow the coldest place in the pour (Plinth contract:
 * "the governing sensor is the one with the lowest strength estimate"); holding the last value
 * never reads ahead of the readings, so the line errs low. Instants with no sensor on the pour
 * are left out.
 */
export function governingSeries(
  tracks: readonly SensorTrack[],
  gridMs: readonly number[],
): { tsMs: number; ttfCH: number; sensor: string }[] {
  const hints = tracks.map(() => 0);
  const out: { tsMs: number; ttfCH: number; sensor: string }[] = [];
  for (const t of gridMs) {
    let best = Infinity;
    let bestSensor: string | null = null;
    tracks.forEach((track, k) => {
      const held = heldValueAt(track.tsMs, track.ttfCH, t, 0, hints[k]);
      hints[k] = held.index;
      if (t < track.fromMs || (track.toMs !== null && t > track.toMs)) return;
      if (bestSensor === null || held.value < best) {
        best = held.value;
        bestSensor = track.sensor;
      }
    });
    if (bestSensor !== null) out.push({ tsMs: t, ttfCH: best, sensor: bestSensor });
  }
  return out;
}

/**
 * Which points of a series whose values only rise (a running maturity) to keep for a chart: the
 * span is cut into equal time buckets, each keeps its last point, and the first point is always
 * kept, so every kept value is a true one and the line's shape holds. Indices in time order; a
 * series already short enough is kept whole. Never more than `maxPoints` (at least 2).
 */
export function thinRising(tsMs: ArrayLike<number>, maxPoints: number): number[] {
  const n = tsMs.length;
  const limit = Math.max(2, Math.floor(maxPoints));
  if (n <= limit) return Array.from({ length: n }, (_, i) => i);
  const first = tsMs[0]!;
  const buckets = limit - 1;
  const width = (tsMs[n - 1]! - first + 1) / buckets;
  const out = [0];
  let current = -1;
  let pick = -1;
  for (let i = 1; i < n; i++) {
    const b = Math.min(buckets - 1, Math.floor((tsMs[i]! - first) / width));
    if (b !== current && pick >= 0) out.push(pick);
    current = b;
    pick = i;
  }
  if (pick >= 0) out.push(pick);
  return out;
}

/**
 * Which readings to keep for a chart without hiding a peak or a dip: the same rule as
 * `thinSeries` (src/domain/thin.ts), on rows. The window is cut into equal time buckets and each
 * keeps its readings of lowest and highest temperature and of lowest and highest humidity (at
 * most four), in time order; rows already few enough are kept whole. Rows in time order.
 */
export function thinRows(
  rows: readonly ReadingRow[],
  maxPoints: number,
  fromMs?: number,
  toMs?: number,
): number[] {
  const n = rows.length;
  if (n <= maxPoints) return Array.from({ length: n }, (_, i) => i);
  if (maxPoints < 4) {
    let lo = 0;
    let hi = 0;
    for (let i = 0; i < n; i++) {
      if (rows[i]![1] < rows[lo]![1]) lo = i;
      if (rows[i]![1] > rows[hi]![1]) hi = i;
    }
    const keep = lo === hi ? [lo] : [lo, hi].sort((a, b) => rows[a]![0] - rows[b]![0]);
    return keep.slice(0, Math.max(1, maxPoints));
  }
  const start = fromMs ?? rows[0]![0];
  const end = (toMs ?? rows[n - 1]![0]) + 1;
  const buckets = Math.floor(maxPoints / 4);
  const width = Math.max(1, (end - start) / buckets);
  const out: number[] = [];
  let current = -1;
  let tLo = 0;
  let tHi = 0;
  let hLo = -1;
  let hHi = -1;
  const flush = () => {
    const picks = [...new Set([tLo, tHi, ...(hLo >= 0 ? [hLo] : []), ...(hHi >= 0 ? [hHi] : [])])];
    picks.sort((a, b) => rows[a]![0] - rows[b]![0]);
    out.push(...picks);
  };
  for (let i = 0; i < n; i++) {
    const [tsMs, tempC, rhPct] = rows[i]!;
    const b = Math.min(buckets - 1, Math.max(0, Math.floor((tsMs - start) / width)));
    if (b !== current) {
      if (current !== -1) flush();
      current = b;
      tLo = tHi = i;
      hLo = hHi = rhPct === null ? -1 : i;
      continue;
    }
    if (tempC < rows[tLo]![1]) tLo = i;
    if (tempC > rows[tHi]![1]) tHi = i;
    if (rhPct !== null) {
      if (hLo < 0 || rhPct < rows[hLo]![2]!) hLo = i;
      if (hHi < 0 || rhPct > rows[hHi]![2]!) hHi = i;
    }
  }
  if (current !== -1) flush();
  return out;
}

/**
 * How a person sees a temperature-time factor: °C·h, or °F·h for those who work in US units.
 * With the matching datum (T0,F = 1.8·T0,C + 32) the Fahrenheit sum is exactly 1.8 times the
 * Celsius one (domain.md §8.4: 720 °C·h ⇔ 1296 °F·h).
 */
export function displayTtf(ttfCH: number, system: UnitSystem): { value: string; unit: string } {
  const v = system === "us" ? ttfCH * 1.8 : ttfCH;
  return { value: Math.round(v).toLocaleString("en-US"), unit: system === "us" ? "°F·h" : "°C·h" };
}

/** A datum temperature as a person sees it (°F uses the offset: −10 °C is 14 °F, domain.md §8.3). */
export function displayDatum(datumC: number, system: UnitSystem): string {
  return system === "us" ? `${cToF(datumC).toFixed(0)} °F` : `${datumC.toFixed(0)} °C`;
}

/**
 * A cylinder break against the in-place estimate at the time: break ÷ estimate, or null when
 * there was no estimate (or it was 0). Above 1, the estimate was on the safe side.
 */
export function breakToEstimateRatio(breakMpa: number, estimateMpa: number | null): number | null {
  if (estimateMpa === null || !(estimateMpa > 0)) return null;
  return breakMpa / estimateMpa;
}

/**
 * A file name for a pour's export: the pour code with anything but letters, digits, dot, dash and
 * underscore made a dash, then the suffix (e.g. "P-2611-01-cure-history.csv").
 */
export function exportFileName(pourCode: string, suffix: string): string {
  const safe = pourCode.replace(/[^A-Za-z0-9._-]+/g, "-").replace(/^-+|-+$/g, "") || "pour";
  return `${safe}-${suffix}`;
}
