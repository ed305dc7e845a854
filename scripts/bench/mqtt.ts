/**
 * Benchmark 2: MQTT QoS 1 single-reading messages per second through Plinth's embedded
 * broker, none lost, against a bare aedes broker (its own process, no database, no
 * subscriber: see bare-broker.ts) passing the same messages.
 *
 * Several publishers, each keeping a window of unacknowledged messages in flight, publish
 * one reading per message on plinth/readings/<sensor id>. A message counts when its PUBACK
 * arrives; Plinth sends that only after the reading is committed. Afterwards the readings
 * stored are counted in Plinth's database. Bare and Plinth run alternately for a few rounds
 * (a fresh broker and database each time) and each keeps its best round.
 */
import { spawn } from "node:child_process";
import path from "node:path";
import { performance } from "node:perf_hooks";
import readline from "node:readline";
import mqtt, { type MqttClient } from "mqtt";
import { track } from "./cleanup";
import { countReadings, freshPlinthDb } from "./db";
import type { Sizes } from "./options";
import { createGateway, root, signInManager, startPlinth, type Gateway } from "./plinth";
import { cpuSeconds } from "./proc";
import { progressReporter, say } from "./progress";
import type { BenchResult } from "./result";
import { randomSource, round } from "./stats";

const PREFIX = "MQ-";
const SENSORS_PER_PUBLISHER = 50;
const WARMUP_PER_PUBLISHER = 250;
const MINUTE_MS = 60_000;
const TARGET_RATE = 3_000;

interface Message {
  topic: string;
  payload: Buffer;
}

interface RunFigures {
  seconds: number;
  acked: number;
  /** CPU seconds the broker's process used in the timed part. */
  cpuSeconds: number;
}

interface PlinthFigures extends RunFigures {
  stored: number;
  peakRssMib: number;
  rssAtStartMib: number;
}

/**
 * Each publisher's messages, warm-up ones first: its own sensors' minute readings in turn,
 * oldest first, ending a few minutes ago.
 */
function makeMessages(publishers: number, perPublisher: number): Message[][] {
  const random = randomSource(2);
  const startMs =
    Math.floor(Date.now() / MINUTE_MS) * MINUTE_MS -
    (Math.ceil(perPublisher / SENSORS_PER_PUBLISHER) + 5) * MINUTE_MS;
  return Array.from({ length: publishers }, (_, p) =>
    Array.from({ length: perPublisher }, (_, i) => {
      const sensor = `${PREFIX}${p}-${String(i % SENSORS_PER_PUBLISHER).padStart(2, "0")}`;
      const ts = new Date(
        startMs + Math.floor(i / SENSORS_PER_PUBLISHER) * MINUTE_MS,
      ).toISOString();
      const body = { ts, temp_c: round(15 + 30 * random(), 2), rh: round(60 + 40 * random(), 1) };
      return { topic: `plinth/readings/${sensor}`, payload: Buffer.from(JSON.stringify(body)) };
    }),
  );
}

async function connectPublishers(
  port: number,
  count: number,
  gateway: Gateway,
): Promise<MqttClient[]> {
  return Promise.all(
    Array.from({ length: count }, (_, i) =>
      mqtt.connectAsync(`mqtt://127.0.0.1:${port}`, {
        clientId: `bench-publisher-${i}-${process.pid}`,
        username: gateway.name,
        password: gateway.key,
        protocolVersion: 4,
        clean: true,
        reconnectPeriod: 0,
        connectTimeout: 10_000,
      }),
    ),
  );
}

/**
 * Publishes `messages` at QoS 1 keeping up to `window` unacknowledged; resolves when all are
 * acknowledged. Rejects when the connection closes first (mqtt.js would otherwise keep the
 * unacknowledged messages for a reconnection that, with reconnectPeriod 0, never comes).
 */
