import Database from "better-sqlite3";
import fs from "node:fs";
import mqtt, { type MqttClient } from "mqtt";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { mosquittoAvailable, startMosquitto, type RunningMosquitto } from "./helpers/mosquitto";
import { startPlinth, type RunningPlinth } from "./helpers/server";

// Plinth subscribed to a real external broker (Debian's mosquitto) with MQTT_URL: readings a
// gateway publishes there reach Plinth's database, across a SIGKILL of the broker and while
// Plinth itself is down (a persistent session at QoS 1). None is lost, none stored twice.

const available = mosquittoAvailable();
const CLIENT_ID = `plinth-test-${process.pid}-${Date.now().toString(36)}`;
const T0 = Date.now();
const DAY = 86_400_000;

interface Reading {
  sensor: string;
  tsMs: number;
  tempC: number;
}

let broker: RunningMosquitto;
let plinth: RunningPlinth;
let gateway: MqttClient;
let seq = 0;
const published: Reading[] = [];

const plinthEnv = () => ({ MQTT_URL: broker.url, MQTT_CLIENT_ID: CLIENT_ID });

beforeAll(async () => {
  if (!available) return;
  broker = await startMosquitto();
  plinth = await startPlinth({ demo: false, env: plinthEnv() });
  gateway = mqtt.connect(broker.url, {
    clientId: `gateway-${process.pid}`,
    reconnectPeriod: 200,
    connectTimeout: 5_000,
  });
  await new Promise<void>((resolve) => gateway.once("connect", () => resolve()));
});

afterAll(async () => {
  await gateway?.endAsync(true);
  await plinth?.stop();
  await broker?.stop();
  for (const dir of [plinth?.dir, broker?.dir])
    if (dir) fs.rmSync(dir, { recursive: true, force: true });
});

/** Publishes at QoS 1 and resolves on the broker's PUBACK (resent by mqtt.js after a reconnect). */
function publishAcked(topic: string, payload: string): Promise<void> {
  return new Promise((resolve, reject) =>
    gateway.publish(topic, payload, { qos: 1 }, (err) => (err ? reject(err) : resolve())),
  );
}

function nextReadings(count: number, prefix: string): Reading[] {
  return Array.from({ length: count }, () => {
    const i = seq++;
    return { sensor: `${prefix}.${i % 7}`, tsMs: T0 - DAY + i * 1000, tempC: 10 + (i % 300) / 10 };
  });
}

/** Half the readings one per message on their sensor's topic, the rest in batches of 10. */
async function publishAll(readings: Reading[]): Promise<void> {
  const half = Math.floor(readings.length / 2);
  const single = readings
    .slice(0, half)
    .map((r) =>
      publishAcked(`plinth/readings/${r.sensor}`, JSON.stringify({ ts: r.tsMs, temp_c: r.tempC })),
    );
  const batches: Promise<void>[] = [];
  for (let i = half; i < readings.length; i += 10) {
    const batch = readings
      .slice(i, i + 10)
      .map((r) => ({ sensor: r.sensor, ts: new Date(r.tsMs).toISOString(), temp_c: r.tempC }));
    batches.push(publishAcked("plinth/readings", JSON.stringify({ readings: batch })));
  }
  await Promise.all([...single, ...batches]);
  if (!readings[0]?.sensor.startsWith("PROBE-")) published.push(...readings);
}

function withDb<T>(fn: (db: Database.Database) => T): T {
  const db = new Database(plinth.dbPath, { readonly: true, fileMustExist: true });
  try {
    return fn(db);
  } finally {
    db.close();
  }
}

/** The readings not (yet) in Plinth's database, or stored with another value. */
function missing(readings: Reading[]): Reading[] {
  return withDb((db) => {
    const one = db.prepare<[string, number], { temp_c: number }>(
      "select temp_c from readings where sensor_id = ? and ts = ?",
    );
    return readings.filter((r) => {
      const row = one.get(r.sensor, r.tsMs);
      return !row || Math.abs(row.temp_c - r.tempC) > 1e-9;
    });
  });
}

async function expectAllArrive(readings: Reading[]) {
  await expect.poll(() => missing(readings).length, { timeout: 20_000, interval: 100 }).toBe(0);
}

