/**
 * Thinning a long window from pre-aggregated buckets, for charts, without hiding a peak or a
 * dip. The rule is thinSeries's (src/domain/thin.ts): the window is cut into time buckets
 * and each keeps the readings holding its lowest and highest temperature and its lowest and
 * highest humidity (the earliest such reading on a tie, as thinSeries keeps the first it
 * meets). So every chart bucket shows its own extremes and the window's overall peak and dip
 * are always among the picks.
 *
 * The readings rollup holds each sensor's readings in fixed buckets of two spans, a quarter
 * hour and an hour, aligned to the Unix epoch, each bucket with its own extreme readings and
 * how many readings it has (an hour's are its quarters' extremes). To answer from it, a
 * window's chart buckets are put on a grid: bucket k starts at the grid line at or before
 * from + k·width (width = (to + 1 − from) / count, thinSeries's width), the grid being the
 * hours for buckets at least two hours wide and the quarter hours for buckets at least half an
 * hour wide. So each chart bucket is within one grid step of thinSeries's and is made of whole
 * rollup buckets, but for the window's own ragged edges, which are read raw (and so is what is
 * not rolled up yet). A chart bucket's extreme is then the extreme of its rollup buckets'
 * extremes and its raw readings, in any order. Chart buckets narrower than half an hour keep
 * thinSeries's equal cut exactly and are read raw. The picks depend only on the readings and
 * the window, never on how far either span of the rollup has got. Pure.
 */
import type { SeriesPoint } from "./thin";

/** The rollup's fine bucket: 15 minutes, in ms, aligned to the Unix epoch. */
export const ROLLUP_BUCKET_MS = 900_000;

/** The rollup's coarse bucket: an hour (four fine ones), aligned to the Unix epoch. */
export const ROLLUP_HOUR_MS = 3_600_000;

/**
 * Chart buckets at least this wide are put on the quarter-hour grid and read from the rollup;
 * narrower ones are cut as thinSeries cuts them and read raw.
 */
export const MIN_GRID_CHART_BUCKET_MS = 2 * ROLLUP_BUCKET_MS;

/**
 * Chart buckets at least this wide are put on the hours and read from the hourly rollup (a
 * month in 1,000 points: 720 rows instead of 2,880).
 */
export const MIN_HOUR_GRID_CHART_BUCKET_MS = 2 * ROLLUP_HOUR_MS;

/** Start (epoch ms) of the `spanMs` bucket holding `tsMs`. */
export function bucketStart(tsMs: number, spanMs: number): number {
  return Math.floor(tsMs / spanMs) * spanMs;
}

/** The first `spanMs` bucket boundary at or after `tsMs`. */
export function bucketCeil(tsMs: number, spanMs: number): number {
  return Math.ceil(tsMs / spanMs) * spanMs;
}

/** Start (epoch ms) of the quarter-hour rollup bucket holding `tsMs`. */
export function rollupBucketStart(tsMs: number): number {
  return bucketStart(tsMs, ROLLUP_BUCKET_MS);
}

/** The first quarter-hour boundary at or after `tsMs`. */
export function rollupBucketCeil(tsMs: number): number {
  return bucketCeil(tsMs, ROLLUP_BUCKET_MS);
}

/** How a window [fromMs, toMs] (both inclusive, epoch ms) is cut into chart buckets. */
export interface ChartBuckets {
  startMs: number;
  /** thinSeries's width, (toMs + 1 − fromMs) / count; may be fractional. */
  widthMs: number;
  count: number;
  /** The grid's step: ROLLUP_HOUR_MS, ROLLUP_BUCKET_MS, or null for thinSeries's equal cut. */
  gridMs: number | null;
  /**
   * On a grid: the start of each bucket after the first (count − 1 of them, each the grid
   * line at or before startMs + k·widthMs). Null: thinSeries's equal cut.
   */
  gridStartsMs: number[] | null;
}

/** The grid chart buckets `widthMs` wide are put on (null: none, thinSeries's equal cut). */
export function gridFor(widthMs: number): number | null {
  if (widthMs >= MIN_HOUR_GRID_CHART_BUCKET_MS) return ROLLUP_HOUR_MS;
  if (widthMs >= MIN_GRID_CHART_BUCKET_MS) return ROLLUP_BUCKET_MS;
  return null;
}

/**
 * The chart buckets of a window: on the hours or the quarter hours when wide enough (gridFor),
 * else thinSeries's equal cut, to thinSeries's arithmetic.
 */
