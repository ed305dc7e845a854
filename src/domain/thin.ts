/**
 * Thinning a series for a chart without hiding a peak or a dip: the window is cut into
 * equal time buckets and each bucket keeps the readings holding its lowest and highest
 * temperature and its lowest and highest humidity (so at most four per bucket), in time order.
 * A series already short enough is returned whole. Pure.
 */
export interface SeriesPoint {
  tsMs: number;
  tempC: number;
  rhPct: number | null;
}

export function thinSeries(
  points: readonly SeriesPoint[],
  maxPoints: number,
  fromMs?: number,
  toMs?: number,
): SeriesPoint[] {
  if (points.length <= maxPoints) return points.slice();
  if (maxPoints < 4) {
    // Too few for a bucket's four extremes: keep the coldest and the warmest.
    let lo = points[0]!;
    let hi = points[0]!;
    for (const p of points) {
      if (p.tempC < lo.tempC) lo = p;
      if (p.tempC > hi.tempC) hi = p;
    }
    const keep = lo === hi ? [lo] : [lo, hi].sort((a, b) => a.tsMs - b.tsMs);
    return keep.slice(0, Math.max(1, maxPoints));
  }
  const start = fromMs ?? points[0]!.tsMs;
  const end = (toMs ?? points[points.length - 1]!.tsMs) + 1;
  const buckets = Math.floor(maxPoints / 4);
  const width = Math.max(1, (end - start) / buckets);
  const out: SeriesPoint[] = [];
  let current = -1;
  let picks: SeriesPoint[] = [];
  const flush = () => {
    const unique = [...new Set(picks)].sort((a, b) => a.tsMs - b.tsMs);
    for (const p of unique) out.push(p);
  };
  let tLo!: SeriesPoint,
    tHi!: SeriesPoint,
    hLo: SeriesPoint | null = null,
    hHi: SeriesPoint | null = null;
  for (const p of points) {
    const b = Math.min(buckets - 1, Math.max(0, Math.floor((p.tsMs - start) / width)));
    if (b !== current) {
      if (current !== -1) {
        picks = [tLo, tHi, ...(hLo ? [hLo] : []), ...(hHi ? [hHi] : [])];
        flush();
      }
      current = b;
      tLo = tHi = p;
      hLo = hHi = p.rhPct === null ? null : p;
      continue;
    }
    if (p.tempC < tLo.tempC) tLo = p;
    if (p.tempC > tHi.tempC) tHi = p;
    if (p.rhPct !== null) {
      if (!hLo || p.rhPct < hLo.rhPct!) hLo = p;
      if (!hHi || p.rhPct > hHi.rhPct!) hHi = p;
    }
  }
  if (current !== -1) {
    picks = [tLo, tHi, ...(hLo ? [hLo] : []), ...(hHi ? [hHi] : [])];
    flush();
  }
  return out;
}
