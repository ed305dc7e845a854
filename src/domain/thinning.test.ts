import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { thinSeries, type SeriesPoint } from "./thin";
import {
  type RollupExtremes,
  chartBucketOf,
  chartBuckets,
  foldExtremes,
  MIN_GRID_CHART_BUCKET_MS,
  planWindow,
  ROLLUP_BUCKET_MS,
  ROLLUP_HOUR_MS,
  rollupBucketCeil,
  rollupBucketStart,
} from "./thinning";

const MIN = 60_000;
const HOUR = 3_600_000;
const DAY = 86_400_000;

/** Brute force, written apart from the code under test: a bucket's extremes by sorting. */
function bruteExtremes(points: readonly SeriesPoint[]): SeriesPoint[] {
  const byTemp = [...points].sort((a, b) => a.tempC - b.tempC || a.tsMs - b.tsMs);
  const withRh = points.filter((p) => p.rhPct !== null);
  const byRh = [...withRh].sort((a, b) => a.rhPct! - b.rhPct! || a.tsMs - b.tsMs);
  const hiTemp = [...points].sort((a, b) => b.tempC - a.tempC || a.tsMs - b.tsMs)[0]!;
  const hiRh = [...withRh].sort((a, b) => b.rhPct! - a.rhPct! || a.tsMs - b.tsMs)[0];
  const picks = [byTemp[0]!, hiTemp, ...(byRh[0] ? [byRh[0]] : []), ...(hiRh ? [hiRh] : [])];
  return [...new Map(picks.map((p) => [p.tsMs, p])).values()];
}

/**
 * The chart buckets' rule, written apart from the code under test: thinSeries's width; when
 * that is at least two hours, bucket k (k >= 1) starts at the hour at or before from + k·width;
 * when at least half an hour, at the quarter hour at or before it; else thinSeries's equal
 * cut. Returns the bucket of each time.
 */
function bruteBucketOf(from: number, to: number, count: number): (tsMs: number) => number {
  const width = Math.max(1, (to + 1 - from) / count);
  if (width < 30 * MIN)
    return (t) => Math.min(count - 1, Math.max(0, Math.floor((t - from) / width)));
  const step = width >= 2 * HOUR ? HOUR : 15 * MIN;
  const starts = [from];
  for (let k = 1; k < count; k++) starts.push(Math.floor((from + k * width) / step) * step);
  return (t) => {
    let k = 0;
    while (k + 1 < count && starts[k + 1]! <= t) k++;
    return k;
  };
}

/** Brute-force thinning of the readings in [from, to] into `count` buckets by the rule above. */
function bruteThin(points: readonly SeriesPoint[], from: number, to: number, count: number) {
  const bucketOf = bruteBucketOf(from, to, count);
  const byBucket = new Map<number, SeriesPoint[]>();
  for (const p of points) {
    if (p.tsMs < from || p.tsMs > to) continue;
    const k = bucketOf(p.tsMs);
    const bucket = byBucket.get(k);
    if (bucket) bucket.push(p);
    else byBucket.set(k, [p]);
  }
  return [...byBucket.keys()]
    .sort((x, y) => x - y)
    .flatMap((k) => bruteExtremes(byBucket.get(k)!).sort((x, y) => x.tsMs - y.tsMs));
}

/** What a correct roll-up holds for these readings: one bucket per span (a quarter hour or an hour) with readings. */
function bruteRollup(points: readonly SeriesPoint[], spanMs = ROLLUP_BUCKET_MS) {
  const groups = new Map<number, SeriesPoint[]>();
  for (const p of points) {
    const b = Math.floor(p.tsMs / spanMs) * spanMs;
    const group = groups.get(b);
    if (group) group.push(p);
    else groups.set(b, [p]);
  }
  return [...groups].map(([bucketMs, ps]) => {
    const rh = ps.filter((p) => p.rhPct !== null);
    const first = (xs: SeriesPoint[], cmp: (a: SeriesPoint, b: SeriesPoint) => number) =>
      [...xs].sort((a, b) => cmp(a, b) || a.tsMs - b.tsMs)[0];
    const extremes: RollupExtremes = {
      loTemp: first(ps, (a, b) => a.tempC - b.tempC)!,
      hiTemp: first(ps, (a, b) => b.tempC - a.tempC)!,
      loRh: first(rh, (a, b) => a.rhPct! - b.rhPct!) ?? null,
      hiRh: first(rh, (a, b) => b.rhPct! - a.rhPct!) ?? null,
    };
    return { bucketMs, readings: ps.length, points: ps, extremes };
  });
}

