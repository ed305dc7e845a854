import Database from "better-sqlite3";
import fs from "node:fs";
import mqtt, { type MqttClient } from "mqtt";
import { afterAll, describe, expect, it } from "vitest";
import { startPlinth, type RunningPlinth } from "./helpers/server";

// SIGKILL in the middle of a stream of readings: every reading Plinth acknowledged (an HTTP
// 2xx, or an MQTT PUBACK) is in the database after a restart, exactly once, and the server
// comes back healthy. Done twice on the same database, killed at different moments.

const GATEWAY = "demo-gateway";
const GATEWAY_KEY = "demo-gateway-key-0001";
const HTTP_SENDERS = 4;
const BATCH = 100;
const MQTT_CLIENTS = 2;
const MQTT_WINDOW = 10;
const T0 = Date.now();

interface Reading {
  sensor: string;
  tsMs: number;
  tempC: number;
}

interface Streamed {
  /** Readings whose request got a 2xx, or whose publish got its PUBACK. */
  acked: Reading[];
  httpAcked: number;
  mqttAcked: number;
  /** Every reading sent, acknowledged or not. */
  sent: Reading[];
  /** HTTP batches in flight when the server died: no answer, so the gateway would retry them. */
  unanswered: Reading[][];
  ackedBatches: Reading[][];
  /** Anything but a 2xx or a dropped connection: there should be none. */
  oddAnswers: string[];
}

const running: RunningPlinth[] = [];
afterAll(async () => {
  for (const p of running) await p.kill();
});

async function start(dir?: string): Promise<RunningPlinth> {
  const p = await startPlinth(dir ? { dir } : {});
  running.push(p);
  return p;
}

function publishAcked(client: MqttClient, topic: string, payload: string): Promise<void> {
  return new Promise((resolve, reject) => {
    const onClose = () => reject(new Error("connection closed before the PUBACK"));
    if (!client.connected) return onClose();
    client.once("close", onClose);
    client.publish(topic, payload, { qos: 1 }, (err) => {
      client.removeListener("close", onClose);
      if (err) reject(err);
      else resolve();
    });
  });
}

const body = (batch: Reading[]) =>
  JSON.stringify({
    readings: batch.map((r) => ({ sensor: r.sensor, ts: r.tsMs, temp_c: r.tempC })),
  });

function postBatch(url: string, batch: Reading[]): Promise<Response> {
  return fetch(`${url}/api/v1/readings`, {
    method: "POST",
    headers: { authorization: `Bearer ${GATEWAY_KEY}`, "content-type": "application/json" },
    body: body(batch),
  });
}

/**
 * Streams readings over HTTP (several concurrent senders, batches of 100) and over MQTT
 * (QoS 1, one reading per message, several in flight), and SIGKILLs the server once the
 * given numbers of readings have been acknowledged, while the senders are still sending.
 */
async function streamThenKill(
  p: RunningPlinth,
  round: number,
  killAfter: { http: number; mqtt: number },
): Promise<Streamed> {
  const s: Streamed = {
    acked: [],
    httpAcked: 0,
    mqttAcked: 0,
    sent: [],
    unanswered: [],
    ackedBatches: [],
    oddAnswers: [],
  };
  let stopping = false;
  const tempOf = (n: number) => 15 + (n % 500) / 10;

  const httpSender = async (i: number) => {
    let n = 0;
    while (!stopping) {
      const batch = Array.from({ length: BATCH }, () => {
        n++;
        return {
          sensor: `KL-r${round}-h${i}`,
          tsMs: T0 - 20 * 86_400_000 + n * 1000,
          tempC: tempOf(n),
        };
      });
      s.sent.push(...batch);
      let res: Response;
      try {
        res = await postBatch(p.url, batch);
      } catch {
        s.unanswered.push(batch);
        return;
      }
      if (res.status === 200) {
        s.acked.push(...batch);
        s.ackedBatches.push(batch);
        s.httpAcked += batch.length;
        try {
          const a = (await res.json()) as {
            accepted: number;
            duplicates: number;
            rejected: unknown[];
          };
          if (a.accepted !== BATCH || a.duplicates !== 0 || a.rejected.length !== 0) {
            s.oddAnswers.push(`200 ${JSON.stringify(a)}`);
          }
        } catch {
          // The answer's body was cut by the kill; its status had already acknowledged the batch.
        }
      } else {
        s.oddAnswers.push(`${res.status} ${await res.text().catch(() => "")}`);
      }
    }
  };

  const clients: MqttClient[] = [];
  for (let c = 0; c < MQTT_CLIENTS; c++) {
    const client = await mqtt.connectAsync(`mqtt://127.0.0.1:${p.mqttPort}`, {
      username: GATEWAY,
      password: GATEWAY_KEY,
      clientId: `kill-r${round}-${c}-${process.pid}`,
      reconnectPeriod: 0,
    });
    client.setMaxListeners(MQTT_WINDOW * 4);
    clients.push(client);
  }
  let mqttN = 0;
  const mqttSender = async (client: MqttClient, c: number) => {
    while (!stopping) {
      const n = ++mqttN;
      const r = {
        sensor: `KL-r${round}-m${c}`,
        tsMs: T0 - 10 * 86_400_000 + n * 1000,
        tempC: tempOf(n),
      };
      s.sent.push(r);
      try {
        await publishAcked(
          client,
          `plinth/readings/${r.sensor}`,
          JSON.stringify({ ts: r.tsMs, temp_c: r.tempC }),
        );
      } catch {
        return;
      }
      s.acked.push(r);
      s.mqttAcked++;
    }
  };

  const loops = [
    ...Array.from({ length: HTTP_SENDERS }, (_, i) => httpSender(i)),
    ...clients.flatMap((client, c) =>
      Array.from({ length: MQTT_WINDOW }, () => mqttSender(client, c)),
    ),
  ];

  const deadline = Date.now() + 30_000;
  while (s.httpAcked < killAfter.http || s.mqttAcked < killAfter.mqtt) {
    if (Date.now() > deadline) {
      stopping = true;
      throw new Error(
        `only ${s.httpAcked} HTTP and ${s.mqttAcked} MQTT readings acknowledged in 30 s:\n${p.output()}`,
      );
    }
    await new Promise((r) => setTimeout(r, 5));
  }
  await p.kill();
  stopping = true;
  await Promise.all(loops);
  for (const client of clients) await client.endAsync(true);
  return s;
}

