import { afterEach, describe, expect, it, vi } from "vitest";
import { batchReading, singleReadingPayload } from "./contract";
import { createEngine, type Outgoing } from "./engine";
import { parseFaults } from "./faults";
import { demoSensors } from "./plant";
import { startTestBroker, type TestBroker } from "./test-support";
import { createMqttTransport, type MqttTransportOptions } from "./transport/mqtt";
import type { Transport } from "./transport/types";

const GATEWAY = "demo-gateway";
const KEY = "demo-gateway-key-0001";
const NOW = Date.UTC(2026, 2, 2, 4, 0, 0);

function items(rounds: number, faults = ""): Outgoing[] {
  const engine = createEngine(
    { sensors: demoSensors, demoNowMs: NOW, seed: 5 },
    parseFaults(faults, demoSensors),
  );
  const out: Outgoing[] = [];
  for (let i = 0; i < rounds; i++) out.push(...engine.tick(NOW + i * 60_000));
  return out;
}

let cleanup: (() => Promise<unknown>)[] = [];
afterEach(async () => {
  for (const c of cleanup.reverse()) await c();
  cleanup = [];
});

async function broker(): Promise<TestBroker> {
  const b = await startTestBroker(GATEWAY, KEY);
  cleanup.push(() => b.close());
  return b;
}

function transport(b: TestBroker, extra: Partial<MqttTransportOptions> = {}): Transport {
  const t = createMqttTransport({
    url: b.url,
    gateway: GATEWAY,
    key: KEY,
    reconnectPeriodMs: 50,
    ...extra,
  });
  cleanup.push(() => t.close({ drainMs: 0 }));
  return t;
}

/** `sensor|ts` of every good reading the broker received. */
function receivedKeys(b: TestBroker): string[] {
  return b.published.flatMap((m) => {
    const body = JSON.parse(m.payload) as Record<string, unknown> & {
      readings?: Record<string, unknown>[];
    };
    if (m.topic === "plinth/readings")
      return (body.readings ?? []).map((r) => `${String(r.sensor)}|${Date.parse(String(r.ts))}`);
    return [`${m.topic.split("/")[2]}|${Date.parse(String(body.ts))}`];
  });
}