/**
 * A stretch of readings at a steady pace (7 s, a minute or 5 minutes) with gaps, from some
 * time in [0, spanMs). Temperatures and humidities wander (neighbours alike, as in a cure
 * record, so a chart bucket's extreme often sits next to its edge) and often tie; now and
 * then a reading jumps anywhere in the contract's range.
 */
const readingsArb = (spanMs: number, maxLength: number) =>
  fc
    .tuple(
      fc.integer({ min: 0, max: spanMs }),
      fc.constantFrom(7_000, 60_000, 300_000),
      fc.array(
        fc.record({
          gapSteps: fc.oneof(fc.constant(1), fc.constant(1), fc.integer({ min: 1, max: 200 })),
          tempStepC: fc.integer({ min: -2, max: 2 }),
          jumpC: fc.option(fc.double({ min: -40, max: 120, noNaN: true }), { freq: 20 }),
          rhStepPct: fc.option(fc.integer({ min: -3, max: 3 }), { freq: 4 }),
        }),
        { minLength: 1, maxLength, size: "large" },
      ),
    )
    .map(([startMs, stepMs, rows]) => {
      let tsMs = startMs;
      let tempC = 20;
      let rhPct = 95;
      const out: SeriesPoint[] = [];
      for (const r of rows) {
        tsMs += r.gapSteps * stepMs;
        if (tsMs > spanMs) break;
        tempC = Math.min(120, Math.max(-40, tempC + r.tempStepC));
        if (r.rhStepPct !== null) rhPct = Math.min(100, Math.max(0, rhPct + r.rhStepPct));
        out.push({
          tsMs,
          tempC: r.jumpC ?? tempC,
          rhPct: r.rhStepPct === null ? null : rhPct,
        });
      }
      return out.length > 0 ? out : [{ tsMs: startMs, tempC, rhPct: null }];
    });

describe("cutting a window into chart buckets", () => {
  it("cuts narrow buckets as thinSeries does: equal widths from the window's start", () => {
    const layout = chartBuckets(0, 9_999, 10); // the window [0, 9999] ms: ten of 1,000 ms
    expect(layout.widthMs).toBe(1_000);
    expect(layout.gridStartsMs).toBeNull();
    expect([0, 999, 1_000, 5_500, 9_999, 12_000, -5].map((t) => chartBucketOf(layout, t))).toEqual([
      0, 0, 1, 5, 9, 9, 0,
    ]);
    // A width that is not a whole number of ms stays fractional, as in thinSeries.
    expect(chartBuckets(0, 9_999, 3).widthMs).toBeCloseTo(3_333.333, 3);
  });

  it.each([
    ["a week", Date.UTC(2026, 0, 8, 0, 7), ROLLUP_BUCKET_MS], // 40.3 minutes wide
    ["a month", Date.UTC(2026, 0, 31, 0, 7), ROLLUP_HOUR_MS], // 172.8 minutes wide
  ])(
    "puts the buckets of %s on the grid they are wide enough for, within one step of the equal cut",
    (_, to, step) => {
      const from = Date.UTC(2026, 0, 1, 0, 5, 17);
      const layout = chartBuckets(from, to, 250);
      expect(layout.gridMs).toBe(step);
      const starts = layout.gridStartsMs!;
      expect(starts).toHaveLength(249);
      starts.forEach((start, i) => {
        const equalEdge = from + (i + 1) * layout.widthMs;
        expect(start % step).toBe(0);
        expect(start).toBeLessThanOrEqual(equalEdge);
        expect(start).toBeGreaterThan(equalEdge - step);
        expect(chartBucketOf(layout, start)).toBe(i + 1);
        expect(chartBucketOf(layout, start - 1)).toBe(i);
      });
      expect(chartBucketOf(layout, from)).toBe(0);
      expect(chartBucketOf(layout, to)).toBe(249);
    },
  );

  it("changes grid at half an hour and at two hours wide", () => {
    expect(chartBuckets(0, 100 * MIN_GRID_CHART_BUCKET_MS - 2, 100).gridStartsMs).toBeNull();
    expect(chartBuckets(0, 100 * MIN_GRID_CHART_BUCKET_MS - 1, 100).gridMs).toBe(ROLLUP_BUCKET_MS);
    expect(chartBuckets(0, 100 * 2 * HOUR - 2, 100).gridMs).toBe(ROLLUP_BUCKET_MS);
    expect(chartBuckets(0, 100 * 2 * HOUR - 1, 100).gridMs).toBe(ROLLUP_HOUR_MS);
  });

  it("aligns rollup buckets to the quarter hour", () => {
    expect(rollupBucketStart(Date.UTC(2026, 2, 2, 4, 14, 59, 999))).toBe(
      Date.UTC(2026, 2, 2, 4, 0),
    );
    expect(rollupBucketStart(Date.UTC(2026, 2, 2, 4, 15))).toBe(Date.UTC(2026, 2, 2, 4, 15));
    expect(rollupBucketCeil(Date.UTC(2026, 2, 2, 4, 0, 0, 1))).toBe(Date.UTC(2026, 2, 2, 4, 15));
    expect(rollupBucketStart(-1)).toBe(-ROLLUP_BUCKET_MS);
  });
});

