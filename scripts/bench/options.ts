/** Command-line options of the benchmarks and the sizes each mode runs at. */
import { parseArgs } from "node:util";

export const benchmarkNames = [
  "ingest",
  "mqtt",
  "chart",
  "live",
  "strength",
  "history",
  "alerts",
] as const;
export type BenchmarkName = (typeof benchmarkNames)[number];

export interface Sizes {
  /** Benchmarks 1 and 2 run bare and Plinth alternately this many times and keep each side's best. */
  rounds: number;
  /** Benchmark 1: batches posted (after the warm-up batches), readings per batch, connections. */
  ingestBatches: number;
  ingestWarmupBatches: number;
  ingestBatchSize: number;
  ingestConnections: number;
  /** Benchmark 2: messages in all, publishers, in-flight window per publisher. */
  mqttMessages: number;
  mqttPublishers: number;
  mqttWindow: number;
  /** Benchmark 3: timed queries (after the warm-up queries). */
  chartQueries: number;
  chartWarmupQueries: number;
  /** Benchmark 4: readings posted one at a time (after the warm-up ones). */
  liveReadings: number;
  liveWarmupReadings: number;
  /** Benchmark 5: open pours, sensors on each, their ages (hours), timed rounds. */
  strengthPours: number;
  strengthSensorsPerPour: number;
  strengthMinAgeH: number;
  strengthMaxAgeH: number;
  strengthRounds: number;
  /** Benchmark 6: the pour's sensors and days of one-minute readings; timed and warm-up runs. */
  historySensors: number;
  historyDays: number;
  historyRuns: number;
  historyWarmupRuns: number;
  /** Benchmark 7: dry-bag episodes, each a reading to the text at the SMS fake (after the warm-up ones). */
  alertEpisodes: number;
  alertWarmupEpisodes: number;
}

export interface Options {
  quick: boolean;
  only: BenchmarkName[];
  sizes: Sizes;
}

const fullSizes: Sizes = {
  rounds: 3,
  ingestBatches: 200,
  ingestWarmupBatches: 5,
  ingestBatchSize: 1_000,
  ingestConnections: 4,
  mqttMessages: 30_000,
  mqttPublishers: 4,
  mqttWindow: 32,
  chartQueries: 50,
  chartWarmupQueries: 3,
  liveReadings: 1_000,
  liveWarmupReadings: 20,
  strengthPours: 500,
  strengthSensorsPerPour: 3,
  strengthMinAgeH: 24,
  strengthMaxAgeH: 96,
  strengthRounds: 5,
  historySensors: 10,
  historyDays: 7,
  historyRuns: 30,
  historyWarmupRuns: 3,
  alertEpisodes: 100,
  alertWarmupEpisodes: 2,
};

const quickSizes: Sizes = {
  ...fullSizes,
  rounds: 2,
  ingestBatches: 30,
  ingestWarmupBatches: 3,
  mqttMessages: 8_000,
  chartQueries: 20,
  liveReadings: 300,
  strengthPours: 100,
  strengthRounds: 3,
  historyRuns: 10,
  alertEpisodes: 20,
};

export const usage = `Usage: tsx scripts/bench.ts [--quick] [--only <${benchmarkNames.join("|")}>[,...]]

  --quick        a smaller run (under about two minutes once the build is fresh)
  --only <name>  run only the named benchmark(s); may be repeated or comma-separated
  --help         this text

Results: a table on standard output, and bench-results/latest.json.`;

/** Parses the command line; exits with the usage on a bad option. */
export function readOptions(argv: string[]): Options {
  let values: { quick?: boolean; only?: string[]; help?: boolean };
  try {
    ({ values } = parseArgs({
      args: argv,
      options: {
        quick: { type: "boolean", default: false },
        only: { type: "string", multiple: true },
        help: { type: "boolean", default: false },
      },
    }));
  } catch (err) {
    console.error(`bench: ${err instanceof Error ? err.message : String(err)}\n${usage}`);
    process.exit(2);
  }
  if (values.help) {
    console.log(usage);
    process.exit(0);
  }
  const only = (values.only ?? [])
    .flatMap((v) => v.split(","))
    .map((v) => v.trim())
    .filter(Boolean);
  const unknown = only.filter((n) => !(benchmarkNames as readonly string[]).includes(n));
  if (unknown.length > 0) {
    console.error(`bench: no benchmark named ${unknown.join(", ")}\n${usage}`);
    process.exit(2);
  }
  const quick = Boolean(values.quick);
  return {
    quick,
    only: only.length > 0 ? (only as BenchmarkName[]) : [...benchmarkNames],
    sizes: quick ? quickSizes : fullSizes,
  };
}
