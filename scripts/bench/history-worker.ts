/**
 * The worker of the history benchmark (scripts/bench/history.ts): builds one shipped pour with
 * its sensors' one-minute readings over its whole cure, then times Plinth's pourHistoryData
 * against a bare read of the same readings, alternately. Started by runWorker; not run by hand.
 */
import { performance } from "node:perf_hooks";
import { getSqlite, migrateDatabase, openDatabase } from "@/lib/server/db/client";
import { env } from "@/lib/server/env";
import { pourHistoryData } from "@/lib/server/history/data";
import { WINDOW_SQL } from "./db";
import { buildPours, HOUR_MS, MINUTE_MS } from "./pour-db";
import { ownCpuSeconds } from "./proc";
import { collectGarbage, tell, workerMain } from "./worker";

export interface HistoryJob {
  sensors: number;
  days: number;
  /** Timed runs of each side, after the warm-up runs. */
  runs: number;
  warmupRuns: number;
}

export interface HistoryAnswer {
  readings: number;
  buildSeconds: number;
  plinthMs: number[];
  plinthCpuMs: number[];
  bareMs: number[];
  bareCpuMs: number[];
  /** What the page data held: sensors, thinned chart points, and the readings it counted. */
  shape: { sensors: number; readingsCounted: number; tempPoints: number; maturityPoints: number };
  peakRssMib: number;
}

async function run(job: HistoryJob): Promise<HistoryAnswer> {
  migrateDatabase();
  const endMs = Math.floor(Date.now() / MINUTE_MS) * MINUTE_MS - HOUR_MS;
  const t0 = performance.now();
  const built = await buildPours({
    prefix: "HI",
    pours: 1,
    sensorsPerPour: job.sensors,
    minAgeH: job.days * 24,
    maxAgeH: job.days * 24,
    endMs,
    status: "shipped",
  });
  const buildSeconds = (performance.now() - t0) / 1000;
  const pourId = built.pourIds[0]!;
  const castAtMs = built.castAtMs[0]!;
  const sensorIds = built.sensorsByPour[0]!;
  tell(
    `built a ${job.days}-day pour with ${job.sensors} sensors, ${built.readings.toLocaleString("en-US")} one-minute readings, in ${buildSeconds.toFixed(1)} s`,
  );

  // The bare side: its own connection (Plinth's pragmas), one prepared statement, rows as arrays.
  const bare = openDatabase(env().DATABASE_PATH).sqlite;
  const window = bare.prepare<[string, number, number], unknown[]>(WINDOW_SQL).raw();
  const asOfMs = endMs + 30 * MINUTE_MS;
  const bareRead = (): number => {
    let n = 0;
    for (const id of sensorIds) n += window.all(id, castAtMs, endMs).length;
    return n;
  };
  const plinthRead = () => pourHistoryData(pourId, { asOfMs });

  // Plinth's own handle is open and warm before anything is timed.
  getSqlite();
  for (let i = 0; i < job.warmupRuns; i++) {
    bareRead();
    plinthRead();
  }
  const out = {
    plinthMs: [] as number[],
    plinthCpuMs: [] as number[],
    bareMs: [] as number[],
    bareCpuMs: [] as number[],
  };
  let shape: HistoryAnswer["shape"] | null = null;
  for (let i = 0; i < job.runs; i++) {
    collectGarbage();
    let cpu0 = ownCpuSeconds();
    let t = performance.now();
    const n = bareRead();
    out.bareMs.push(performance.now() - t);
    out.bareCpuMs.push((ownCpuSeconds() - cpu0) * 1000);
    if (n !== built.readings) throw new Error(`the bare read found ${n} of ${built.readings}`);

    collectGarbage();
    cpu0 = ownCpuSeconds();
    t = performance.now();
    const data = plinthRead();
    out.plinthMs.push(performance.now() - t);
    out.plinthCpuMs.push((ownCpuSeconds() - cpu0) * 1000);
    if (!data) throw new Error("pourHistoryData found no pour");
    const counted = data.sensors.reduce((s, x) => s + x.readingCount, 0);
    if (counted !== built.readings)
      throw new Error(`the history counted ${counted} readings of ${built.readings}`);
    shape ??= {
      sensors: data.sensors.length,
      readingsCounted: counted,
      tempPoints: data.sensors.reduce((s, x) => s + x.temps.tsMs.length, 0),
      maturityPoints: data.sensors.reduce((s, x) => s + x.maturity.tsMs.length, 0),
    };
  }
  bare.close();
  return {
    readings: built.readings,
    buildSeconds,
    ...out,
    shape: shape!,
    peakRssMib: process.resourceUsage().maxRSS / 1024,
  };
}

await workerMain(run);