export function chartBuckets(fromMs: number, toMs: number, count: number): ChartBuckets {
  const n = Math.max(1, Math.floor(count));
  const widthMs = Math.max(1, (toMs + 1 - fromMs) / n);
  const gridMs = gridFor(widthMs);
  if (gridMs === null)
    return { startMs: fromMs, widthMs, count: n, gridMs: null, gridStartsMs: null };
  const gridStartsMs = Array.from({ length: n - 1 }, (_, i) =>
    bucketStart(fromMs + (i + 1) * widthMs, gridMs),
  );
  return { startMs: fromMs, widthMs, count: n, gridMs, gridStartsMs };
}

/** The chart bucket a reading at `tsMs` falls in (clamped to the window's buckets). */
export function chartBucketOf(layout: ChartBuckets, tsMs: number): number {
  const k = Math.min(
    layout.count - 1,
    Math.max(0, Math.floor((tsMs - layout.startMs) / layout.widthMs)),
  );
  const grid = layout.gridStartsMs;
  if (grid === null) return k;
  // A grid start lies less than one grid step before the equal cut's edge and buckets are at
  // least two steps wide, so the bucket is k or a neighbour; the grid starts (whole
  // ms) decide exactly, whatever the rounding of the division above.
  if (k > 0 && tsMs < grid[k - 1]!) return k - 1;
  if (k < layout.count - 1 && tsMs >= grid[k]!) return k + 1;
  return k;
}

/** A half-open time range [fromMs, toMs) in epoch ms. */
export interface TimeRange {
  fromMs: number;
  toMs: number;
}

/** Rollup buckets of one span whose start lies in [fromMs, toMs). */
export interface RollupRange extends TimeRange {
  spanMs: number;
}

/** Where each part of a window is read from. */
export interface WindowPlan {
  layout: ChartBuckets;
  /** Whole rollup buckets to read, in time order, none overlapping (empty: none). */
  rollup: RollupRange[];
  /** Raw readings to read besides: the window's ragged edges, and what is not rolled up yet. */
  raw: TimeRange[];
}

/**
 * Plans the reading of the window [fromMs, toMs] (inclusive) thinned to `count` chart buckets,
 * for a sensor whose quarter hours are rolled up through `rolledThroughMs` and whose hours
 * through `hoursRolledThroughMs` (every bucket ending at or before its mark is complete; null:
 * none is). On the hours' grid, whole hours inside the window before both marks come from the
 * hourly rollup; other whole quarter hours before the quarters' mark from the quarter-hour
 * rollup; the rest raw. A window whose chart buckets are not on a grid is read raw throughout.
 */
export function planWindow(
  fromMs: number,
  toMs: number,
  count: number,
  rolledThroughMs: number | null,
  hoursRolledThroughMs: number | null = null,
): WindowPlan {
  const layout = chartBuckets(fromMs, toMs, count);
  const endMs = toMs + 1;
  const qFrom = rollupBucketCeil(fromMs);
  const qTo =
    rolledThroughMs === null || layout.gridMs === null
      ? qFrom
      : Math.max(qFrom, Math.min(rollupBucketStart(endMs), rolledThroughMs));
  if (qTo <= qFrom) return { layout, rollup: [], raw: [{ fromMs, toMs: endMs }] };
  const rollup: RollupRange[] = [];
  if (layout.gridMs === ROLLUP_HOUR_MS && hoursRolledThroughMs !== null) {
    const hFrom = bucketCeil(qFrom, ROLLUP_HOUR_MS);
    const hTo = Math.max(
      hFrom,
      Math.min(bucketStart(qTo, ROLLUP_HOUR_MS), bucketStart(hoursRolledThroughMs, ROLLUP_HOUR_MS)),
    );
    if (hTo > hFrom) {
      if (qFrom < hFrom) rollup.push({ spanMs: ROLLUP_BUCKET_MS, fromMs: qFrom, toMs: hFrom });
      rollup.push({ spanMs: ROLLUP_HOUR_MS, fromMs: hFrom, toMs: hTo });
      if (hTo < qTo) rollup.push({ spanMs: ROLLUP_BUCKET_MS, fromMs: hTo, toMs: qTo });
    }
  }
  if (rollup.length === 0) rollup.push({ spanMs: ROLLUP_BUCKET_MS, fromMs: qFrom, toMs: qTo });
  const raw: TimeRange[] = [];
  if (fromMs < qFrom) raw.push({ fromMs, toMs: qFrom });
  if (qTo < endMs) raw.push({ fromMs: qTo, toMs: endMs });
  return { layout, rollup, raw };
}