function publishWindowed(
  client: MqttClient,
  messages: readonly Message[],
  window: number,
  onAck: () => void,
): Promise<void> {
  return new Promise((resolve, reject) => {
    if (messages.length === 0) return resolve();
    let sent = 0;
    let acked = 0;
    const onClose = () =>
      reject(
        new Error(
          `the MQTT connection closed with ${messages.length - acked} messages unacknowledged`,
        ),
      );
    client.once("close", onClose);
    const finish = () => {
      client.off("close", onClose);
      resolve();
    };
    const sendNext = () => {
      const m = messages[sent++]!;
      client.publish(m.topic, m.payload, { qos: 1 }, (err) => {
        if (err) return reject(err);
        acked++;
        onAck();
        if (acked === messages.length) finish();
        else if (sent < messages.length) sendNext();
      });
    };
    for (let i = 0; i < Math.min(window, messages.length); i++) sendNext();
  });
}

/** Warm-up (untimed), then the timed messages from every publisher at once. */
async function runPublishers(
  port: number,
  brokerPid: number,
  gateway: Gateway,
  messages: Message[][],
  window: number,
): Promise<RunFigures> {
  const clients = await connectPublishers(port, messages.length, gateway);
  try {
    await Promise.all(
      clients.map((c, i) =>
        publishWindowed(c, messages[i]!.slice(0, WARMUP_PER_PUBLISHER), window, () => {}),
      ),
    );
    const total = messages.reduce((n, m) => n + m.length - WARMUP_PER_PUBLISHER, 0);
    const report = progressReporter("acknowledged", total, "messages");
    let acked = 0;
    const onAck = () => report(++acked);
    const cpu0 = cpuSeconds(brokerPid);
    const t0 = performance.now();
    await Promise.all(
      clients.map((c, i) =>
        publishWindowed(c, messages[i]!.slice(WARMUP_PER_PUBLISHER), window, onAck),
      ),
    );
    return {
      seconds: (performance.now() - t0) / 1000,
      acked,
      cpuSeconds: cpuSeconds(brokerPid) - cpu0,
    };
  } finally {
    await Promise.all(clients.map((c) => c.endAsync(true))); // force: nothing is left to wait for
  }
}

/** Starts bare-broker.ts in its own process; resolves with its port and a stop function. */
async function startBareBroker(): Promise<{
  port: number;
  pid: number;
  stop: () => Promise<void>;
}> {
  const child = track(
    spawn(
      process.execPath,
      ["--import", "tsx", path.join(root, "scripts", "bench", "bare-broker.ts")],
      {
        cwd: root,
        stdio: ["ignore", "pipe", "inherit"],
      },
    ),
  );
  const exited = new Promise<void>((resolve) => child.once("exit", () => resolve()));
  const lines = readline.createInterface({ input: child.stdout! });
  const first = await new Promise<string>((resolve, reject) => {
    lines.once("line", resolve);
    child.once("exit", (code) =>
      reject(new Error(`the bare broker exited (${code}) before listening`)),
    );
  });
  lines.close();
  const { port } = JSON.parse(first) as { port: number };
  return {
    port,
    pid: child.pid!,
    stop: async () => {
      if (child.exitCode === null && child.signalCode === null) child.kill("SIGTERM");
      await exited;
    },
  };
}

async function bareRun(messages: Message[][], window: number): Promise<RunFigures> {
  const broker = await startBareBroker();
  try {
    return await runPublishers(
      broker.port,
      broker.pid,
      { name: "bench", key: "bench-bare-broker" },
      messages,
      window,
    );
  } finally {
    await broker.stop();
  }
}

async function plinthRun(messages: Message[][], window: number): Promise<PlinthFigures> {
  const plinth = await startPlinth(await freshPlinthDb("mqtt"));
  let figures: RunFigures;
  let peakRssMib = Number.NaN;
  try {
    const cookie = await signInManager(plinth);
    const gateway = await createGateway(plinth, cookie, "bench-mqtt-gateway");
    figures = await runPublishers(plinth.mqttPort, plinth.pid, gateway, messages, window);
    peakRssMib = plinth.peakRssMib();
  } finally {
    await plinth.stop();
  }
  const stored = countReadings(plinth.dbPath, PREFIX);
  return { ...figures, stored, peakRssMib, rssAtStartMib: plinth.rssAtStartMib };
}

