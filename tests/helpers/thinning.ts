/**
 * Brute-force references for the chart thinning and the readings rollup, written apart from
 * the code under test (src/domain/thinning.ts, src/lib/server/db/queries/rollup.ts): plain
 * sorting and grouping over the stored readings, used by the rollup tests on SQLite and on the
 * built server.
 */

export interface Reading {
  tsMs: number;
  tempC: number;
  rhPct: number | null;
}

const QUARTER = 900_000;
const HOUR = 3_600_000;

/** A group's extremes by sorting, earliest on a tie, in time order, each reading once. */
export function extremesOf(group: readonly Reading[]): Reading[] {
  const withRh = group.filter((r) => r.rhPct !== null);
  const first = <T>(xs: T[], cmp: (a: T, b: T) => number) => [...xs].sort(cmp)[0];
  const picks = [
    first([...group], (a, b) => a.tempC - b.tempC || a.tsMs - b.tsMs),
    first([...group], (a, b) => b.tempC - a.tempC || a.tsMs - b.tsMs),
    first(withRh, (a, b) => a.rhPct! - b.rhPct! || a.tsMs - b.tsMs),
    first(withRh, (a, b) => b.rhPct! - a.rhPct! || a.tsMs - b.tsMs),
  ].filter((r): r is Reading => r !== undefined);
  return [...new Map(picks.map((r) => [r.tsMs, r])).values()].sort((a, b) => a.tsMs - b.tsMs);
}

/**
 * Brute-force thinning of what is stored: the window [from, to] in `count` buckets of
 * thinSeries's width (to + 1 − from) / count; when that is at least two hours, bucket k >= 1
 * starts at the hour at or before from + k·width; when at least half an hour, at the quarter
 * hour at or before it; else thinSeries's equal cut (its arithmetic). Each bucket's extremes;
 * a window with no more than 4 × count readings whole.
 */
export function bruteThin(stored: readonly Reading[], from: number, to: number, count: number) {
  const inWindow = stored
    .filter((r) => r.tsMs >= from && r.tsMs <= to)
    .sort((a, b) => a.tsMs - b.tsMs);
  if (inWindow.length <= 4 * count) return inWindow;
  const width = Math.max(1, (to + 1 - from) / count);
  const step = width >= 2 * HOUR ? HOUR : QUARTER;
  const starts = [from];
  for (let k = 1; k < count; k++) starts.push(Math.floor((from + k * width) / step) * step);
  const bucketOf = (t: number) => {
    if (width < 30 * 60_000) return Math.min(count - 1, Math.floor((t - from) / width));
    let k = 0;
    while (k + 1 < count && starts[k + 1]! <= t) k++;
    return k;
  };
  const buckets = new Map<number, Reading[]>();
  for (const r of inWindow) {
    const k = bucketOf(r.tsMs);
    buckets.set(k, [...(buckets.get(k) ?? []), r]);
  }
  return [...buckets.keys()].sort((a, b) => a - b).flatMap((k) => extremesOf(buckets.get(k)!));
}

/** The columns of a rollup table (either span), in the tables' order. */
export const ROLLUP_COLUMNS = `bucket_ms, readings, lo_temp_ts, lo_temp_c, lo_temp_rh_pct,
  hi_temp_ts, hi_temp_c, hi_temp_rh_pct, lo_rh_ts, lo_rh_temp_c, lo_rh_pct,
  hi_rh_ts, hi_rh_temp_c, hi_rh_pct`;

/**
 * The rows a correct roll-up of `stored` holds before `markMs` in buckets of `spanMs` (a
 * quarter hour, or an hour), as ROLLUP_COLUMNS, in time order.
 */
export function bruteRollupRows(stored: readonly Reading[], markMs: number, spanMs = QUARTER) {
  const groups = new Map<number, Reading[]>();
  for (const r of stored) {
    if (r.tsMs >= markMs) continue;
    const b = Math.floor(r.tsMs / spanMs) * spanMs;
    groups.set(b, [...(groups.get(b) ?? []), r]);
  }
  return [...groups.keys()]
    .sort((a, b) => a - b)
    .map((b) => {
      const g = groups.get(b)!;
      const by = (cmp: (x: Reading, y: Reading) => number) => [...g].sort(cmp)[0]!;
      const lo = by((x, y) => x.tempC - y.tempC || x.tsMs - y.tsMs);
      const hi = by((x, y) => y.tempC - x.tempC || x.tsMs - y.tsMs);
      const rh = g.filter((r) => r.rhPct !== null);
      const loRh = [...rh].sort((x, y) => x.rhPct! - y.rhPct! || x.tsMs - y.tsMs)[0];
      const hiRh = [...rh].sort((x, y) => y.rhPct! - x.rhPct! || x.tsMs - y.tsMs)[0];
      return [
        b,
        g.length,
        lo.tsMs,
        lo.tempC,
        lo.rhPct,
        hi.tsMs,
        hi.tempC,
        hi.rhPct,
        loRh?.tsMs ?? null,
        loRh?.tempC ?? null,
        loRh?.rhPct ?? null,
        hiRh?.tsMs ?? null,
        hiRh?.tempC ?? null,
        hiRh?.rhPct ?? null,
      ];
    });
}
