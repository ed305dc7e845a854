/**
 * Benchmark 4: commit-to-event latency on the live feed. A client holds GET /api/v1/live
 * (server-sent events, with a manager's session cookie) while readings are posted one at a
 * time to POST /api/v1/readings. Each reading's latency is the time the client received its
 * `readings` event minus the event's committed_at (both clocks are this machine's, in whole
 * milliseconds). The limit: the HTTP round trip of the same posts.
 */
import { performance } from "node:perf_hooks";
import { freshPlinthDb } from "./db";
import type { Sizes } from "./options";
import {
  createGateway,
  signInManager,
  startPlinth,
  type BenchPlinth,
  type Gateway,
} from "./plinth";
import { progressReporter, say } from "./progress";
import { connectLive } from "./sse";
import type { BenchResult } from "./result";
import { median, percentile, round, worst } from "./stats";

const SENSORS = 10;
const TARGET_WORST_MS = 50;
const EVENT_WAIT_MS = 10_000;

interface LiveReading {
  sensor: string;
  ts: number;
  committed_at: number;
}

interface LiveClient {
  /** Receive time (epoch ms) of each reading seen, keyed by "sensor|ts", with its committed_at. */
  seen: Map<string, { receivedAtMs: number; committedAtMs: number }>;
  close: () => void;
}

const keyOf = (sensor: string, ts: number) => `${sensor}|${ts}`;

/** Opens the live feed and resolves once its `hello` event has arrived. */
async function openLive(plinth: BenchPlinth, cookie: string): Promise<LiveClient> {
  const seen: LiveClient["seen"] = new Map();
  const { close } = await connectLive(plinth.url, cookie, ({ event, data }, receivedAtMs) => {
    if (event !== "readings") return;
    for (const r of JSON.parse(data) as LiveReading[])
      seen.set(keyOf(r.sensor, r.ts), { receivedAtMs, committedAtMs: r.committed_at });
  });
  return { seen, close };
}

/** Posts one reading; returns the round trip in ms. */
async function postOne(
  plinth: BenchPlinth,
  gateway: Gateway,
  sensor: string,
  ts: number,
): Promise<number> {
  const body = JSON.stringify({
    readings: [{ sensor, ts: new Date(ts).toISOString(), temp_c: 24.5, rh: 95 }],
  });
  const t0 = performance.now();
  const res = await fetch(`${plinth.url}/api/v1/readings`, {
    method: "POST",
    headers: { authorization: `Bearer ${gateway.key}`, "content-type": "application/json" },
    body,
  });
  const text = await res.text();
  const ms = performance.now() - t0;
  if (res.status !== 200 || (JSON.parse(text) as { accepted: number }).accepted !== 1) {
    throw new Error(`POST /api/v1/readings answered ${res.status}: ${text.slice(0, 500)}`);
  }
  return ms;
}

async function waitForEvents(client: LiveClient, keys: readonly string[]): Promise<void> {
  const deadline = Date.now() + EVENT_WAIT_MS;
  while (keys.some((k) => !client.seen.has(k)) && Date.now() < deadline)
    await new Promise((r) => setTimeout(r, 20));
}

interface LiveRun {
  latencyMs: number[];
  roundTripMs: number[];
  missing: number;
  peakRssMib: number;
  rssAtStartMib: number;
}

async function measure(sizes: Sizes): Promise<LiveRun> {
  const plinth = await startPlinth(await freshPlinthDb("live"));
  let client: LiveClient | undefined;
  try {
    const cookie = await signInManager(plinth);
    const gateway = await createGateway(plinth, cookie, "bench-live-gateway");
    client = await openLive(plinth, cookie);
    const startMs = Date.now() - 2 * 3_600_000;
    for (let i = 0; i < sizes.liveWarmupReadings; i++)
      await postOne(plinth, gateway, "LV-WARM", startMs + i * 1_000);
    const keys: string[] = [];
    const roundTripMs: number[] = [];
    const report = progressReporter("posted", sizes.liveReadings, "readings");
    for (let i = 0; i < sizes.liveReadings; i++) {
      const sensor = `LV-${i % SENSORS}`;
      const ts = startMs + i * 1_000;
      keys.push(keyOf(sensor, ts));
      roundTripMs.push(await postOne(plinth, gateway, sensor, ts));
      report(i + 1);
    }
    await waitForEvents(client, keys);
    const latencyMs = keys.flatMap((k) => {
      const s = client!.seen.get(k);
      return s ? [s.receivedAtMs - s.committedAtMs] : [];
    });
    return {
      latencyMs,
      roundTripMs,
      missing: keys.length - latencyMs.length,
      peakRssMib: plinth.peakRssMib(),
      rssAtStartMib: plinth.rssAtStartMib,
    };
  } finally {
    client?.close();
    await plinth.stop();
  }
}

export async function benchLive(sizes: Sizes): Promise<BenchResult[]> {
  say(
    `Plinth (fresh database): live feed open, ${sizes.liveReadings} readings posted one at a time (+${sizes.liveWarmupReadings} warm-up)`,
  );
  const run = await measure(sizes);
  say(
    `  latency median ${median(run.latencyMs)} ms, worst ${worst(run.latencyMs)} ms; round trip median ${median(run.roundTripMs).toFixed(2)} ms; ${run.missing} events missing`,
  );
  const details = {
    readings: sizes.liveReadings,
    warmup_readings: sizes.liveWarmupReadings,
    events_missing: run.missing,
    latency_ms: {
      median: median(run.latencyMs),
      p99: percentile(run.latencyMs, 99),
      worst: worst(run.latencyMs),
    },
    round_trip_ms: {
      median: round(median(run.roundTripMs)),
      p99: round(percentile(run.roundTripMs, 99)),
      worst: round(worst(run.roundTripMs)),
    },
    clock_resolution_ms: 1,
    plinth_rss_at_start_mib: round(run.rssAtStartMib, 1),
    plinth_peak_rss_mib: round(run.peakRssMib, 1),
  };
  const row = (which: "median" | "worst", figure: number, limit: number): BenchResult => ({
    name: `live-latency-${which}`,
    title: `commit to live event (SSE), ${which}`,
    figure,
    unit: "ms",
    limit,
    limitLabel: `HTTP round trip of the post, ${which}`,
    ratio: figure / limit,
    target: `< ${TARGET_WORST_MS} ms, none missing`,
    pass: figure < TARGET_WORST_MS && run.missing === 0,
    details,
  });
  return [
    row("median", median(run.latencyMs), median(run.roundTripMs)),
    row("worst", worst(run.latencyMs), worst(run.roundTripMs)),
  ];
}
