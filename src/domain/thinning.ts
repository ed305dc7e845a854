/**
 * Thinning a long window from pre-aggregated buckets, for charts, without hiding a peak or a
 * dip. The rule is thinSeries's (src/domain/thin.ts): the window is cut into time buckets
 * and each keeps the readings holding its lowest and highest temperature and its lowest and
 * highest humidity (the earliest such reading on a tie, as thinSeries keeps the first it
 * meets). So every chart bucket shows its own extremes and the window's overall peak and dip
 * are always among the picks.
 *
 * The readings rollup holds fixed 15-minute buckets of each sensor, aligned to the Unix
 * epoch, each with its own extreme readings and how many readings it has. To answer from it,
 * a window's chart buckets are put on the same grid: bucket k starts at the quarter hour at
 * or before from + k·width (width = (to + 1 − from) / count, thinSeries's width), so each
 * chart bucket is within a quarter hour of thinSeries's and is made of whole rollup buckets,
 * but for the window's own ragged edges, which are read raw (and so is what is not rolled up
 * yet). A chart bucket's extreme is then the extreme of its rollup buckets' extremes and its
 * raw readings, in any order. Chart buckets narrower than two rollup buckets keep
 * thinSeries's equal cut exactly and are read raw. The picks depend only on the readings and
 * the window, never on how far the rollup has got. Pure.
 */
import type { SeriesPoint } from "./thin";

/** The rollup's bucket: 15 minutes, in ms, aligned to the Unix epoch. */
export const ROLLUP_BUCKET_MS = 900_000;

/**
 * Chart buckets at least this wide are put on the rollup grid and read from the rollup;
 * narrower ones are cut as thinSeries cuts them and read raw.
 */
export const MIN_GRID_CHART_BUCKET_MS = 2 * ROLLUP_BUCKET_MS;

/** Start (epoch ms) of the rollup bucket holding `tsMs`. */
export function rollupBucketStart(tsMs: number): number {
  return Math.floor(tsMs / ROLLUP_BUCKET_MS) * ROLLUP_BUCKET_MS;
}

/** The first rollup bucket boundary at or after `tsMs`. */
export function rollupBucketCeil(tsMs: number): number {
  return Math.ceil(tsMs / ROLLUP_BUCKET_MS) * ROLLUP_BUCKET_MS;
}

/** How a window [fromMs, toMs] (both inclusive, epoch ms) is cut into chart buckets. */
export interface ChartBuckets {
  startMs: number;
  /** thinSeries's width, (toMs + 1 − fromMs) / count; may be fractional. */
  widthMs: number;
  count: number;
  /**
   * On the rollup grid: the start of each bucket after the first (count − 1 of them, each a
   * quarter hour at or before startMs + k·widthMs). Null: thinSeries's equal cut.
   */
  gridStartsMs: number[] | null;
}

/**
 * The chart buckets of a window: on the rollup grid when at least MIN_GRID_CHART_BUCKET_MS
 * wide, else thinSeries's equal cut, to thinSeries's arithmetic.
 */
export function chartBuckets(fromMs: number, toMs: number, count: number): ChartBuckets {
  const n = Math.max(1, Math.floor(count));
  const widthMs = Math.max(1, (toMs + 1 - fromMs) / n);
  if (widthMs < MIN_GRID_CHART_BUCKET_MS)
    return { startMs: fromMs, widthMs, count: n, gridStartsMs: null };
  const gridStartsMs = Array.from({ length: n - 1 }, (_, i) =>
    rollupBucketStart(fromMs + (i + 1) * widthMs),
  );
  return { startMs: fromMs, widthMs, count: n, gridStartsMs };
}

/** The chart bucket a reading at `tsMs` falls in (clamped to the window's buckets). */
export function chartBucketOf(layout: ChartBuckets, tsMs: number): number {
  const k = Math.min(
    layout.count - 1,
    Math.max(0, Math.floor((tsMs - layout.startMs) / layout.widthMs)),
  );
  const grid = layout.gridStartsMs;
  if (grid === null) return k;
  // A grid start lies less than a quarter hour before the equal cut's edge and buckets are at
  // least two quarter hours wide, so the bucket is k or a neighbour; the grid starts (whole
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

/** Where each part of a window is read from. */
export interface WindowPlan {
  layout: ChartBuckets;
  /** Whole rollup buckets whose start lies in this range (empty when fromMs >= toMs). */
  rollup: TimeRange;
  /** Raw readings to read besides: the window's ragged edges, and what is not rolled up yet. */
  raw: TimeRange[];
}

/**
 * Plans the reading of the window [fromMs, toMs] (inclusive) thinned to `count` chart buckets,
 * for a sensor rolled up through `rolledThroughMs` (every rollup bucket ending at or before it
 * is complete; null: none is). Whole rollup buckets inside the window and before that mark
 * come from the rollup, the rest raw; a window whose chart buckets are not on the grid is
 * read raw throughout.
 */
export function planWindow(
  fromMs: number,
  toMs: number,
  count: number,
  rolledThroughMs: number | null,
): WindowPlan {
  const layout = chartBuckets(fromMs, toMs, count);
  const endMs = toMs + 1;
  const rollupFrom = rollupBucketCeil(fromMs);
  const rollupTo =
    rolledThroughMs === null || layout.gridStartsMs === null
      ? rollupFrom
      : Math.max(rollupFrom, Math.min(rollupBucketStart(endMs), rolledThroughMs));
  if (rollupTo <= rollupFrom)
    return {
      layout,
      rollup: { fromMs: rollupFrom, toMs: rollupFrom },
      raw: [{ fromMs, toMs: endMs }],
    };
  const raw: TimeRange[] = [];
  if (fromMs < rollupFrom) raw.push({ fromMs, toMs: rollupFrom });
  if (rollupTo < endMs) raw.push({ fromMs: rollupTo, toMs: endMs });
  return { layout, rollup: { fromMs: rollupFrom, toMs: rollupTo }, raw };
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
   * A rollup bucket: counts its readings and offers its extreme readings. Returns false,
   * taking nothing, when the bucket is not wholly inside one chart bucket (off the grid): its
   * raw readings must be added instead.
   */
  addRollup(bucketMs: number, readings: number, extremes: RollupExtremes): boolean;
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
    addRollup(bucketMs, readings, e) {
      if (
        chartBucketOf(layout, bucketMs) !== chartBucketOf(layout, bucketMs + ROLLUP_BUCKET_MS - 1)
      )
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
