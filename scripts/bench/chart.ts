/**
 * Benchmark 3: the chart query. A month of one-minute readings for one sensor (43,200 rows)
 * thinned to at most 1,000 points by GET /api/v1/sensors/{id}/readings?from&to&max_points,
 * against a Plinth started on the big database (chart-db.ts) with a manager's session.
 * Timed from the request to the last byte of the answer, one query at a time, over random
 * sensors after a few untimed warm-up queries. The limit: the same plan run bare, Plinth
 * stopped: the query function the route calls (thinnedWindow: the readings rollup plus the
 * raw edges) straight on better-sqlite3 in this process, with no HTTP, session or JSON, over
 * the same sensors. Also reported: the raw scan of the whole window (every reading across
 * into JavaScript), which is what a chart of the raw readings would have to pay.
 */
import Database from "better-sqlite3";
import path from "node:path";
import { performance } from "node:perf_hooks";
import { closeDatabase, openDatabase } from "@/lib/server/db/client";
import { thinnedWindow } from "@/lib/server/db/queries/sensors";
import { call } from "../../tests/helpers/server";
import { buildChartDb, chartDbReady, chartDbSpec, migrateChartDb, type ChartDb } from "./chart-db";
import { WINDOW_SQL } from "./db";
import type { Sizes } from "./options";
import { root, signInManager, startPlinth, waitSettled } from "./plinth";
import { ownCpuSeconds } from "./proc";
import { say } from "./progress";
import { formatFigure, type BenchResult } from "./result";
import { median, percentile, randomSource, round, worst } from "./stats";

const FULL_SENSORS = 200;
const QUICK_SENSORS = 20;
const MAX_POINTS = 1_000;
const TARGET_MS = 50;

/** The full database; in a quick run, the full one when it is already built, else a 20-sensor one. */
function chooseDb(quick: boolean): ChartDb {
  const full = chartDbSpec(FULL_SENSORS);
  if (!quick || chartDbReady(full)) return full;
  say(
    `quick run: the ${FULL_SENSORS}-sensor database is not built yet, so using a ${QUICK_SENSORS}-sensor one (same rows per sensor)`,
  );
  return chartDbSpec(QUICK_SENSORS);
}

async function ensureDb(spec: ChartDb): Promise<void> {
  if (!chartDbReady(spec)) return buildChartDb(spec);
  say(`reusing ${path.relative(root, spec.file)} (${spec.rows.toLocaleString("en-US")} rows)`);
  await migrateChartDb(spec);
}

function pickSensors(spec: ChartDb, count: number): string[] {
  const random = randomSource(3);
  return Array.from(
    { length: count },
    () => spec.sensors[Math.floor(random() * spec.sensors.length)]!,
  );
}

interface QueryRun {
  ms: number[];
  points: number[];
  /** CPU time of the answering process per timed query (Plinth's server, or the bench). */
  cpuMsPerQuery: number;
}

/** Asks Plinth for each sensor's window in turn; times each to the answer's last byte. */
async function httpQueries(
  spec: ChartDb,
  sensors: readonly string[],
  warmup: number,
): Promise<QueryRun & { peakRssMib: number; rssAtStartMib: number }> {
  const plinth = await startPlinth(spec.file);
  const settledMs = await waitSettled(plinth);
  say(
    `  Plinth settled ${(settledMs / 1000).toFixed(1)} s after answering (its first roll-up pass)`,
  );
  const run: QueryRun = { ms: [], points: [], cpuMsPerQuery: Number.NaN };
  let peakRssMib = Number.NaN;
  try {
    const cookie = await signInManager(plinth, spec.manager);
    const query = `from=${new Date(spec.fromMs).toISOString()}&to=${new Date(spec.toMs).toISOString()}&max_points=${MAX_POINTS}`;
    let cpu0 = Number.NaN;
    for (const [i, sensor] of sensors.entries()) {
      if (i === warmup) cpu0 = plinth.cpuSeconds();
      const t0 = performance.now();
      const res = await call(
        plinth.url,
        cookie,
        `/api/v1/sensors/${encodeURIComponent(sensor)}/readings?${query}`,
      );
      const text = await res.text();
      const ms = performance.now() - t0;
      if (res.status !== 200)
        throw new Error(`GET readings of ${sensor} answered ${res.status}: ${text.slice(0, 500)}`);
      const points = (JSON.parse(text) as { readings: unknown[] }).readings.length;
      if (points === 0 || points > MAX_POINTS)
        throw new Error(`GET readings of ${sensor} gave ${points} points`);
      if (i < warmup) continue;
      run.ms.push(ms);
      run.points.push(points);
    }
    run.cpuMsPerQuery = ((plinth.cpuSeconds() - cpu0) * 1000) / run.ms.length;
    peakRssMib = plinth.peakRssMib();
  } finally {
    await plinth.stop();
  }
  return { ...run, peakRssMib, rssAtStartMib: plinth.rssAtStartMib };
}

/** Times `read` over the sensors after the warm-up ones, with this process's CPU per query. */
function timeReads(
  sensors: readonly string[],
  warmup: number,
  read: (sensor: string) => number,
): QueryRun {
  const run: QueryRun = { ms: [], points: [], cpuMsPerQuery: Number.NaN };
  let cpu0 = Number.NaN;
  for (const [i, sensor] of sensors.entries()) {
    if (i === warmup) cpu0 = ownCpuSeconds();
    const t0 = performance.now();
    const points = read(sensor);
    const ms = performance.now() - t0;
    if (i < warmup) continue;
    run.ms.push(ms);
    run.points.push(points);
  }
  run.cpuMsPerQuery = ((ownCpuSeconds() - cpu0) * 1000) / run.ms.length;
  return run;
}

