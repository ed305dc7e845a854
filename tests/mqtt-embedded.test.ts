import Database from "better-sqlite3";
import mqtt, { type IClientOptions, type MqttClient } from "mqtt";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { call, demoEmail, signIn, startPlinth, type RunningPlinth } from "./helpers/server";

// The embedded broker's contract: gateways sign in with their name and key, publish
// readings on plinth/readings[/<sensor id>] and get the PUBACK only once the readings are
// committed; nothing else is offered.

const GATEWAY = "demo-gateway";
const GATEWAY_KEY = "demo-gateway-key-0001";
const DAY = 86_400_000;
const T0 = Date.now();

let plinth: RunningPlinth;
let db: Database.Database;
let n = 0;

beforeAll(async () => {
  plinth = await startPlinth();
  db = new Database(plinth.dbPath, { readonly: true, fileMustExist: true });
});
afterAll(async () => {
  db?.close();
  await plinth?.stop();
});

const brokerUrl = () => `mqtt://127.0.0.1:${plinth.mqttPort}`;

/** Connects once (no reconnects) and reports whether the broker let the client in. */
function tryConnect(
  opts: IClientOptions,
): Promise<{ connected: boolean; code?: number; client: MqttClient }> {
  return new Promise((resolve) => {
    const client = mqtt.connect(brokerUrl(), {
      clientId: `embedded-${process.pid}-${n++}`,
      reconnectPeriod: 0,
      connectTimeout: 5_000,
      ...opts,
    });
    let code: number | undefined;
    client.once("connect", () => resolve({ connected: true, client }));
    client.on("error", (err) => {
      code = (err as Error & { code?: number }).code;
    });
    client.once("close", () => resolve({ connected: false, code, client }));
  });
}

async function connectGateway(username = GATEWAY, password = GATEWAY_KEY): Promise<MqttClient> {
  const r = await tryConnect({ username, password });
  if (!r.connected) throw new Error(`${username} could not connect (code ${r.code})`);
  return r.client;
}

/** Resolves on the PUBACK; rejects if the broker closes the connection instead. */
function publishAcked(client: MqttClient, topic: string, payload: string): Promise<void> {
  return new Promise((resolve, reject) => {
    const onClose = () => reject(new Error(`connection closed instead of a PUBACK for ${topic}`));
    if (!client.connected) return onClose();
    client.once("close", onClose);
    client.publish(topic, payload, { qos: 1 }, (err) => {
      client.removeListener("close", onClose);
      if (err) reject(err);
      else resolve();
    });
  });
}

const reading = (sensor: string, tsMs: number) =>
  db
    .prepare<[string, number], { temp_c: number; rh_pct: number | null; source: string }>(
      "select temp_c, rh_pct, source from readings where sensor_id = ? and ts = ?",
    )
    .get(sensor, tsMs);

const sensorRow = (id: string) =>
  db
    .prepare<[string], { id: string; status: string }>(
      "select id, status from sensors where id = ?",
    )
    .get(id);

