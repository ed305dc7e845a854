import Database from "better-sqlite3";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { call, demoEmail, signIn, startPlinth, type RunningPlinth } from "./helpers/server";
import { bruteRollupRows, bruteThin, ROLLUP_COLUMNS, type Reading } from "./helpers/thinning";
import { waitFor } from "./helpers/wait";

// The chart window (contracts.md: GET /api/v1/sensors/{id}/readings, "thinned to at most
// max_points for charts without hiding a peak or a dip") from the readings rollup, against
// the built server: readings sent by a gateway, late ones, the demo seed, and restarts
// (a clean stop and a kill) in between.
const KEY = "demo-gateway-key-0001";
const MIN = 60_000;
const HOUR = 3_600_000;

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
    const marks = db
      .prepare<[string], { rolled_ms: number; hours_rolled_ms: number | null }>(
        "select rolled_ms, hours_rolled_ms from readings_rollup_marks where sensor_id = ?",
      )
      .get(sensor);
    const rowsOf = (table: string, beforeMs: number) =>
      db
        .prepare(
          `select ${ROLLUP_COLUMNS} from ${table} where sensor_id = ? and bucket_ms < ? order by bucket_ms`,
        )
        .raw()
        .all(sensor, beforeMs);
    return {
      readings,
      mark: marks?.rolled_ms ?? null,
      hoursMark: marks?.hours_rolled_ms ?? null,
      rows: rowsOf("readings_rollup", marks?.rolled_ms ?? 0),
      hourRows: rowsOf("readings_rollup_hours", marks?.hours_rolled_ms ?? 0),
    };
  } finally {
    db.close();
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
    expect(file.rows).toEqual(bruteRollupRows(file.readings, file.mark!));

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
    expect(file.rows).toEqual(bruteRollupRows(file.readings, file.mark!));
  });

  it("rolls the demo plant's seeded history up at start and charts it as the raw readings would", async () => {
    const sensor = "CB-07";
    await waitFor("the demo sensor's roll-up, both spans", () => {
      const marks = fromFile(sensor);
      return marks.mark !== null && marks.hoursMark === Math.floor(marks.mark / HOUR) * HOUR;
    });
    const file = fromFile(sensor);
    expect(file.readings.length).toBeGreaterThan(1_000);
    expect(file.rows.length).toBeGreaterThan(100);
    expect(file.rows).toEqual(bruteRollupRows(file.readings, file.mark!));
    expect(file.hourRows.length).toBeGreaterThan(25);
    expect(file.hourRows).toEqual(bruteRollupRows(file.readings, file.hoursMark!, HOUR));
    const fromMs = file.readings[0]!.tsMs;
    const toMs = file.readings.at(-1)!.tsMs;
    // 60 points: 15 chart buckets of over nine hours each, on the hours.
    expect(await chart(sensor, fromMs, toMs, 60)).toEqual(
      bruteThin(file.readings, fromMs, toMs, 15),
    );
  });
});