/**
 * The same plan bare: the route's query function (thinnedWindow) on Plinth's own handle to
 * the file (its pragmas and prepared statements), put where the process's handle lives for
 * the run and closed after.
 */
function barePlanQueries(spec: ChartDb, sensors: readonly string[], warmup: number): QueryRun {
  const key = Symbol.for("plinth.db");
  const holder = globalThis as Record<symbol, unknown>;
  const previous = holder[key];
  holder[key] = openDatabase(spec.file);
  try {
    const buckets = Math.floor(MAX_POINTS / 4);
    return timeReads(
      sensors,
      warmup,
      (sensor) => thinnedWindow(sensor, spec.fromMs, spec.toMs, buckets).length,
    );
  } finally {
    closeDatabase();
    if (previous !== undefined) holder[key] = previous;
  }
}

/** The whole window read raw with Plinth's window SQL straight from better-sqlite3. */
function rawScanQueries(spec: ChartDb, sensors: readonly string[], warmup: number): QueryRun {
  // Read-write only so that closing removes the -wal and -shm files; nothing is written.
  const sqlite = new Database(spec.file, { fileMustExist: true });
  try {
    const stmt = sqlite.prepare(WINDOW_SQL).raw();
    return timeReads(sensors, warmup, (sensor) => stmt.all(sensor, spec.fromMs, spec.toMs).length);
  } finally {
    sqlite.close();
  }
}

export async function benchChart(sizes: Sizes, quick: boolean): Promise<BenchResult[]> {
  const spec = chooseDb(quick);
  await ensureDb(spec);
  const sensors = pickSensors(spec, sizes.chartWarmupQueries + sizes.chartQueries);

  say(
    `Plinth on that database: ${sizes.chartQueries} chart queries (+${sizes.chartWarmupQueries} warm-up), ${spec.days} days, max_points=${MAX_POINTS}`,
  );
  const http = await httpQueries(spec, sensors, sizes.chartWarmupQueries);
  say(
    `  median ${median(http.ms).toFixed(1)} ms, worst ${worst(http.ms).toFixed(1)} ms; Plinth's CPU ${http.cpuMsPerQuery.toFixed(1)} ms a query`,
  );

  say("the same plan bare: the route's query function on better-sqlite3, no HTTP");
  const bare = barePlanQueries(spec, sensors, sizes.chartWarmupQueries);
  say(
    `  median ${median(bare.ms).toFixed(1)} ms, worst ${worst(bare.ms).toFixed(1)} ms, ${median(bare.points).toLocaleString("en-US")} points a window; CPU ${bare.cpuMsPerQuery.toFixed(1)} ms a query`,
  );
  say("raw scan: every reading of the same windows read from better-sqlite3");
  const raw = rawScanQueries(spec, sensors, sizes.chartWarmupQueries);
  say(
    `  median ${median(raw.ms).toFixed(1)} ms, worst ${worst(raw.ms).toFixed(1)} ms, ${median(raw.points).toLocaleString("en-US")} rows a window; CPU ${raw.cpuMsPerQuery.toFixed(1)} ms a query`,
  );

  const details = {
    database: path.relative(root, spec.file),
    database_rows: spec.rows,
    sensors_in_database: spec.sensors.length,
    queries: sizes.chartQueries,
    warmup_queries: sizes.chartWarmupQueries,
    rows_per_window: median(raw.points),
    points_answered_median: median(http.points),
    http_ms: {
      median: round(median(http.ms)),
      p90: round(percentile(http.ms, 90)),
      worst: round(worst(http.ms)),
    },
    bare_plan_ms: {
      median: round(median(bare.ms)),
      p90: round(percentile(bare.ms, 90)),
      worst: round(worst(bare.ms)),
    },
    raw_scan_ms: {
      median: round(median(raw.ms)),
      p90: round(percentile(raw.ms, 90)),
      worst: round(worst(raw.ms)),
    },
    cpu_ms_per_query: {
      plinth_server: round(http.cpuMsPerQuery, 1),
      bare_plan: round(bare.cpuMsPerQuery, 1),
      raw_scan: round(raw.cpuMsPerQuery, 1),
      note: "CPU time is disturbed less than wall-clock time by other work on the machine",
    },
    plinth_rss_at_start_mib: round(http.rssAtStartMib, 1),
    plinth_peak_rss_mib: round(http.peakRssMib, 1),
  };
  const title = `chart query, ${spec.days} d of minutes -> ${MAX_POINTS} points (${spec.sensors.length} sensors)`;
  const row = (which: "median" | "worst", figure: number, limit: number): BenchResult => ({
    name: `chart-query-${which}`,
    title: `${title}, ${which}`,
    figure,
    unit: "ms",
    limit,
    limitLabel: `same plan bare, ${which}; raw scan ${formatFigure(which === "median" ? median(raw.ms) : worst(raw.ms), "ms")}`,
    ratio: figure / limit,
    target: `< ${TARGET_MS} ms`,
    pass: figure < TARGET_MS,
    details,
  });
  return [
    row("median", median(http.ms), median(bare.ms)),
    row("worst", worst(http.ms), worst(bare.ms)),
  ];
}
