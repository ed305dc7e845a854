/**
 * Benchmark 1: HTTP batch ingest against a bare insert.
 *
 * The same readings go (a) as JSON batches to POST /api/v1/readings with a gateway key, over
 * a few keep-alive connections at once, and (b) straight into a fresh migrated database file
 * with better-sqlite3: one transaction per batch, one prepared statement, the same SQL Plinth
 * uses. Both start with a few untimed warm-up batches, each on a fresh database. The two run
 * alternately for a few rounds and each keeps its best round, so a burst of other work on the
 * machine weighs on neither alone. Target: HTTP at least half the bare rate.
 */
import type Database from "better-sqlite3";
import path from "node:path";
import { performance } from "node:perf_hooks";
import { removeFolder, tempFolder } from "./cleanup";
import {
  countReadings,
  freshPlinthDb,
  INSERT_READING_SQL,
  insertSensors,
  openMigrated,
} from "./db";
import type { Sizes } from "./options";
import { createGateway, signInManager, startPlinth, type Gateway } from "./plinth";
import { ownCpuSeconds } from "./proc";
import { progressReporter, say } from "./progress";
import type { BenchResult } from "./result";
import { randomSource, round } from "./stats";

const SENSORS = 200;
const PREFIX = "IN-";
const MINUTE_MS = 60_000;
const TARGET_RATIO = 0.5;

interface WireReading {
  sensor: string;
  ts: string;
  temp_c: number;
  rh: number;
}

/** One side's timed part in one round. */
interface Run {
  seconds: number;
  /** CPU seconds of the process doing the storing (the bench itself, or Plinth's server). */
  cpuSeconds: number;
  /** Readings of this prefix in the database afterwards, warm-up included. */
  stored: number;
  peakRssMib?: number;
  rssAtStartMib?: number;
}

const sensorId = (n: number) => `${PREFIX}${String(n).padStart(3, "0")}`;

/**
 * Batches of readings as a gateway would send them: every sensor's minute reading in turn,
 * oldest first, ending a few minutes ago (so none is "in the future").
 */
function makeBatches(count: number, size: number): WireReading[][] {
  const total = count * size;
  const startMs =
    Math.floor(Date.now() / MINUTE_MS) * MINUTE_MS - (Math.ceil(total / SENSORS) + 5) * MINUTE_MS;
  const random = randomSource(1);
  const batches: WireReading[][] = [];
  for (let b = 0; b < count; b++) {
    const batch: WireReading[] = [];
    for (let j = 0; j < size; j++) {
      const k = b * size + j;
      batch.push({
        sensor: sensorId(k % SENSORS),
        ts: new Date(startMs + Math.floor(k / SENSORS) * MINUTE_MS).toISOString(),
        temp_c: round(15 + 30 * random(), 2),
        rh: round(60 + 40 * random(), 1),
      });
    }
    batches.push(batch);
  }
  return batches;
}

function prepareBatchInsert(sqlite: Database.Database): (batch: WireReading[]) => number {
  const stmt = sqlite.prepare(INSERT_READING_SQL);
  return sqlite.transaction((batch: WireReading[]) => {
    const receivedAt = Date.now();
    let added = 0;
    for (const r of batch)
      added += stmt.run(r.sensor, Date.parse(r.ts), r.temp_c, r.rh, "http", receivedAt).changes;
    return added;
  });
}

/** Inserts the batches into a fresh migrated file; times the part after the warm-up. */
function bareInsert(batches: WireReading[][], warmup: number): Run {
  const dir = tempFolder("bare-insert");
  const sqlite = openMigrated(path.join(dir, "bare.db"));
  try {
    insertSensors(
      sqlite,
      Array.from({ length: SENSORS }, (_, i) => sensorId(i)),
    );
    const insertBatch = prepareBatchInsert(sqlite);
    let stored = 0;
    for (const batch of batches.slice(0, warmup)) stored += insertBatch(batch);
    const cpu0 = ownCpuSeconds();
    const t0 = performance.now();
    for (const batch of batches.slice(warmup)) stored += insertBatch(batch);
    return { seconds: (performance.now() - t0) / 1000, cpuSeconds: ownCpuSeconds() - cpu0, stored };
  } finally {
    sqlite.close();
    removeFolder(dir);
  }
}

/** Posts one batch; throws unless Plinth answers 200 with every reading accepted. */
async function postBatch(url: string, key: string, body: string, size: number): Promise<void> {
  const res = await fetch(`${url}/api/v1/readings`, {
    method: "POST",
    headers: { authorization: `Bearer ${key}`, "content-type": "application/json" },
    body,
  });
  const text = await res.text();
  if (res.status !== 200)
    throw new Error(`POST /api/v1/readings answered ${res.status}: ${text.slice(0, 500)}`);
  const answer = JSON.parse(text) as { accepted: number; duplicates: number; rejected: unknown[] };
  if (answer.accepted !== size)
    throw new Error(`a batch of ${size} had ${answer.accepted} accepted: ${text.slice(0, 500)}`);
}

/** Posts the bodies over `connections` concurrent keep-alive connections; returns the seconds taken. */
async function postAll(
  url: string,
  gateway: Gateway,
  bodies: string[],
  size: number,
  connections: number,
): Promise<number> {
  const report = progressReporter("posted", bodies.length * size, "readings");
  let next = 0;
  let done = 0;
  const worker = async () => {
    for (let i = next++; i < bodies.length; i = next++) {
      await postBatch(url, gateway.key, bodies[i]!, size);
      done += size;
      report(done);
    }
  };
  const t0 = performance.now();
  await Promise.all(Array.from({ length: connections }, worker));
  return (performance.now() - t0) / 1000;
}