const fastest = <T extends RunFigures>(runs: readonly T[]) =>
  runs.reduce((a, b) => (b.seconds < a.seconds ? b : a));
const rate = (r: RunFigures) => r.acked / r.seconds;
const perCpu = (r: RunFigures) => Math.round(r.acked / r.cpuSeconds);

export async function benchMqtt(sizes: Sizes): Promise<BenchResult[]> {
  const perPublisher = WARMUP_PER_PUBLISHER + Math.ceil(sizes.mqttMessages / sizes.mqttPublishers);
  const timed = (perPublisher - WARMUP_PER_PUBLISHER) * sizes.mqttPublishers;
  const messages = makeMessages(sizes.mqttPublishers, perPublisher);
  const how = `${sizes.mqttPublishers} publishers, window ${sizes.mqttWindow} each`;
  say(
    `${timed.toLocaleString("en-US")} messages (+${WARMUP_PER_PUBLISHER * sizes.mqttPublishers} warm-up), ${how}`,
  );

  const bare: RunFigures[] = [];
  const plinth: PlinthFigures[] = [];
  for (let n = 1; n <= sizes.rounds; n++) {
    say(
      `round ${n} of ${sizes.rounds}: bare aedes broker (own process, no database, no subscriber)`,
    );
    bare.push(await bareRun(messages, sizes.mqttWindow));
    say(`  ${Math.round(rate(bare.at(-1)!)).toLocaleString("en-US")} messages/s`);
    say(
      `round ${n} of ${sizes.rounds}: Plinth's embedded broker (fresh database, gateway sign-in)`,
    );
    plinth.push(await plinthRun(messages, sizes.mqttWindow));
    const last = plinth.at(-1)!;
    say(
      `  ${Math.round(rate(last)).toLocaleString("en-US")} messages/s; ${last.stored.toLocaleString("en-US")} readings stored`,
    );
  }

  const expected = perPublisher * sizes.mqttPublishers;
  const lost = Math.max(...plinth.map((r) => expected - r.stored));
  const bestBare = fastest(bare);
  const best = fastest(plinth);
  return [
    {
      name: "mqtt-qos1",
      title: `MQTT QoS 1, one reading a message (${how})`,
      figure: rate(best),
      unit: "msg/s",
      limit: rate(bestBare),
      limitLabel: "bare aedes broker, no DB",
      ratio: rate(best) / rate(bestBare),
      target: `>= ${TARGET_RATE.toLocaleString("en-US")} msg/s, 0 lost`,
      pass: rate(best) >= TARGET_RATE && lost === 0,
      details: {
        rounds: sizes.rounds,
        best_of_rounds: true,
        messages_timed: timed,
        warmup_messages: WARMUP_PER_PUBLISHER * sizes.mqttPublishers,
        publishers: sizes.mqttPublishers,
        window_per_publisher: sizes.mqttWindow,
        plinth_msg_per_s: plinth.map((r) => Math.round(rate(r))),
        bare_msg_per_s: bare.map((r) => Math.round(rate(r))),
        msg_per_broker_cpu_second: {
          plinth: perCpu(best),
          bare: perCpu(bestBare),
          ratio: round(perCpu(best) / perCpu(bestBare)),
        },
        readings_expected_each_run: expected,
        readings_stored: plinth.map((r) => r.stored),
        lost_worst_run: lost,
        bare_broker:
          "aedes in a child process, publish hook acknowledges at once, no database, no subscriber",
        plinth_rss_at_start_mib: round(Math.min(...plinth.map((r) => r.rssAtStartMib)), 1),
        plinth_peak_rss_mib: round(Math.max(...plinth.map((r) => r.peakRssMib)), 1),
      },
    },
  ];
}