describe("the embedded MQTT broker", () => {
  it("refuses a wrong key, an unknown gateway and missing credentials in the CONNACK", async () => {
    const cases: IClientOptions[] = [
      { username: GATEWAY, password: "not-the-key-0001" },
      { username: GATEWAY, password: `${GATEWAY_KEY} ` },
      { username: GATEWAY, password: "" },
      { username: GATEWAY },
      { username: "no-such-gateway", password: GATEWAY_KEY },
      { username: "Demo-Gateway", password: GATEWAY_KEY },
      { username: "' OR 1=1 --", password: GATEWAY_KEY },
      {},
    ];
    for (const opts of cases) {
      const r = await tryConnect(opts);
      expect(r.connected, `connected as ${JSON.stringify(opts)}`).toBe(false);
      // 4: bad user name or password; 5: not authorised (MQTT 3.1.1 §3.2.2.3).
      expect([4, 5], `CONNACK code for ${JSON.stringify(opts)}`).toContain(r.code);
      await r.client.endAsync(true);
    }
  });

  it("stores a °F reading on plinth/readings/<id> before its PUBACK, registering the sensor as new", async () => {
    const client = await connectGateway();
    try {
      for (let i = 0; i < 40; i++) {
        const sensor = `EM-single.${i}`;
        const tsMs = T0 - DAY + i * 60_000;
        const tempF = 32 + i * 4.5;
        const rh = i % 2 === 0 ? 50 + i : undefined;
        await publishAcked(
          client,
          `plinth/readings/${sensor}`,
          JSON.stringify({ ts: tsMs, temp_f: tempF, rh }),
        );
        // The PUBACK has arrived: the reading must already be committed.
        const row = reading(sensor, tsMs);
        expect(row, `${sensor} stored before its PUBACK`).toEqual(
          expect.objectContaining({ temp_c: expect.any(Number) }),
        );
        expect(Math.abs(row!.temp_c - ((tempF - 32) * 5) / 9)).toBeLessThan(1e-9);
        expect(row!.rh_pct).toBe(rh ?? null);
        expect(row!.source).toBe("mqtt");
        expect(sensorRow(sensor)?.status).toBe("new");
      }
    } finally {
      await client.endAsync();
    }
  });

  it("stores a batch on plinth/readings before its PUBACK, °F converted, and a repeat once", async () => {
    const client = await connectGateway();
    try {
      const ts = T0 - 2 * DAY;
      const batch = {
        readings: [
          { sensor: "EM-batch.1", ts, temp_f: 98.6, rh: 97 },
          { sensor: "EM-batch.2", ts: new Date(ts).toISOString(), temp_c: 31.25 },
          { sensor: "EM-batch.3", ts: "2026-01-15T06:30:00+05:30", temp_f: -4 },
          { sensor: "EM-batch.bad", ts, temp_c: 500 },
        ],
      };
      await publishAcked(client, "plinth/readings", JSON.stringify(batch));
      expect(reading("EM-batch.1", ts)?.temp_c).toBeCloseTo(37, 9);
      expect(reading("EM-batch.1", ts)?.rh_pct).toBe(97);
      expect(reading("EM-batch.2", ts)?.temp_c).toBe(31.25);
      expect(reading("EM-batch.3", Date.parse("2026-01-15T01:00:00Z"))?.temp_c).toBeCloseTo(-20, 9);
      expect(sensorRow("EM-batch.bad")).toBeUndefined();

      // The same batch again, with other values: counted as duplicates; the first values stand.
      const changed = { readings: batch.readings.map((r) => ({ ...r, rh: 10 })) };
      await publishAcked(client, "plinth/readings", JSON.stringify(changed));
      expect(reading("EM-batch.1", ts)?.rh_pct).toBe(97);
      expect(
        db.prepare("select count(*) as n from readings where sensor_id like 'EM-batch.%'").get(),
      ).toEqual({ n: 3 });
      expect(client.connected).toBe(true);
    } finally {
      await client.endAsync();
    }
  });

  it("closes the connection of a gateway that publishes on any other topic, storing nothing", async () => {
    const body = JSON.stringify({ sensor: "EM-elsewhere", ts: T0 - DAY, temp_c: 20 });
    for (const topic of [
      "plinth/other",
      "plinth/readings/EM-elsewhere/extra",
      "plinth/readings/",
      "readings",
      "plinth/Readings/EM-elsewhere",
      "$SYS/plinth",
    ]) {
      const client = await connectGateway();
      const closed = new Promise<void>((resolve) => client.once("close", () => resolve()));
      await expect(publishAcked(client, topic, body), `PUBACK on ${topic}`).rejects.toThrow(
        /closed/,
      );
      await closed;
      expect(client.connected).toBe(false);
      await client.endAsync(true);
    }
    expect(sensorRow("EM-elsewhere")).toBeUndefined();
  });

  it("refuses subscriptions", async () => {
    for (const topic of ["plinth/readings/#", "plinth/readings", "#"]) {
      const client = await connectGateway();
      const messages: string[] = [];
      client.on("message", (t) => messages.push(t));
      const outcome = await new Promise<"refused" | "granted">((resolve) => {
        client.once("close", () => resolve("refused"));
        client.subscribe(topic, { qos: 1 }, (err, granted) => {
          if (err || !granted || granted.every((g) => g.qos === 128)) resolve("refused");
          else resolve("granted");
        });
      });
      expect(outcome, `subscription to ${topic}`).toBe("refused");
      expect(messages).toEqual([]);
      await client.endAsync(true);
    }
  });

  it("lets a new gateway in with its key, and refuses it once a manager has revoked it", async () => {
    const manager = await signIn(plinth.url, demoEmail("manager"));
    const name = `em-gateway-${process.pid}`;
    const made = await call(plinth.url, manager, "/api/v1/gateways", {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify({ name }),
    });
    expect(made.status).toBe(201);
    const gw = (await made.json()) as { id: number; name: string; key: string };

    const client = await connectGateway(name, gw.key);
    await publishAcked(
      client,
      "plinth/readings/EM-newgw",
      JSON.stringify({ ts: T0 - DAY, temp_c: 19.5 }),
    );
    expect(reading("EM-newgw", T0 - DAY)?.temp_c).toBe(19.5);
    await client.endAsync();
    // Another gateway's name with this key, or this name with another key: refused.
    expect((await tryConnect({ username: GATEWAY, password: gw.key })).code).toBe(4);
    expect((await tryConnect({ username: name, password: GATEWAY_KEY })).code).toBe(4);

    const revoked = await call(plinth.url, manager, `/api/v1/gateways/${gw.id}/revoke`, {
      method: "POST",
    });
    expect(revoked.status).toBe(200);
    expect(
      db
        .prepare<[number], { revoked_at: number | null }>(
          "select revoked_at from gateways where id = ?",
        )
        .get(gw.id)?.revoked_at,
    ).toEqual(expect.any(Number));

    const again = await tryConnect({ username: name, password: gw.key });
    expect(again.connected).toBe(false);
    expect([4, 5]).toContain(again.code);
    await again.client.endAsync(true);

    const http = await fetch(`${plinth.url}/api/v1/readings`, {
      method: "POST",
      headers: { authorization: `Bearer ${gw.key}`, "content-type": "application/json" },
      body: JSON.stringify({ readings: [{ sensor: "EM-revoked", ts: T0 - DAY, temp_c: 20 }] }),
    });
    expect(http.status).toBe(401);
    expect(sensorRow("EM-revoked")).toBeUndefined();

    // The demo gateway is untouched.
    const demo = await connectGateway();
    await demo.endAsync();
    const health = await fetch(`${plinth.url}/api/health`);
    expect(await health.json()).toEqual({ ok: true, db: "ok", mqtt: "ok" });
  });
});
