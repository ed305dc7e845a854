import Database from "better-sqlite3";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { call, demoEmail, signIn, startPlinth, type RunningPlinth } from "./helpers/server";

// The chart window (contracts.md: GET /api/v1/sensors/{id}/readings, "thinned to at most
// max_points for charts without hiding a peak or a dip") from the readings rollup, against
// the built server: readings sent by a gateway, late ones, the demo seed, and restarts
// (a clean stop and a kill) in between.
const KEY = "demo-gateway-key-0001";
const MIN = 60_000;
const HOUR = 3_600_000;
const QUARTER = 900_000;

interface Reading {
  tsMs: number;
  tempC: number;
  rhPct: number | null;
}

let plinth: RunningPlinth;
let dir: string;
let viewer: string;

beforeAll(async () => {
  plinth = await startPlinth();
  dir = plinth.dir;
  viewer = await signIn(plinth.url, demoEmail("viewer"));
});
afterAll(async () => {
  await plinth?.stop();
});

async function restart(how: "stop" | "kill") {
  await (how === "stop" ? plinth.stop() : plinth.kill());
  plinth = await startPlinth({ dir });
  viewer = await signIn(plinth.url, demoEmail("viewer"));
}

async function post(readings: Reading[], sensor: string) {
  const res = await fetch(`${plinth.url}/api/v1/readings`, {
    method: "POST",
    headers: { authorization: `Bearer ${KEY}`, "content-type": "application/json" },
    body: JSON.stringify({
      readings: readings.map((r) => ({ sensor, ts: r.tsMs, temp_c: r.tempC, rh: r.rhPct })),
    }),
  });
  expect(res.status).toBe(200);
  return (await res.json()) as { accepted: number; duplicates: number };
}

async function chart(sensor: string, fromMs: number, toMs: number, maxPoints: number) {
  const q = `from=${fromMs}&to=${toMs}&max_points=${maxPoints}`;
  const res = await call(plinth.url, viewer, `/api/v1/sensors/${sensor}/readings?${q}`);
  expect(res.status).toBe(200);
  const body = (await res.json()) as {
    readings: { ts: string; temp_c: number; rh: number | null }[];
  };
  return body.readings.map((r) => ({ tsMs: Date.parse(r.ts), tempC: r.temp_c, rhPct: r.rh }));
}

/** Written apart from the code under test: a group's extremes by sorting, earliest on a tie. */
function extremesOf(group: readonly Reading[]): Reading[] {
  const rh = group.filter((r) => r.rhPct !== null);
  const first = (xs: Reading[], cmp: (a: Reading, b: Reading) => number) =>
    [...xs].sort((a, b) => cmp(a, b) || a.tsMs - b.tsMs)[0];
  const picks = [
    first([...group], (a, b) => a.tempC - b.tempC),
    first([...group], (a, b) => b.tempC - a.tempC),
    first(rh, (a, b) => a.rhPct! - b.rhPct!),
    first(rh, (a, b) => b.rhPct! - a.rhPct!),
  ].filter((r): r is Reading => r !== undefined);
  return [...new Map(picks.map((r) => [r.tsMs, r])).values()].sort((a, b) => a.tsMs - b.tsMs);
}

/**
 * Brute-force thinning of what is stored, written apart from the code under test: the window
 * [from, to] in `count` buckets of thinSeries's width (to + 1 − from) / count; when that is at
 * least half an hour, bucket k >= 1 starts at the quarter hour at or before from + k·width,
 * else thinSeries's equal cut (its arithmetic). Each bucket's extremes; a window with no more
 * than 4 × count readings whole.
 */