/** A fresh Plinth: warm-up batches one at a time, then the rest over several connections. */
async function httpIngest(bodies: string[], sizes: Sizes): Promise<Run> {
  const plinth = await startPlinth(await freshPlinthDb("ingest"));
  let run: Omit<Run, "stored">;
  try {
    const cookie = await signInManager(plinth);
    const gateway = await createGateway(plinth, cookie, "bench-ingest-gateway");
    for (const body of bodies.slice(0, sizes.ingestWarmupBatches))
      await postBatch(plinth.url, gateway.key, body, sizes.ingestBatchSize);
    const cpu0 = plinth.cpuSeconds();
    const timed = bodies.slice(sizes.ingestWarmupBatches);
    const seconds = await postAll(
      plinth.url,
      gateway,
      timed,
      sizes.ingestBatchSize,
      sizes.ingestConnections,
    );
    run = {
      seconds,
      cpuSeconds: plinth.cpuSeconds() - cpu0,
      peakRssMib: plinth.peakRssMib(),
      rssAtStartMib: plinth.rssAtStartMib,
    };
  } finally {
    await plinth.stop();
  }
  return { ...run, stored: countReadings(plinth.dbPath, PREFIX) };
}

const fastest = (runs: readonly Run[]) => runs.reduce((a, b) => (b.seconds < a.seconds ? b : a));

export async function benchIngest(sizes: Sizes): Promise<BenchResult[]> {
  const all = sizes.ingestWarmupBatches + sizes.ingestBatches;
  const timedReadings = sizes.ingestBatches * sizes.ingestBatchSize;
  say(
    `making ${all} batches of ${sizes.ingestBatchSize} readings from ${SENSORS} sensors (${sizes.ingestWarmupBatches} of them warm-up)`,
  );
  const batches = makeBatches(all, sizes.ingestBatchSize);
  const bodies = batches.map((readings) => JSON.stringify({ readings }));
  const rate = (r: Run) => timedReadings / r.seconds;

  const bare: Run[] = [];
  const http: Run[] = [];
  for (let n = 1; n <= sizes.rounds; n++) {
    say(
      `round ${n} of ${sizes.rounds}: bare better-sqlite3 insert into a fresh migrated file (WAL, one transaction per batch)`,
    );
    bare.push(bareInsert(batches, sizes.ingestWarmupBatches));
    say(`  ${Math.round(rate(bare.at(-1)!)).toLocaleString("en-US")} readings/s`);
    say(
      `round ${n} of ${sizes.rounds}: POST /api/v1/readings to a fresh Plinth, ${sizes.ingestConnections} connections`,
    );
    http.push(await httpIngest(bodies, sizes));
    say(`  ${Math.round(rate(http.at(-1)!)).toLocaleString("en-US")} readings/s`);
  }

  const bestBare = fastest(bare);
  const bestHttp = fastest(http);
  const expected = all * sizes.ingestBatchSize;
  const allStored = [...bare, ...http].every((r) => r.stored === expected);
  const ratio = rate(bestHttp) / rate(bestBare);
  const perCpu = (r: Run) => Math.round(timedReadings / r.cpuSeconds);
  const cpuRatio = perCpu(bestHttp) / perCpu(bestBare);
  // CPU time is disturbed less by other work; say so when it tells another story.
  const warning =
    ratio >= TARGET_RATIO !== cpuRatio >= TARGET_RATIO
      ? `the wall-clock ratio ${ratio.toFixed(2)} and the CPU-time ratio ${cpuRatio.toFixed(2)} fall on different sides of ${TARGET_RATIO}; the verdict may be noise`
      : undefined;
  return [
    {
      name: "ingest-http",
      title: `HTTP batch ingest (${sizes.ingestBatchSize}/batch, ${sizes.ingestConnections} connections)`,
      figure: rate(bestHttp),
      unit: "readings/s",
      limit: rate(bestBare),
      limitLabel: "bare better-sqlite3 insert",
      ratio,
      target: `ratio >= ${TARGET_RATIO}, all stored`,
      pass: ratio >= TARGET_RATIO && allStored,
      details: {
        ...(warning ? { warning } : {}),
        rounds: sizes.rounds,
        best_of_rounds: true,
        batches: sizes.ingestBatches,
        warmup_batches: sizes.ingestWarmupBatches,
        batch_size: sizes.ingestBatchSize,
        connections: sizes.ingestConnections,
        sensors: SENSORS,
        http_readings_per_s: http.map((r) => Math.round(rate(r))),
        bare_readings_per_s: bare.map((r) => Math.round(rate(r))),
        readings_per_cpu_second: {
          plinth_server: perCpu(bestHttp),
          bare_insert: perCpu(bestBare),
          ratio: round(cpuRatio),
          note: "CPU of the storing process only (Plinth's server; the bench for the bare insert)",
        },
        rows_expected_each_run: expected,
        rows_stored: { http: http.map((r) => r.stored), bare: bare.map((r) => r.stored) },
        plinth_rss_at_start_mib: round(
          Math.min(...http.map((r) => r.rssAtStartMib ?? Number.NaN)),
          1,
        ),
        plinth_peak_rss_mib: round(Math.max(...http.map((r) => r.peakRssMib ?? Number.NaN)), 1),
      },
    },
  ];
}
