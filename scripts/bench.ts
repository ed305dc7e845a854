/**
 * Plinth's benchmarks: `npm run bench` (tsx scripts/bench.ts [--quick] [--only <name>]).
 *
 *   ingest    HTTP batch ingest, readings/s, against a bare better-sqlite3 insert
 *   mqtt      MQTT QoS 1 single-reading messages/s through the embedded broker, against bare aedes
 *   chart     a month of one-minute readings thinned to 1,000 points, against the bare SQL read
 *   live      commit-to-event latency on the live feed, against the HTTP round trip
 *   strength  500 open pours' strength refreshed as a reading per sensor arrives, against a
 *             full recompute from their histories
 *   history   a week-long pour's history page data, against the bare SQL read of its readings
 *   alerts    a reading past a rule (no hold) to the text at the demo's SMS fake, against the
 *             HTTP round trip of a reading that crosses nothing
 *
 * Each figure is set beside a limit measured in the same run on this machine, never a fixed
 * time. Strength and history run Plinth's own functions in a worker process on a database of
 * their own; the others run the real build (PLINTH_DIST_DIR, default dist-bench, built when
 * stale) in a child process on free loopback ports. Prints a table and writes
 * bench-results/latest.json; exits 1 when a target is missed.
 */
import path from "node:path";
import { benchAlerts } from "./bench/alerts";
import { benchChart } from "./bench/chart";
import { installCleanup } from "./bench/cleanup";
import { benchHistory } from "./bench/history";
import { benchIngest } from "./bench/ingest";
import { benchLive } from "./bench/live";
import { benchMqtt } from "./bench/mqtt";
import { readOptions, type BenchmarkName, type Options } from "./bench/options";
import { root } from "./bench/plinth";
import { cpuCount, watchOtherWork } from "./bench/proc";
import { heading, say } from "./bench/progress";
import { notes, table, writeJson } from "./bench/report";
import { failedResult, type BenchResult } from "./bench/result";
import { benchStrength } from "./bench/strength";

const titles: Record<BenchmarkName, string> = {
  ingest: "1. HTTP batch ingest",
  mqtt: "2. MQTT QoS 1 ingest",
  chart: "3. chart query",
  live: "4. commit-to-event latency",
  strength: "5. strength of open pours, incremental against full",
  history: "6. pour history page data",
  alerts: "7. reading to alert text",
};

/** The benchmarks that run Plinth's functions in a worker rather than the built server. */
const inProcess = new Set<BenchmarkName>(["strength", "history"]);

function runner(name: BenchmarkName, options: Options): Promise<BenchResult[]> {
  switch (name) {
    case "ingest":
      return benchIngest(options.sizes);
    case "mqtt":
      return benchMqtt(options.sizes);
    case "chart":
      return benchChart(options.sizes, options.quick);
    case "live":
      return benchLive(options.sizes);
    case "strength":
      return benchStrength(options.sizes);
    case "history":
      return benchHistory(options.sizes);
    case "alerts":
      return benchAlerts(options.sizes);
  }
}

/**
 * Runs one benchmark; a failure becomes a failed row. Notes how many CPUs other work on the
 * machine kept busy meanwhile (the bench and its children excluded).
 */
async function runOne(name: BenchmarkName, options: Options): Promise<BenchResult[]> {
  const otherWork = watchOtherWork();
  let rows: BenchResult[];
  try {
    rows = await runner(name, options);
  } catch (err) {
    say(`  failed: ${err instanceof Error ? err.message : String(err)}`);
    rows = [failedResult(name, titles[name], err)];
  }
  const others = otherWork();
  if (others > 0.25)
    say(
      `note: other work kept ${others.toFixed(2)} of ${cpuCount()} CPUs busy meanwhile; figures are noisy`,
    );
  for (const row of rows) row.details.other_work_cpus = Math.round(others * 100) / 100;
  return rows;
}

async function ensureFreshBuild(): Promise<void> {
  process.env.PLINTH_DIST_DIR ??= "dist-bench";
  // Imported only now: the module reads PLINTH_DIST_DIR when it loads.
  const { buildIsFresh, distDir, ensureBuild } = await import("./ensure-build.mjs");
  const shown = path.relative(root, distDir);
  say(
    buildIsFresh()
      ? `the build in ${shown} is fresh`
      : `building Plinth into ${shown} (sources are newer)…`,
  );
  ensureBuild({ quiet: true });
}

async function main(): Promise<void> {
  installCleanup();
  const options = readOptions(process.argv.slice(2));
  const startedAt = new Date();
  say(`Plinth bench, ${options.quick ? "quick" : "full"} run: ${options.only.join(", ")}`);
  // strength and history run Plinth's sources in a worker: only the others need the build.
  if (options.only.some((name) => !inProcess.has(name))) await ensureFreshBuild();

  const results: BenchResult[] = [];
  for (const name of options.only) {
    heading(titles[name]);
    results.push(...(await runOne(name, options)));
  }

  const file = writeJson(results, { quick: options.quick, startedAt, only: options.only });
  console.log(`\n${table(results)}\n`);
  const extra = notes(results);
  if (extra) console.log(`${extra}\n`);
  console.log(`Figures written to ${path.relative(root, file)}.`);
  process.exitCode = results.every((r) => r.pass) ? 0 : 1;
}

// If the event loop empties while a step still waits (something it waits for can no longer
// come), say so rather than ending silently.
let finished = false;
process.once("beforeExit", () => {
  if (finished) return;
  console.error(
    "bench: stopped early: a step was waiting for something that can no longer come (see above)",
  );
  process.exit(1);
});
await main();
finished = true;
process.exit();