function expectNoneTwice() {
  const counts = withDb((db) =>
    db
      .prepare<[], { n: number; distinct_keys: number }>(
        "select count(*) as n, count(distinct sensor_id || '|' || ts) as distinct_keys from readings where sensor_id like 'EXT-%'",
      )
      .get()!,
  );
  expect(counts.n).toBe(counts.distinct_keys);
  expect(counts.n).toBe(published.length);
}

async function health(): Promise<{ status: number; mqtt: unknown }> {
  try {
    const res = await fetch(`${plinth.url}/api/health`);
    const body = (await res.json()) as { mqtt?: unknown };
    return { status: res.status, mqtt: body.mqtt };
  } catch {
    return { status: 0, mqtt: null };
  }
}

describe.skipIf(!available)("Plinth on an external broker (mosquitto)", () => {
  it("reports mqtt ok and stores what a gateway publishes to the broker", async () => {
    const res = await fetch(`${plinth.url}/api/health`);
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ ok: true, db: "ok", mqtt: "ok" });

    // Plinth subscribes right after it connects; wait until a first reading comes through
    // (one published before the subscription exists is, by MQTT's rules, for nobody).
    const probe: Reading[] = [];
    await expect
      .poll(
        async () => {
          const r = nextReadings(1, "PROBE-ext");
          probe.push(...r);
          await publishAll(r);
          return missing(probe).length < probe.length;
        },
        { timeout: 15_000, interval: 200 },
      )
      .toBe(true);
    await expectAllArrive(probe);

    const first = nextReadings(200, "EXT-a");
    await publishAll(first);
    await expectAllArrive(first);
    expectNoneTwice();
  });

  it("survives a SIGKILL of the broker: 503 while it is down, then every reading arrives", async () => {
    // Give the broker's autosave (every second) time to write Plinth's session to disk.
    await new Promise((r) => setTimeout(r, 1_500));
    await broker.kill();
    await expect
      .poll(health, { timeout: 15_000, interval: 100 })
      .toEqual({ status: 503, mqtt: "down" });

    await broker.restart();
    await new Promise<void>((resolve) =>
      gateway.connected ? resolve() : gateway.once("connect", () => resolve()),
    );
    // Published as soon as the broker is back, likely before Plinth has reconnected: the
    // broker keeps them for Plinth's session.
    const after = nextReadings(200, "EXT-b");
    await publishAll(after);
    await expect
      .poll(health, { timeout: 15_000, interval: 100 })
      .toEqual({ status: 200, mqtt: "ok" });
    await expectAllArrive(after);
    expect(missing(published)).toEqual([]);
    expectNoneTwice();
  });

  it("delivers what was published while Plinth was stopped once it is back with the same client id", async () => {
    await plinth.stop();
    const whileDown = nextReadings(300, "EXT-c");
    await publishAll(whileDown);
    // Nothing could have arrived: Plinth is not running.
    expect(missing(whileDown)).toHaveLength(whileDown.length);

    plinth = await startPlinth({ demo: false, dir: plinth.dir, env: plinthEnv() });
    await expectAllArrive(whileDown);
    expect(missing(published)).toEqual([]);
    expectNoneTwice();
    const res = await fetch(`${plinth.url}/api/health`);
    expect(await res.json()).toEqual({ ok: true, db: "ok", mqtt: "ok" });
  });

  it("acknowledges and drops a message it cannot read, so it never holds up a session", async () => {
    // A topic whose sensor id is not valid percent-encoding, more of them than the broker
    // keeps in flight to one client (20). Plinth must acknowledge and drop each: one it never
    // acknowledges is redelivered at every reconnect and holds a slot for good.
    const unreadable = Array.from({ length: 25 }, (_, i) =>
      publishAcked(
        i % 2 === 0 ? "plinth/readings/%E0%A4" : "plinth/readings/FZ-%zz",
        JSON.stringify({ ts: T0 - DAY, temp_c: 20 }),
      ),
    );
    await Promise.all(unreadable);
    const before = nextReadings(20, "EXT-d");
    await publishAll(before);
    await expectAllArrive(before);

    await plinth.stop();
    const whileDown = nextReadings(50, "EXT-e");
    await publishAll(whileDown);
    plinth = await startPlinth({ demo: false, dir: plinth.dir, env: plinthEnv() });
    await expectAllArrive(whileDown);
    expectNoneTwice();
  });
});
