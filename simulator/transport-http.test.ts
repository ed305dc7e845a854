import net from "node:net";
import { afterEach, describe, expect, it, vi } from "vitest";
import { batchReading, readingBatchBody } from "./contract";
import { createEngine } from "./engine";
import { parseFaults } from "./faults";
import { demoSensors } from "./plant";
import { startFakePlinth, type FakePlinth } from "./test-support";
import { createHttpTransport, readingsUrl } from "./transport/http";
import type { Transport } from "./transport/types";

const KEY = "demo-gateway-key-0001";
const NOW = Date.UTC(2026, 2, 2, 4, 0, 0);
const quick = { initialMs: 20, maxMs: 200 };

/** `rounds` rounds of the demo plant, a minute apart, with the given faults. */
function items(rounds: number, faults = "") {
  const engine = createEngine(
    { sensors: demoSensors, demoNowMs: NOW, seed: 3 },
    parseFaults(faults, demoSensors),
  );
  const out = [];
  for (let i = 0; i < rounds; i++) out.push(...engine.tick(NOW + i * 60_000));
  out.push(...engine.flush());
  return out;
}

let cleanup: (() => Promise<unknown>)[] = [];
afterEach(async () => {
  for (const c of cleanup.reverse()) await c();
  cleanup = [];
});

async function fake(port = 0): Promise<FakePlinth> {
  const f = await startFakePlinth(KEY, port);
  cleanup.push(() => f.close());
  return f;
}

function transport(
  url: string,
  extra: Partial<Parameters<typeof createHttpTransport>[0]> = {},
): Transport {
  const t = createHttpTransport({ url, key: KEY, backoff: quick, ...extra });
  cleanup.push(() => t.close({ drainMs: 0 }));
  return t;
}

describe("the HTTP transport", () => {
  it("posts the contract's shape with the gateway key as a bearer token", async () => {
    const plinth = await fake();
    const t = transport(plinth.url, { batch: 50 });
    const sent = items(3);
    t.enqueue(sent);
    await t.idle();
    expect(plinth.requests).toHaveLength(Math.ceil(sent.length / 50));
    for (const r of plinth.requests) {
      expect(r.authorization).toBe(`Bearer ${KEY}`);
      const body = readingBatchBody.parse(JSON.parse(r.body));
      expect(body.readings.length).toBeLessThanOrEqual(50);
      for (const el of body.readings) expect(batchReading.safeParse(el).success).toBe(true);
    }
    expect(plinth.stored.size).toBe(sent.length);
    const cb07 = plinth.stored.get(`CB-07|${NOW}`);
    expect(cb07?.tempC).toBe(sent.find((i) => i.reading.sensor === "CB-07")?.reading.tempC);
    expect(t.stats()).toMatchObject({
      sent: sent.length,
      accepted: sent.length,
      duplicates: 0,
      rejected: 0,
      queued: 0,
      inFlight: 0,
    });
  });

  it("tries again after a 503 and then delivers every reading once, without losing or doubling any", async () => {
    const plinth = await fake();
    plinth.failNext(2, 503);
    const events: string[] = [];
    const t = transport(plinth.url, { batch: 40, onEvent: (l) => events.push(l) });
    const sent = items(2);
    t.enqueue(sent);
    await t.idle();
    expect(plinth.requests.slice(0, 2).map((r) => r.status)).toEqual([503, 503]);
    expect(plinth.requests.slice(2).every((r) => r.status === 200)).toBe(true);
    // The same first batch went three times; Plinth stored it once and counted no duplicates.
    expect(plinth.requests[0]!.body).toBe(plinth.requests[2]!.body);
    expect(plinth.stored.size).toBe(sent.length);
    expect(plinth.totals).toEqual({ accepted: sent.length, duplicates: 0, rejected: 0 });
    expect(t.stats()).toMatchObject({
      sent: sent.length,
      accepted: sent.length,
      duplicates: 0,
      retries: 2,
    });
    expect(events.some((e) => e.includes("503") && e.includes("trying again"))).toBe(true);
  });

  it("holds readings while Plinth cannot be reached and sends them when it comes up", async () => {
    const port = await freePort();
    const t = transport(`http://127.0.0.1:${port}`);
    const sent = items(1);
    t.enqueue(sent);
    await new Promise((r) => setTimeout(r, 150));
    expect(t.stats().retries).toBeGreaterThan(0);
    expect(t.stats().connected).toBe(false);
    expect(t.stats().queued + t.stats().inFlight).toBe(sent.length);
    const plinth = await fake(port);
    await t.idle();
    expect(plinth.stored.size).toBe(sent.length);
    expect(t.stats().connected).toBe(true);
  });

  it("counts malformed items as rejected and keeps going", async () => {
    const plinth = await fake();
    const t = transport(plinth.url);
    const sent = items(3, "malformed:0.5");
    const bad = sent.filter((i) => i.kind === "malformed").length;
    expect(bad).toBeGreaterThan(10);
    t.enqueue(sent);
    await t.idle();
    expect(plinth.stored.size).toBe(sent.length - bad);
    expect(plinth.requests.some((r) => r.status === 400)).toBe(true);
    expect(t.stats()).toMatchObject({
      accepted: sent.length - bad,
      rejected: bad,
      malformedSent: bad,
      malformedAccepted: 0,
    });
  });

  it("reports Plinth's duplicates as duplicates", async () => {
    const plinth = await fake();
    const t = transport(plinth.url);
    const sent = items(4, "duplicates:0.3");
    const unique = new Set(sent.map((i) => `${i.reading.sensor}|${i.reading.ts}`)).size;
    t.enqueue(sent);
    await t.idle();
    expect(t.stats().accepted).toBe(unique);
    expect(t.stats().duplicates).toBe(sent.length - unique);
    expect(t.stats().duplicates).toBeGreaterThan(0);
  });

  it("stops on a refused key instead of retrying forever", async () => {
    const plinth = await fake();
    const fatal: Error[] = [];
    const t = createHttpTransport({
      url: plinth.url,
      key: "wrong",
      backoff: quick,
      onFatal: (e) => fatal.push(e),
    });
    t.enqueue(items(1));
    await vi.waitFor(() => expect(fatal).toHaveLength(1));
    expect(fatal[0]!.message).toMatch(/refused the gateway key \(401\)/);
    const { undelivered } = await t.close({ drainMs: 0 });
    expect(undelivered).toBe(demoSensors.length);
    expect(plinth.requests).toHaveLength(1);
  });

  it("sends smaller batches after a 413", async () => {
    const plinth = await fake();
    plinth.failNext(1, 413);
    const t = transport(plinth.url, { batch: 100 });
    t.enqueue(items(2));
    await t.idle();
    const sizes = plinth.requests
      .slice(1)
      .map((r) => (JSON.parse(r.body) as { readings: unknown[] }).readings.length);
    expect(Math.max(...sizes)).toBe(39);
    expect(plinth.stored.size).toBe(2 * demoSensors.length);
  });

  it("finds the readings path from Plinth's address", () => {
    expect(readingsUrl("http://localhost:4321")).toBe("http://localhost:4321/api/v1/readings");
    expect(readingsUrl("http://plant.example:8080/plinth/")).toBe(
      "http://plant.example:8080/plinth/api/v1/readings",
    );
    expect(readingsUrl("https://p.example/api/v1/readings")).toBe(
      "https://p.example/api/v1/readings",
    );
  });
});

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = net.createServer();
    s.once("error", reject);
    s.listen(0, "127.0.0.1", () => {
      const { port } = s.address() as net.AddressInfo;
      s.close(() => resolve(port));
    });
  });
}