describe("planning where a window is read from", () => {
  const from = Date.UTC(2026, 0, 1, 0, 5);
  const to = Date.UTC(2026, 0, 31, 0, 7);

  const Q = ROLLUP_BUCKET_MS;
  const H = ROLLUP_HOUR_MS;

  it("reads everything raw before anything is rolled up", () => {
    const plan = planWindow(from, to, 250, null);
    expect(plan.raw).toEqual([{ fromMs: from, toMs: to + 1 }]);
    expect(plan.rollup).toEqual([]);
  });

  it("reads whole quarter hours from the rollup and the ragged edges raw", () => {
    const plan = planWindow(from, to, 250, Date.UTC(2027, 0, 1));
    expect(plan.rollup).toEqual([
      { spanMs: Q, fromMs: Date.UTC(2026, 0, 1, 0, 15), toMs: Date.UTC(2026, 0, 31, 0, 0) },
    ]);
    expect(plan.raw).toEqual([
      { fromMs: from, toMs: Date.UTC(2026, 0, 1, 0, 15) },
      { fromMs: Date.UTC(2026, 0, 31, 0, 0), toMs: to + 1 },
    ]);
  });

  it("reads whole hours from the hourly rollup, quarter hours up to them and past its mark", () => {
    const plan = planWindow(from, to, 250, Date.UTC(2027, 0, 1), Date.UTC(2026, 0, 30, 22));
    expect(plan.rollup).toEqual([
      { spanMs: Q, fromMs: Date.UTC(2026, 0, 1, 0, 15), toMs: Date.UTC(2026, 0, 1, 1) },
      { spanMs: H, fromMs: Date.UTC(2026, 0, 1, 1), toMs: Date.UTC(2026, 0, 30, 22) },
      { spanMs: Q, fromMs: Date.UTC(2026, 0, 30, 22), toMs: Date.UTC(2026, 0, 31, 0, 0) },
    ]);
    // A week's chart buckets lie on the quarter hours: the hours are not used.
    const week = planWindow(from, from + 7 * DAY, 250, Date.UTC(2027, 0, 1), Date.UTC(2027, 0, 1));
    expect(week.rollup.map((r) => r.spanMs)).toEqual([Q]);
  });

  it("reads what is not rolled up yet raw", () => {
    const mark = Date.UTC(2026, 0, 20, 6, 45);
    const plan = planWindow(from, to, 250, mark, Date.UTC(2026, 0, 25));
    expect(plan.rollup.at(-1)).toEqual({ spanMs: Q, fromMs: Date.UTC(2026, 0, 20, 6), toMs: mark });
    expect(plan.raw.at(-1)).toEqual({ fromMs: mark, toMs: to + 1 });
  });

  it("reads chart buckets narrower than half an hour raw", () => {
    const plan = planWindow(from, from + 100 * MIN_GRID_CHART_BUCKET_MS - 2, 100, to);
    expect(plan.layout.gridStartsMs).toBeNull();
    expect(plan.raw).toHaveLength(1);
  });
});