describe("the MQTT transport", () => {
  it("publishes each reading on its sensor's topic at QoS 1, signed in as the gateway", async () => {
    const b = await broker();
    const t = transport(b);
    const sent = items(2);
    t.enqueue(sent);
    await t.idle();
    expect(b.accepted).toEqual([GATEWAY]);
    expect(b.published).toHaveLength(sent.length);
    sent.forEach((item, i) => {
      const m = b.published[i]!;
      expect(m.topic).toBe(`plinth/readings/${item.reading.sensor}`);
      expect(m.qos).toBe(1);
      const body = singleReadingPayload.parse(JSON.parse(m.payload));
      expect(body).toMatchObject({
        ts: new Date(item.reading.ts).toISOString(),
        temp_c: item.reading.tempC,
      });
    });
    expect(t.stats()).toMatchObject({
      sent: sent.length,
      acked: sent.length,
      inFlight: 0,
      queued: 0,
      connected: true,
    });
  });

  it("publishes batches on plinth/readings when batching, in °F when asked", async () => {
    const b = await broker();
    const t = transport(b, { batch: 25, units: "f" });
    const sent = items(2);
    t.enqueue(sent);
    await t.idle();
    expect(b.published).toHaveLength(Math.ceil(sent.length / 25));
    for (const m of b.published) {
      expect(m.topic).toBe("plinth/readings");
      expect(m.qos).toBe(1);
      const { readings } = JSON.parse(m.payload) as { readings: unknown[] };
      expect(readings.length).toBeLessThanOrEqual(25);
      for (const r of readings) {
        const parsed = batchReading.parse(r);
        expect(parsed.temp_f).toEqual(expect.any(Number));
        expect(parsed.temp_c).toBeUndefined();
      }
    }
    expect(new Set(receivedKeys(b)).size).toBe(sent.length);
  });

  it("is refused with a wrong key and says so", async () => {
    const b = await broker();
    const fatal: Error[] = [];
    transport(b, { key: "not-the-key", onFatal: (e) => fatal.push(e) });
    await vi.waitFor(() => expect(fatal.length).toBeGreaterThan(0));
    expect(fatal[0]!.message).toMatch(/refused gateway "demo-gateway"/);
    expect(b.refused).toContain(GATEWAY);
    expect(b.accepted).toEqual([]);
  });

  it("reconnects after the broker drops it and delivers every reading", async () => {
    const b = await broker();
    const events: string[] = [];
    const t = transport(b, { maxInFlight: 20, onEvent: (l) => events.push(l) });
    const first = items(3);
    t.enqueue(first);
    await vi.waitFor(() => expect(b.published.length).toBeGreaterThan(10));
    b.dropClients();
    const more = items(5).slice(first.length);
    t.enqueue(more);
    await vi.waitFor(() => expect(events.some((e) => e.startsWith("reconnected"))).toBe(true));
    await t.idle();
    const keys = new Set(receivedKeys(b));
    for (const item of [...first, ...more])
      expect(keys.has(`${item.reading.sensor}|${item.reading.ts}`)).toBe(true);
    expect(events.some((e) => e.startsWith("lost the broker"))).toBe(true);
    expect(b.accepted.length).toBeGreaterThanOrEqual(2);
    expect(t.stats().acked).toBe(first.length + more.length);
  });

  it("survives losing the broker again while it re-sends what was in flight", async () => {
    const b = await broker();
    const t = transport(b, { maxInFlight: 50 });
    const all = items(6);
    t.enqueue(all.slice(0, 120));
    await vi.waitFor(() => expect(b.published.length).toBeGreaterThan(5));
    b.dropClients();
    t.enqueue(all.slice(120));
    await vi.waitFor(() => expect(b.accepted.length).toBeGreaterThanOrEqual(2), { interval: 1 });
    b.dropClients();
    await t.idle();
    const keys = new Set(receivedKeys(b));
    expect(all.filter((i) => !keys.has(`${i.reading.sensor}|${i.reading.ts}`))).toEqual([]);
    expect(t.stats().acked).toBe(all.length);
  });

  it("sends malformed payloads without stalling, at QoS 0 when they carry no good reading", async () => {
    const b = await broker();
    const t = transport(b);
    const sent = items(2, "malformed:0.5");
    const bad = sent.filter((i) => i.kind === "malformed");
    expect(bad.length).toBeGreaterThan(5);
    t.enqueue(sent);
    await t.idle();
    // QoS 0 is done once written, so the broker may take a moment more to see the last ones.
    await vi.waitFor(() => expect(b.published).toHaveLength(sent.length));
    const zero = b.published.filter((m) => m.qos === 0);
    expect(zero).toHaveLength(bad.length);
    for (const m of zero) {
      let ok = false;
      try {
        ok = singleReadingPayload.safeParse(JSON.parse(m.payload)).success;
      } catch {
        ok = false;
      }
      expect(ok, m.payload).toBe(false);
    }
    expect(t.stats()).toMatchObject({ malformedSent: bad.length, acked: sent.length - bad.length });
  });

  it("reports what is still undelivered when closed while the broker is away", async () => {
    const b = await broker();
    const t = createMqttTransport({
      url: b.url,
      gateway: GATEWAY,
      key: KEY,
      reconnectPeriodMs: 50,
    });
    await vi.waitFor(() => expect(t.stats().connected).toBe(true));
    await b.close();
    await vi.waitFor(() => expect(t.stats().connected).toBe(false));
    t.enqueue(items(1));
    const { undelivered } = await t.close({ drainMs: 100 });
    expect(undelivered).toBe(demoSensors.length);
  });
});
