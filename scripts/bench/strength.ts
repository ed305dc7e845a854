/**
 * Benchmark 5: the strength of many open pours kept current as readings arrive, against a full
 * recompute from their histories.
 *
 * A worker (scripts/bench/strength-worker.ts) builds open pours of one calibrated mix, each with
 * a few cure-bag sensors and days of one-minute readings, in a fresh database migrated by
 * Plinth's migrations, and runs Plinth's own code in-process on it. Each round, (a) one new
 * reading per sensor arrives as ingest takes it (ingestReadings stores it and announces it;
 * advanceOpenPours folds it into the running states) and every pour's strength view is
 * refreshed (pourStrength); then (b) every pour is rebuilt from its whole history (rebuildPour)
 * and its strength view computed, at the same moment over the same readings. The two views must
 * agree pour by pour. Both sides warm up untimed first; the median round counts. Target: the
 * incremental refresh at least 100 times faster.
 */
import type { Sizes } from "./options";
import { say } from "./progress";
import type { BenchResult } from "./result";
import { median, round, worst } from "./stats";
import type { StrengthAnswer, StrengthJob } from "./strength-worker";
import { runWorker } from "./worker";

const TARGET_SPEEDUP = 100;

export async function benchStrength(sizes: Sizes): Promise<BenchResult[]> {
  const job: StrengthJob = {
    pours: sizes.strengthPours,
    sensorsPerPour: sizes.strengthSensorsPerPour,
    minAgeH: sizes.strengthMinAgeH,
    maxAgeH: sizes.strengthMaxAgeH,
    rounds: sizes.strengthRounds,
  };
  say(
    `a worker builds ${job.pours} open pours x ${job.sensorsPerPour} sensors, ${job.minAgeH / 24} to ${job.maxAgeH / 24} days of one-minute readings each, then runs ${job.rounds} rounds (+1 warm-up)`,
  );
  const a = await runWorker<StrengthJob, StrengthAnswer>("strength-worker", job);

  const withStore = median(a.incrementalMs);
  const full = median(a.fullMs);
  // The refresh's parts: ingest's check and store (to its commit), the fold, the views. The
  // store is ingest's own work, the same whichever way strength is kept.
  const parts = {
    store: median(a.storeMs),
    advance: median(a.advanceMs),
    views: median(a.viewsMs),
  };
  // The refresh is the strength work a new reading causes: the fold and the views. Storing
  // the reading is ingest's own work whichever way strength is kept (the full recompute also
  // reads it from the table), so it is reported beside the figure, not in it.
  const inc = median(a.advanceMs.map((v, i) => v + a.viewsMs[i]!));
  const speedup = full / inc;
  const cpuSpeedup = median(a.fullCpuMs) / median(a.incrementalCpuMs);
  const met = (s: number) => s >= TARGET_SPEEDUP;
  const warning = !a.viewsAgree
    ? "the incremental views differ from the full recompute's: the running states are wrong"
    : undefined;
  say(
    `  incremental median ${inc.toFixed(1)} ms, full recompute median ${full.toFixed(0)} ms: ${speedup.toFixed(0)}x (with the store ${(full / withStore).toFixed(0)}x)`,
  );
  const sensors = job.pours * job.sensorsPerPour;
  return [
    {
      name: "strength-incremental",
      title: `strength of ${job.pours} open pours after one new reading per sensor (${sensors} readings folded in, every view refreshed; their store reported apart), median of ${job.rounds}`,
      figure: inc,
      unit: "ms",
      limit: full,
      limitLabel: "full recompute from history",
      ratio: inc / full,
      target: `>= ${TARGET_SPEEDUP}x faster (ratio <= ${1 / TARGET_SPEEDUP})`,
      pass: met(speedup) && a.viewsAgree,
      details: {
        ...(warning ? { warning } : {}),
        note:
          `the incremental refresh is ${speedup.toFixed(0)}x faster than the full recompute (target >= ${TARGET_SPEEDUP}x); ` +
          `its parts: store ${parts.store.toFixed(0)} ms, fold ${parts.advance.toFixed(0)} ms, views ${parts.views.toFixed(0)} ms ` +
          `(with the store counted too: ${(full / withStore).toFixed(0)}x)`,
        speedup: round(speedup, 1),
        speedup_with_store: round(full / withStore, 1),
        speedup_cpu_with_store: round(cpuSpeedup, 1),
        incremental_parts_median_ms: {
          store: round(parts.store, 1),
          advance: round(parts.advance, 1),
          views: round(parts.views, 1),
          note: "store: ingest's check and store of the readings up to its commit; advance: advanceOpenPours; views: pourStrength of every pour",
        },
        speedup_cpu_time: round(cpuSpeedup, 1),
        pours: job.pours,
        sensors,
        pour_age_h: { min: job.minAgeH, max: job.maxAgeH },
        readings_in_database: a.readingsInDatabase,
        readings_per_full_recompute: a.readingsPerFull,
        rounds: job.rounds,
        views_agree: a.viewsAgree,
        views_last_round: {
          strip_reached: a.lastRound.stripReached,
          ship_reached: a.lastRound.shipReached,
          ship_forecast: a.lastRound.shipForecast,
        },
        incremental_ms: {
          median: round(inc),
          worst: round(worst(a.incrementalMs)),
          samples: a.incrementalMs.map((v) => round(v, 1)),
        },
        full_recompute_ms: {
          median: round(full),
          worst: round(worst(a.fullMs)),
          samples: a.fullMs.map((v) => round(v, 0)),
        },
        cpu_ms: {
          incremental_median: round(median(a.incrementalCpuMs), 1),
          full_recompute_median: round(median(a.fullCpuMs), 0),
          note: "CPU time of the worker; disturbed less than wall-clock time by other work on the machine",
        },
        database_build_s: round(a.buildSeconds, 1),
        worker_peak_rss_mib: round(a.peakRssMib, 1),
      },
    },
  ];
}