function bruteThin(stored: readonly Reading[], from: number, to: number, count: number) {
  const inWindow = stored
    .filter((r) => r.tsMs >= from && r.tsMs <= to)
    .sort((a, b) => a.tsMs - b.tsMs);
  if (inWindow.length <= 4 * count) return inWindow;
  const width = Math.max(1, (to + 1 - from) / count);
  const starts = [from];
  for (let k = 1; k < count; k++) starts.push(Math.floor((from + k * width) / 900_000) * 900_000);
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

/** The stored readings of a sensor and its rollup, read from the database file beside the server. */
function fromFile(sensor: string) {
  const db = new Database(plinth.dbPath, { readonly: true, fileMustExist: true });
  try {
    const readings = db
      .prepare<[string], [number, number, number | null]>(
        "select ts, temp_c, rh_pct from readings where sensor_id = ? order by ts",
      )
      .raw()
      .all(sensor)
      .map(([tsMs, tempC, rhPct]): Reading => ({ tsMs, tempC, rhPct }));
    const mark = db
      .prepare("select rolled_ms from readings_rollup_marks where sensor_id = ?")
      .pluck()
      .get(sensor) as number | undefined;
    const rows = db
      .prepare(
        `select bucket_ms, readings, lo_temp_ts, lo_temp_c, hi_temp_ts, hi_temp_c, lo_rh_ts,
           lo_rh_pct, hi_rh_ts, hi_rh_pct from readings_rollup where sensor_id = ? and bucket_ms < ?
         order by bucket_ms`,
      )
      .raw()
      .all(sensor, mark ?? 0);
    return { readings, mark: mark ?? null, rows };
  } finally {
    db.close();
  }
}

/** The rollup rows a correct roll-up of `readings` holds before `markMs`. */
function bruteRollup(readings: readonly Reading[], markMs: number) {
  const groups = new Map<number, Reading[]>();
  for (const r of readings)
    if (r.tsMs < markMs) {
      const b = Math.floor(r.tsMs / QUARTER) * QUARTER;
      groups.set(b, [...(groups.get(b) ?? []), r]);
    }
  return [...groups.keys()]
    .sort((a, b) => a - b)
    .map((b) => {
      const g = groups.get(b)!;
      const rh = g.filter((r) => r.rhPct !== null);
      const first = (xs: Reading[], cmp: (a: Reading, b: Reading) => number) =>
        [...xs].sort((a, c) => cmp(a, c) || a.tsMs - c.tsMs)[0];
      const lo = first(g, (a, c) => a.tempC - c.tempC)!;
      const hi = first(g, (a, c) => c.tempC - a.tempC)!;
      const loRh = first(rh, (a, c) => a.rhPct! - c.rhPct!);
      const hiRh = first(rh, (a, c) => c.rhPct! - a.rhPct!);
      return [
        b,
        g.length,
        lo.tsMs,
        lo.tempC,
        hi.tsMs,
        hi.tempC,
        loRh?.tsMs ?? null,
        loRh?.rhPct ?? null,
        hiRh?.tsMs ?? null,
        hiRh?.rhPct ?? null,
      ];
    });
}

async function until(what: string, ok: () => boolean, timeoutMs = 30_000) {
  const deadline = Date.now() + timeoutMs;
  while (!ok()) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

describe("the chart window from the readings rollup, across restarts", () => {
  it("keeps every chart bucket's extremes of a gateway's readings, late ones and restarts included", async () => {
    const sensor = "RU-SRV-01";
    const endMs = Math.floor(Date.now() / MIN) * MIN - 2 * HOUR;
    const fromMs = endMs - 48 * HOUR;
    // Two days of minutes, warming and cooling, often tied, humidity now and then missing.
    let tempC = 18;
    const sent: Reading[] = Array.from({ length: 48 * 60 }, (_, i) => {
      tempC += [0, 1, -1, 0, 0.5, -0.5, 0][(i * 7919) % 7]!;
      return { tsMs: fromMs + i * MIN, tempC, rhPct: i % 11 === 0 ? null : 88 + ((i * 31) % 9) };
    });
    expect((await post(sent, sensor)).accepted).toBe(sent.length);
    const toMs = endMs - 1;

    // 200 points: 50 chart buckets of about 57.6 minutes, each starting on a quarter hour.
    const first = await chart(sensor, fromMs, toMs, 200);
    expect(first).toEqual(bruteThin(sent, fromMs, toMs, 50));
    // The query rolled the sensor up (it was far behind), and the rollup matches the readings.
    let file = fromFile(sensor);
    expect(file.mark).not.toBeNull();
    expect(file.mark!).toBeGreaterThan(fromMs + 40 * HOUR);
    expect(file.rows).toEqual(bruteRollup(file.readings, file.mark!));

    await restart("stop");
    expect(await chart(sensor, fromMs, toMs, 200)).toEqual(first);

    // A late hot reading between two minutes, in a bucket rolled up long ago.
    const hot = { tsMs: fromMs + 20 * HOUR + 7 * MIN + 30_000, tempC: 71.5, rhPct: 41 };
    expect((await post([hot], sensor)).accepted).toBe(1);
    const withHot = await chart(sensor, fromMs, toMs, 200);
    expect(withHot).toContainEqual(hot);
    expect(withHot).toEqual(bruteThin([...sent, hot], fromMs, toMs, 50));

    // A late cold one, then the server killed before anything else can happen.
    const cold = { tsMs: fromMs + 31 * HOUR + 44 * MIN + 10_000, tempC: -12.25, rhPct: 99 };
    expect((await post([cold], sensor)).accepted).toBe(1);
    await restart("kill");
    const all = [...sent, hot, cold];
    const afterKill = await chart(sensor, fromMs, toMs, 200);
    expect(afterKill).toContainEqual(cold);
    expect(afterKill).toContainEqual(hot);
    expect(afterKill).toEqual(bruteThin(all, fromMs, toMs, 50));
    file = fromFile(sensor);
    expect(file.readings).toHaveLength(all.length);
    expect(file.rows).toEqual(bruteRollup(file.readings, file.mark!));
  });

  it("rolls the demo plant's seeded history up at start and charts it as the raw readings would", async () => {
    const sensor = "CB-07";
    await until("the demo sensor's roll-up", () => fromFile(sensor).mark !== null);
    const file = fromFile(sensor);
    expect(file.readings.length).toBeGreaterThan(1_000);
    expect(file.rows.length).toBeGreaterThan(100);
    expect(file.rows).toEqual(bruteRollup(file.readings, file.mark!));
    const fromMs = file.readings[0]!.tsMs;
    const toMs = file.readings.at(-1)!.tsMs;
    // 60 points: 15 chart buckets of over nine hours each.
    expect(await chart(sensor, fromMs, toMs, 60)).toEqual(
      bruteThin(file.readings, fromMs, toMs, 15),
    );
  });
});