/**
 * A rollup bucket's extreme readings: its lowest and highest temperature and humidity (the
 * earliest such reading on a tie); no humidity ones when none of its readings has one.
 */
export interface RollupExtremes {
  loTemp: SeriesPoint;
  hiTemp: SeriesPoint;
  loRh: SeriesPoint | null;
  hiRh: SeriesPoint | null;
}

/** Collects each chart bucket's extreme readings from raw readings and rollup buckets. */
export interface ExtremesFold {
  /** One raw reading. */
  add(tsMs: number, tempC: number, rhPct: number | null): void;
  /**
   * A rollup bucket of `spanMs` starting at `bucketMs`: counts its readings and offers its
   * extreme readings. Returns false, taking nothing, when the bucket is not wholly inside one
   * chart bucket (off the grid): its raw readings must be added instead.
   */
  addRollup(bucketMs: number, spanMs: number, readings: number, extremes: RollupExtremes): boolean;
  /** Readings accounted for so far (raw ones, plus the counts of rollup buckets taken). */
  readings(): number;
  /** The picks: per chart bucket, its distinct extreme readings in time order; oldest first. */
  points(): SeriesPoint[];
}

interface Slot {
  loTemp: SeriesPoint;
  hiTemp: SeriesPoint;
  loRh: SeriesPoint | null;
  hiRh: SeriesPoint | null;
}

/** A fold over the chart buckets of `layout`. */
export function foldExtremes(layout: ChartBuckets): ExtremesFold {
  const slots: (Slot | undefined)[] = new Array<Slot | undefined>(layout.count);
  let counted = 0;

  const offer = (tsMs: number, tempC: number, rhPct: number | null): void => {
    const b = chartBucketOf(layout, tsMs);
    const slot = slots[b];
    if (slot === undefined) {
      const p = { tsMs, tempC, rhPct };
      slots[b] = {
        loTemp: p,
        hiTemp: p,
        loRh: rhPct === null ? null : p,
        hiRh: rhPct === null ? null : p,
      };
      return;
    }
    let p: SeriesPoint | null = null;
    const lo = slot.loTemp;
    if (tempC < lo.tempC || (tempC === lo.tempC && tsMs < lo.tsMs))
      slot.loTemp = p = { tsMs, tempC, rhPct };
    const hi = slot.hiTemp;
    if (tempC > hi.tempC || (tempC === hi.tempC && tsMs < hi.tsMs))
      slot.hiTemp = p ??= { tsMs, tempC, rhPct };
    if (rhPct === null) return;
    const lh = slot.loRh;
    if (lh === null || rhPct < lh.rhPct! || (rhPct === lh.rhPct && tsMs < lh.tsMs))
      slot.loRh = p ??= { tsMs, tempC, rhPct };
    const hh = slot.hiRh;
    if (hh === null || rhPct > hh.rhPct! || (rhPct === hh.rhPct && tsMs < hh.tsMs))
      slot.hiRh = p ??= { tsMs, tempC, rhPct };
  };

  return {
    add(tsMs, tempC, rhPct) {
      counted++;
      offer(tsMs, tempC, rhPct);
    },
    addRollup(bucketMs, spanMs, readings, e) {
      if (chartBucketOf(layout, bucketMs) !== chartBucketOf(layout, bucketMs + spanMs - 1))
        return false;
      counted += readings;
      offer(e.loTemp.tsMs, e.loTemp.tempC, e.loTemp.rhPct);
      offer(e.hiTemp.tsMs, e.hiTemp.tempC, e.hiTemp.rhPct);
      if (e.loRh) offer(e.loRh.tsMs, e.loRh.tempC, e.loRh.rhPct);
      if (e.hiRh) offer(e.hiRh.tsMs, e.hiRh.tempC, e.hiRh.rhPct);
      return true;
    },
    readings: () => counted,
    points() {
      const out: SeriesPoint[] = [];
      for (const slot of slots) {
        if (!slot) continue;
        const picks = [slot.loTemp, slot.hiTemp];
        if (slot.loRh) picks.push(slot.loRh);
        if (slot.hiRh) picks.push(slot.hiRh);
        picks.sort((a, b) => a.tsMs - b.tsMs);
        for (let i = 0; i < picks.length; i++)
          if (i === 0 || picks[i]!.tsMs !== picks[i - 1]!.tsMs) out.push(picks[i]!);
      }
      return out;
    },
  };
}