/** Checks the database of a restarted server against what was acknowledged before the kill. */
function checkDatabase(dbPath: string, rounds: Streamed[]) {
  const db = new Database(dbPath, { readonly: true, fileMustExist: true });
  try {
    const one = db.prepare<[string, number], { temp_c: number }>(
      "select temp_c from readings where sensor_id = ? and ts = ?",
    );
    for (const s of rounds) {
      const lost = s.acked.filter((r) => {
        const row = one.get(r.sensor, r.tsMs);
        return !row || Math.abs(row.temp_c - r.tempC) > 1e-9;
      });
      expect(
        lost.slice(0, 5),
        `${lost.length} of ${s.acked.length} acknowledged readings lost`,
      ).toEqual([]);
    }
    const counts = db
      .prepare<[], { n: number; distinct_keys: number }>(
        "select count(*) as n, count(distinct sensor_id || '|' || ts) as distinct_keys from readings where sensor_id like 'KL-%'",
      )
      .get()!;
    expect(counts.n, "no reading stored twice").toBe(counts.distinct_keys);
    const sent = new Set(rounds.flatMap((s) => s.sent.map((r) => `${r.sensor}|${r.tsMs}`)));
    const stored = db
      .prepare<[], { sensor_id: string; ts: number }>(
        "select sensor_id, ts from readings where sensor_id like 'KL-%'",
      )
      .all();
    expect(stored.filter((r) => !sent.has(`${r.sensor_id}|${r.ts}`)).slice(0, 5)).toEqual([]);
    expect(stored.length).toBeGreaterThanOrEqual(rounds.reduce((n, s) => n + s.acked.length, 0));
    expect(
      db.prepare<[], { integrity_check: string }>("pragma integrity_check").get()?.integrity_check,
    ).toBe("ok");
  } finally {
    db.close();
  }
}

/** The restarted server is healthy, takes readings over both paths, and a retry is always safe. */
async function checkServer(p: RunningPlinth, s: Streamed, round: number) {
  const health = await fetch(`${p.url}/api/health`);
  expect(health.status).toBe(200);
  expect(await health.json()).toEqual({ ok: true, db: "ok", mqtt: "ok" });

  // A gateway that got no answer sends the batch again: taken once, whatever had been committed.
  for (const batch of s.unanswered) {
    const res = await postBatch(p.url, batch);
    expect(res.status).toBe(200);
    const a = (await res.json()) as { accepted: number; duplicates: number; rejected: unknown[] };
    expect(a.rejected).toEqual([]);
    expect(a.accepted + a.duplicates).toBe(batch.length);
    s.acked.push(...batch);
  }
  // Sending an acknowledged batch again stores nothing new.
  const again = await postBatch(p.url, s.ackedBatches[0]!);
  expect(await again.json()).toEqual({ accepted: 0, duplicates: BATCH, rejected: [] });

  const client = await mqtt.connectAsync(`mqtt://127.0.0.1:${p.mqttPort}`, {
    username: GATEWAY,
    password: GATEWAY_KEY,
    reconnectPeriod: 0,
  });
  const r = { sensor: `KL-r${round}-after`, tsMs: T0 - 1000, tempC: 22.5 };
  await publishAcked(
    client,
    `plinth/readings/${r.sensor}`,
    JSON.stringify({ ts: r.tsMs, temp_c: r.tempC }),
  );
  await client.endAsync();
  s.sent.push(r);
  s.acked.push(r);
}

describe("SIGKILL while readings stream in", () => {
  it("keeps every acknowledged reading, once, across two kills at different moments", async () => {
    const first = await start();
    const round1 = await streamThenKill(first, 1, { http: 3_000, mqtt: 300 });
    expect(round1.oddAnswers).toEqual([]);
    // The kill landed mid-stream: readings were on their way and never acknowledged.
    expect(round1.sent.length).toBeGreaterThan(round1.acked.length);
    // The kill was unclean: the write-ahead log was left behind for the next start to recover.
    expect(fs.existsSync(`${first.dbPath}-wal`)).toBe(true);

    const second = await start(first.dir);
    checkDatabase(second.dbPath, [round1]);
    await checkServer(second, round1, 1);

    // Killed much earlier in its stream this time, soon after the first acknowledgements.
    const round2 = await streamThenKill(second, 2, { http: BATCH, mqtt: 10 });
    expect(round2.oddAnswers).toEqual([]);
    expect(round2.sent.length).toBeGreaterThan(round2.acked.length);

    const third = await start(first.dir);
    checkDatabase(third.dbPath, [round1, round2]);
    await checkServer(third, round2, 2);
    checkDatabase(third.dbPath, [round1, round2]);
    await third.stop();
  });
});
