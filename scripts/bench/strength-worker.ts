/**
 * The worker of the strength benchmark (scripts/bench/strength.ts): builds the open pours in
 * its own database, then times, round after round, Plinth's incremental path against a full
 * recompute of the same pours from the same readings. Started by runWorker; not run by hand.
 */
import { performance } from "node:perf_hooks";
import { migrateDatabase } from "@/lib/server/db/client";
import { ingestReadings } from "@/lib/server/ingest/ingest";
import { bus } from "@/lib/server/live/bus";
import { advanceOpenPours, rebuildPour, reconcileMaturity } from "@/lib/server/strength/maturity";
import { pourStrength, type PourStrength } from "@/lib/server/strength/pourStrength";
import { buildPours, HOUR_MS, MINUTE_MS } from "./pour-db";
import { ownCpuSeconds } from "./proc";
import { collectGarbage, tell, workerMain } from "./worker";

export interface StrengthJob {
  pours: number;
  sensorsPerPour: number;
  minAgeH: number;
  maxAgeH: number;
  /** Timed rounds, after one untimed warm-up round of each side. */
  rounds: number;
}

export interface StrengthAnswer {
  readingsInDatabase: number;
  buildSeconds: number;
  /** Each timed round's wall-clock and CPU milliseconds. */
  incrementalMs: number[];
  /** The incremental round's parts: the ingest's store (to its commit), the advance, the views. */
  storeMs: number[];
  advanceMs: number[];
  viewsMs: number[];
  incrementalCpuMs: number[];
  fullMs: number[];
  fullCpuMs: number[];
  /** Readings folded per full recompute (every reading of every assignment). */
  readingsPerFull: number;
  /** True when each round's incremental views equal the full recompute's, pour by pour. */
  viewsAgree: boolean;
  /** How the views stood in the last round: pours past strip and ship, and forecast. */
  lastRound: { stripReached: number; shipReached: number; shipForecast: number };
  peakRssMib: number;
}

async function run(job: StrengthJob): Promise<StrengthAnswer> {
  migrateDatabase();
  // History ends a while ago, so every new reading of the rounds is in the past.
  const endMs = Math.floor(Date.now() / MINUTE_MS) * MINUTE_MS - 2 * HOUR_MS;
  const t0 = performance.now();
  let lastPct = -1;
  const built = await buildPours(
    {
      prefix: "ST",
      pours: job.pours,
      sensorsPerPour: job.sensorsPerPour,
      minAgeH: job.minAgeH,
      maxAgeH: job.maxAgeH,
      endMs,
      status: "curing",
    },
    (done, total) => {
      const pct = Math.floor((100 * done) / total / 10) * 10;
      if (pct !== lastPct) {
        lastPct = pct;
        tell(`inserting readings: ${pct} % of ${total.toLocaleString("en-US")}`);
      }
    },
  );
  const buildSeconds = (performance.now() - t0) / 1000;
  tell(
    `built ${job.pours} open pours, ${job.pours * job.sensorsPerPour} sensors, ${built.readings.toLocaleString("en-US")} readings in ${buildSeconds.toFixed(0)} s`,
  );

  // As Plinth's start does: bring every running state up from the readings, then advance
  // them as each committed batch is announced (services.ts).
  reconcileMaturity();
  tell("running states built from the readings, as at Plinth's start");
  // Plinth's listener (services.ts) runs inside ingestReadings, right after the commit: the
  // times on either side of it split the incremental refresh into store, advance and views.
  let committedAt = 0;
  let advancedAt = 0;
  bus().on("readings", (events) => {
    committedAt = performance.now();
    advanceOpenPours(events);
    advancedAt = performance.now();
  });

  const sensors = built.sensorsByPour.flat();
  let minute = 0;
  /** One new reading per sensor, a minute after the last, stored and announced as ingest does. */
  const arrive = (): number => {
    minute++;
    const ts = endMs + minute * MINUTE_MS;
    const batch = sensors.map((sensor, i) => ({
      sensor,
      ts,
      temp_c: Math.round((24 + (i % 7) * 0.3 + minute * 0.01) * 10) / 10,
      rh: 95,
    }));
    const answer = ingestReadings(batch, "http", { nowMs: ts + 30_000 });
    if (answer.accepted !== sensors.length)
      throw new Error(`a new reading per sensor: ${answer.accepted} of ${sensors.length} stored`);
    return ts + 30_000;
  };
  const views = (asOfMs: number): PourStrength[] =>
    built.pourIds.map((id) => pourStrength(id, asOfMs)!);

  const incremental = () => {
    collectGarbage();
    const cpu0 = ownCpuSeconds();
    const t = performance.now();
    const asOfMs = arrive();
    const viewsFrom = performance.now();
    const v = views(asOfMs);
    const end = performance.now();
    return {
      ms: end - t,
      cpuMs: (ownCpuSeconds() - cpu0) * 1000,
      storeMs: committedAt - t,
      advanceMs: advancedAt - committedAt,
      viewsMs: end - viewsFrom,
      views: v,
      asOfMs,
    };
  };
  const full = (asOfMs: number): { ms: number; cpuMs: number; views: PourStrength[] } => {
    collectGarbage();
    const cpu0 = ownCpuSeconds();
    const t = performance.now();
    const v = built.pourIds.map((id) => {
      rebuildPour(id, asOfMs);
      return pourStrength(id, asOfMs)!;
    });
    return { ms: performance.now() - t, cpuMs: (ownCpuSeconds() - cpu0) * 1000, views: v };
  };

  tell("warm-up: one incremental refresh and one full recompute, untimed");
  const warm = incremental();
  full(warm.asOfMs);

  const out = {
    storeMs: [] as number[],
    advanceMs: [] as number[],
    viewsMs: [] as number[],
    incrementalMs: [] as number[],
    incrementalCpuMs: [] as number[],
    fullMs: [] as number[],
    fullCpuMs: [] as number[],
  };
  let viewsAgree = true;
  let last: PourStrength[] = [];
  for (let r = 1; r <= job.rounds; r++) {
    const inc = incremental();
    const f = full(inc.asOfMs);
    const same = JSON.stringify(inc.views) === JSON.stringify(f.views);
    viewsAgree &&= same;
    out.incrementalMs.push(inc.ms);
    out.storeMs.push(inc.storeMs);
    out.advanceMs.push(inc.advanceMs);
    out.viewsMs.push(inc.viewsMs);
    out.incrementalCpuMs.push(inc.cpuMs);
    out.fullMs.push(f.ms);
    out.fullCpuMs.push(f.cpuMs);
    last = f.views;
    tell(
      `round ${r} of ${job.rounds}: incremental ${inc.ms.toFixed(1)} ms (store ${inc.storeMs.toFixed(1)}, advance ${inc.advanceMs.toFixed(1)}, views ${inc.viewsMs.toFixed(1)}), full recompute ${f.ms.toFixed(0)} ms (${(f.ms / inc.ms).toFixed(0)}x)${same ? "" : "; the views DIFFER"}`,
    );
  }
  const readingsPerFull = built.readings + minute * sensors.length;
  return {
    readingsInDatabase: readingsPerFull,
    buildSeconds,
    ...out,
    readingsPerFull,
    viewsAgree,
    lastRound: {
      stripReached: last.filter((v) => v.strip.reached_at !== null).length,
      shipReached: last.filter((v) => v.ship.reached_at !== null).length,
      shipForecast: last.filter((v) => v.ship.forecast_at !== null).length,
    },
    peakRssMib: process.resourceUsage().maxRSS / 1024,
  };
}

await workerMain(run);
