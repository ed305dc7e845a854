/**
 * Benchmark 6: the data of a pour's history page (pourHistoryData: every sensor's readings over
 * the whole cure with the running maturity and strength at each, thinned for charts, the
 * governing line, strip and ship, breaks, releases, alerts and audit) for a week-long pour with
 * ten sensors of one-minute readings, against a bare SQL read of the same readings.
 *
 * A worker (scripts/bench/history-worker.ts) builds the pour in a fresh database migrated by
 * Plinth's migrations and runs Plinth's own function in-process; the bare read is one prepared
 * statement per sensor on its own connection. The two alternate; each warms up untimed first.
 * Target: the page's data in under 200 ms, median and worst.
 */
import type { Sizes } from "./options";
import { say } from "./progress";
import type { BenchResult } from "./result";
import { median, percentile, round, worst } from "./stats";
import type { HistoryAnswer, HistoryJob } from "./history-worker";
import { runWorker } from "./worker";

const TARGET_MS = 200;

export async function benchHistory(sizes: Sizes): Promise<BenchResult[]> {
  const job: HistoryJob = {
    sensors: sizes.historySensors,
    days: sizes.historyDays,
    runs: sizes.historyRuns,
    warmupRuns: sizes.historyWarmupRuns,
  };
  say(
    `a worker builds a ${job.days}-day pour with ${job.sensors} sensors of one-minute readings, then reads its history ${job.runs} times (+${job.warmupRuns} warm-up), alternating with a bare SQL read`,
  );
  const a = await runWorker<HistoryJob, HistoryAnswer>("history-worker", job);
  say(
    `  pourHistoryData median ${median(a.plinthMs).toFixed(1)} ms, worst ${worst(a.plinthMs).toFixed(1)} ms; bare read median ${median(a.bareMs).toFixed(1)} ms, worst ${worst(a.bareMs).toFixed(1)} ms`,
  );
  const cpuMedian = median(a.plinthCpuMs);
  const warning =
    median(a.plinthMs) < TARGET_MS !== cpuMedian < TARGET_MS
      ? `the wall-clock median ${median(a.plinthMs).toFixed(0)} ms and the CPU-time median ${cpuMedian.toFixed(0)} ms fall on different sides of ${TARGET_MS} ms; the verdict may be noise`
      : undefined;
  const details = {
    sensors: job.sensors,
    days: job.days,
    readings: a.readings,
    runs: job.runs,
    warmup_runs: job.warmupRuns,
    page_data: {
      sensors: a.shape.sensors,
      readings_counted: a.shape.readingsCounted,
      temperature_points: a.shape.tempPoints,
      maturity_points: a.shape.maturityPoints,
    },
    history_ms: {
      median: round(median(a.plinthMs)),
      p90: round(percentile(a.plinthMs, 90)),
      worst: round(worst(a.plinthMs)),
    },
    bare_sql_ms: {
      median: round(median(a.bareMs)),
      p90: round(percentile(a.bareMs, 90)),
      worst: round(worst(a.bareMs)),
    },
    cpu_ms_median: {
      history: round(cpuMedian, 1),
      bare_sql: round(median(a.bareCpuMs), 1),
      note: "CPU time of the worker; disturbed less than wall-clock time by other work on the machine",
    },
    database_build_s: round(a.buildSeconds, 1),
    worker_peak_rss_mib: round(a.peakRssMib, 1),
  };
  const title = `history page data, ${job.days}-day pour, ${job.sensors} sensors (${a.readings.toLocaleString("en-US")} readings)`;
  const row = (which: "median" | "worst", figure: number, limit: number): BenchResult => ({
    name: `history-${which}`,
    title: `${title}, ${which} of ${job.runs}`,
    figure,
    unit: "ms",
    limit,
    limitLabel: `bare SQL read, ${which}`,
    ratio: figure / limit,
    target: `< ${TARGET_MS} ms`,
    pass: figure < TARGET_MS,
    // The CPU-time cross-check is of the median: said once, on its row.
    details: which === "median" && warning ? { warning, ...details } : details,
  });
  return [
    row("median", median(a.plinthMs), median(a.bareMs)),
    row("worst", worst(a.plinthMs), worst(a.bareMs)),
  ];
}