describe("folding extremes from rollup buckets and raw readings", () => {
  const Q = ROLLUP_BUCKET_MS;

  it("keeps a one-minute spike inside a rolled-up bucket", () => {
    const points = Array.from({ length: 24 * 60 }, (_, i) => ({
      tsMs: i * MIN,
      tempC: i === 700 ? 48 : i === 901 ? 3 : 20,
      rhPct: 95,
    }));
    const layout = chartBuckets(0, 24 * HOUR - 1, 6);
    const fold = foldExtremes(layout);
    for (const b of bruteRollup(points))
      expect(fold.addRollup(b.bucketMs, Q, b.readings, b.extremes)).toBe(true);
    const out = fold.points();
    expect(fold.readings()).toBe(points.length);
    expect(out.find((p) => p.tempC === 48)?.tsMs).toBe(700 * MIN);
    expect(out.find((p) => p.tempC === 3)?.tsMs).toBe(901 * MIN);
    // Flat stretches tie: the earliest reading of each chart bucket stands for them.
    expect(out.filter((p) => p.tempC === 20).map((p) => p.tsMs)).toEqual(
      [0, 4, 8, 12, 16, 20].map((h) => h * HOUR),
    );
  });

  it("keeps a chart bucket's extreme at its very edge, on the quarter hour", () => {
    // Warming all day: each chart bucket's coldest reading is its first and its warmest its
    // last, both at a quarter hour's edge.
    const points = Array.from({ length: 24 * 60 }, (_, i) => ({
      tsMs: i * MIN,
      tempC: 10 + i / 60,
      rhPct: null,
    }));
    const layout = chartBuckets(0, 24 * HOUR - 1, 7); // 3 h 25 min 42.857 s wide
    const fold = foldExtremes(layout);
    for (const b of bruteRollup(points))
      expect(fold.addRollup(b.bucketMs, Q, b.readings, b.extremes)).toBe(true);
    const out = fold.points();
    expect(out).toEqual(bruteThin(points, 0, 24 * HOUR - 1, 7));
    for (const start of layout.gridStartsMs!) {
      expect(out).toContainEqual(points[start / MIN]);
      expect(out).toContainEqual(points[start / MIN - 1]);
    }
  });

  it("takes a rollup bucket off the grid only as raw readings", () => {
    const points = Array.from({ length: 60 }, (_, i) => ({ tsMs: i * MIN, tempC: i, rhPct: null }));
    const layout = chartBuckets(0, HOUR - 1, 3); // 20 minutes: thinSeries's equal cut
    const fold = foldExtremes(layout);
    const [first, second] = bruteRollup(points); // [0, 15 min) and [15, 30 min)
    expect(fold.addRollup(first!.bucketMs, Q, first!.readings, first!.extremes)).toBe(true);
    expect(fold.addRollup(second!.bucketMs, Q, second!.readings, second!.extremes)).toBe(false);
    expect(fold.readings()).toBe(15);
  });

  it("picks the same readings as thinSeries from raw readings alone when buckets are narrow", () => {
    fc.assert(
      fc.property(
        readingsArb(2 * DAY, 600),
        fc.integer({ min: 97, max: 400 }),
        fc.integer({ min: 0, max: 1000 }),
        (points, count, seed) => {
          const from = 0;
          const to = 2 * DAY;
          const fold = foldExtremes(chartBuckets(from, to, count));
          const shuffled = [...points].sort(
            (a, b) => ((a.tsMs * 7919 + seed) % 1009) - ((b.tsMs * 7919 + seed) % 1009),
          );
          for (const p of shuffled) fold.add(p.tsMs, p.tempC, p.rhPct);
          expect(fold.readings()).toBe(points.length);
          if (points.length > 4 * count)
            expect(fold.points()).toEqual(thinSeries(points, 4 * count, from, to));
        },
      ),
      { numRuns: 150 },
    );
  });

  it("picks exactly what a brute force over the raw window picks, from hourly and quarter-hour buckets, raw edges and the raw tail", () => {
    fc.assert(
      fc.property(
        readingsArb(3 * DAY, 900),
        fc.integer({ min: 0, max: 3 * DAY }),
        fc.integer({ min: 0, max: 3 * DAY }),
        fc.integer({ min: 1, max: 120 }),
        fc.option(fc.integer({ min: 0, max: 3 * DAY })),
        fc.option(fc.integer({ min: 0, max: 3 * DAY })),
        fc.integer({ min: 0, max: 1000 }),
        (points, a, b, count, markAt, hourMarkAt, seed) => {
          const from = Math.min(a, b);
          const to = Math.max(a, b);
          const mark = markAt === null ? null : rollupBucketStart(markAt);
          // The hours are rolled up from complete quarter hours only: never past that mark.
          const hourMark =
            mark === null || hourMarkAt === null
              ? null
              : Math.floor(Math.min(hourMarkAt, mark) / HOUR) * HOUR;
          const plan = planWindow(from, to, count, mark, hourMark);
          const fold = foldExtremes(plan.layout);
          const parts: (() => void)[] = [];
          for (const range of plan.raw)
            for (const p of points)
              if (p.tsMs >= range.fromMs && p.tsMs < range.toMs)
                parts.push(() => fold.add(p.tsMs, p.tempC, p.rhPct));
          for (const range of plan.rollup)
            for (const r of bruteRollup(points, range.spanMs))
              if (r.bucketMs >= range.fromMs && r.bucketMs < range.toMs)
                parts.push(() =>
                  expect(fold.addRollup(r.bucketMs, range.spanMs, r.readings, r.extremes)).toBe(
                    true,
                  ),
                );
          // In any order.
          const order = parts
            .map((_, i) => i)
            .sort((x, y) => ((x * 7919 + seed) % 1009) - ((y * 7919 + seed) % 1009));
          for (const i of order) parts[i]!();

          const inWindow = points.filter((p) => p.tsMs >= from && p.tsMs <= to);
          expect(fold.readings()).toBe(inWindow.length);
          expect(fold.points()).toEqual(bruteThin(points, from, to, count));
        },
      ),
      { numRuns: 300 },
    );
  });
});
