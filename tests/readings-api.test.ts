import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { call, demoEmail, signIn, startPlinth, type RunningPlinth } from "./helpers/server";

// The readings contract (shared/contracts.md, "Readings in" and the public JSON API),
// against the built server.
let plinth: RunningPlinth;
let manager: string;
let viewer: string;
const KEY = "demo-gateway-key-0001";

beforeAll(async () => {
  plinth = await startPlinth();
  manager = await signIn(plinth.url, demoEmail("manager"));
  viewer = await signIn(plinth.url, demoEmail("viewer"));
});
afterAll(async () => {
  await plinth?.stop();
});

const post = (body: unknown, headers: Record<string, string> = {}) =>
  fetch(`${plinth.url}/api/v1/readings`, {
    method: "POST",
    headers: { authorization: `Bearer ${KEY}`, "content-type": "application/json", ...headers },
    body: typeof body === "string" ? body : JSON.stringify(body),
  });

async function window(sensor: string, query = "") {
  const res = await call(plinth.url, viewer, `/api/v1/sensors/${sensor}/readings${query}`);
  return {
    status: res.status,
    body: (await res.json()) as {
      sensor: string;
      readings: { ts: string; temp_c: number; rh: number | null }[];
    },
  };
}

describe("POST /api/v1/readings", () => {
  it("takes the contract's example and answers the counts", async () => {
    const ts = new Date(Date.now() - 60_000).toISOString();
    const res = await post({ readings: [{ sensor: "CB-07", ts, temp_c: 31.2, rh: 96.5 }] });
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ accepted: 1, duplicates: 0, rejected: [] });
    const w = await window("CB-07", `?from=${encodeURIComponent(ts)}&to=${encodeURIComponent(ts)}`);
    expect(w.body.readings).toEqual([{ ts, temp_c: 31.2, rh: 96.5 }]);
  });

  it("keeps the good readings of a batch with a bad one, and says which and why", async () => {
    const t = Date.now() - 120_000;
    const res = await post({
      readings: [
        { sensor: "CB-08", ts: t, temp_c: 25 },
        { sensor: "CB-08", ts: t + 1000, temp_c: "warm" },
        { sensor: "CB-08", ts: t + 2000, temp_f: 77, rh: 97 },
        { sensor: "CB-08", ts: Date.now() + 11 * 60_000, temp_c: 25 },
        { sensor: "CB-08", ts: t + 3000, temp_c: 130 },
        { sensor: "CB-08", ts: t + 4000, temp_c: 20, rh: 101 },
      ],
    });
    const body = (await res.json()) as {
      accepted: number;
      rejected: { index: number; error: string }[];
    };
    expect(res.status).toBe(200);
    expect(body.accepted).toBe(2);
    expect(body.rejected.map((r) => r.index)).toEqual([1, 3, 4, 5]);
    for (const r of body.rejected) expect(r.error.length).toBeGreaterThan(5);
    const w = await window("CB-08", `?from=${t}&to=${t + 5000}`);
    // 77 °F = 25 °C (domain.md §8.3, °F = 1.8·°C + 32)
    expect(w.body.readings.map((r) => r.temp_c)).toEqual([25, 25]);
  });

  it("counts a resent reading as a duplicate and keeps the first value", async () => {
    const ts = Date.now() - 180_000;
    const first = await post({ readings: [{ sensor: "CB-09", ts, temp_c: 21 }] });
    expect(((await first.json()) as { accepted: number }).accepted).toBe(1);
    const again = await post({
      readings: [
        { sensor: "CB-09", ts, temp_c: 99 },
        { sensor: "CB-09", ts, temp_c: 98 },
      ],
    });
    expect(await again.json()).toEqual({ accepted: 0, duplicates: 2, rejected: [] });
    const w = await window("CB-09", `?from=${ts}&to=${ts}`);
    expect(w.body.readings).toHaveLength(1);
    expect(w.body.readings[0]!.temp_c).toBe(21);
  });

  it("registers a sensor never seen before as new, and keeps its readings", async () => {
    const res = await post({
      readings: [{ sensor: "ZZ-NEW-1", ts: Date.now() - 1000, temp_c: 18.5, rh: 60 }],
    });
    expect(((await res.json()) as { accepted: number }).accepted).toBe(1);
    const sensors = (await (await call(plinth.url, viewer, "/api/v1/sensors")).json()) as {
      id: string;
      status: string;
      kind: string | null;
      last_temp_c: number;
    }[];
    const s = sensors.find((x) => x.id === "ZZ-NEW-1");
    expect(s).toMatchObject({ status: "new", kind: null, last_temp_c: 18.5 });
  });

  it("answers 400 as problem details for a body that is not JSON or not of the shape", async () => {
    for (const body of ["not json", "[]", '{"readings": 5}', '{"other": []}']) {
      const res = await post(body);
      expect(res.status, body).toBe(400);
      expect(res.headers.get("content-type")).toContain("application/problem+json");
      const p = (await res.json()) as { type: string; title: string; status: number };
      expect(p.status).toBe(400);
      expect(p.title.length).toBeGreaterThan(0);
    }
  });

  it("answers 413 past 5,000 readings or 1 MiB", async () => {
    const many = Array.from({ length: 5_001 }, (_, i) => ({ sensor: "CB-10", ts: i, temp_c: 20 }));
    expect((await post({ readings: many })).status).toBe(413);
    const big = JSON.stringify({
      readings: [{ sensor: "CB-10", ts: 1, temp_c: 20, pad: "x".repeat(1024 * 1024) }],
    });
    expect((await post(big)).status).toBe(413);
  });

  it("refuses a request without a key (401), a revoked or wrong key (401), and a person (403)", async () => {
    const body = JSON.stringify({ readings: [] });
    expect(
      (
        await fetch(`${plinth.url}/api/v1/readings`, {
          method: "POST",
          headers: { "content-type": "application/json" },
          body,
        })
      ).status,
    ).toBe(401);
    expect((await post({ readings: [] }, { authorization: "Bearer wrong-key-0000" })).status).toBe(
      401,
    );
    expect(
      (
        await call(plinth.url, manager, "/api/v1/readings", {
          method: "POST",
          headers: { "content-type": "application/json" },
          body,
        })
      ).status,
    ).toBe(403);
  });

  it("is safe to retry a whole batch", async () => {
    const t = Date.now() - 300_000;
    const batch = {
      readings: Array.from({ length: 50 }, (_, i) => ({
        sensor: "CB-11",
        ts: t + i * 1000,
        temp_c: 20 + i / 10,
      })),
    };
    const a = (await (await post(batch)).json()) as { accepted: number; duplicates: number };
    const b = (await (await post(batch)).json()) as { accepted: number; duplicates: number };
    expect(a).toMatchObject({ accepted: 50, duplicates: 0 });
    expect(b).toMatchObject({ accepted: 0, duplicates: 50 });
  });
});

describe("GET /api/v1/sensors/{id}/readings", () => {
  it("thins a long window to max_points without hiding the peak or the dip", async () => {
    const t0 = Date.now() - 2 * 86_400_000;
    const readings = Array.from({ length: 2_000 }, (_, i) => ({
      sensor: "EP-07",
      ts: t0 + i * 60_000,
      temp_c: 30 + (i === 1234 ? 25 : i === 321 ? -20 : 0),
    }));
    expect(((await (await post({ readings })).json()) as { accepted: number }).accepted).toBe(
      2_000,
    );
    const w = await window("EP-07", `?from=${t0}&to=${t0 + 2_000 * 60_000}&max_points=100`);
    expect(w.status).toBe(200);
    expect(w.body.sensor).toBe("EP-07");
    expect(w.body.readings.length).toBeLessThanOrEqual(100);
    const temps = w.body.readings.map((r) => r.temp_c);
    expect(Math.max(...temps)).toBe(55);
    expect(Math.min(...temps)).toBe(10);
    const times = w.body.readings.map((r) => Date.parse(r.ts));
    expect(times).toEqual([...times].sort((a, b) => a - b));
  });

  it("answers 404 for an unknown sensor and 400 for a bad window", async () => {
    expect((await window("NO-SUCH")).status).toBe(404);
    expect((await window("EP-07", "?from=yesterday")).status).toBe(400);
    expect((await window("EP-07", "?max_points=3")).status).toBe(400);
    expect((await window("EP-07", `?from=${Date.now()}&to=${Date.now() - 1000}`)).status).toBe(400);
  });
});

describe("PATCH /api/v1/sensors/{id}", () => {
  it("lets a manager name and place a new sensor, which puts it in service", async () => {
    await post({ readings: [{ sensor: "ZZ-NEW-2", ts: Date.now() - 1000, temp_c: 22 }] });
    const res = await call(plinth.url, manager, "/api/v1/sensors/ZZ-NEW-2", {
      method: "PATCH",
      headers: { "content-type": "application/json" },
      body: JSON.stringify({ label: "Bag 13, room 1", kind: "bag", area: "Cure Room 1" }),
    });
    expect(res.status).toBe(200);
    expect(await res.json()).toMatchObject({
      id: "ZZ-NEW-2",
      label: "Bag 13, room 1",
      kind: "bag",
      area: "Cure Room 1",
      status: "reporting",
    });
  });

  it("refuses an unknown area, an unknown kind, and a viewer", async () => {
    const patch = (cookie: string, body: unknown) =>
      call(plinth.url, cookie, "/api/v1/sensors/CB-12", {
        method: "PATCH",
        headers: { "content-type": "application/json" },
        body: JSON.stringify(body),
      });
    expect((await patch(manager, { area: "Nowhere" })).status).toBe(400);
    expect((await patch(manager, { kind: "wand" })).status).toBe(400);
    expect((await patch(viewer, { label: "x" })).status).toBe(403);
    expect(
      (
        await call(plinth.url, manager, "/api/v1/sensors/NO-SUCH", {
          method: "PATCH",
          headers: { "content-type": "application/json" },
          body: "{}",
        })
      ).status,
    ).toBe(404);
  });
});

describe("GET /api/v1/live", () => {
  it("streams a committed reading to a connected client within a second", async () => {
    const controller = new AbortController();
    const res = await fetch(`${plinth.url}/api/v1/live`, {
      headers: { cookie: viewer },
      signal: controller.signal,
    });
    expect(res.status).toBe(200);
    expect(res.headers.get("content-type")).toContain("text/event-stream");
    const reader = res.body!.getReader();
    const decoder = new TextDecoder();
    let text = "";
    const ts = Date.now() - 500;
    const got = (async () => {
      for (;;) {
        const { value, done } = await reader.read();
        if (done) return false;
        text += decoder.decode(value);
        if (text.includes('"sensor":"CB-12"') && text.includes(`"ts":${ts}`)) return true;
      }
    })();
    await new Promise((r) => setTimeout(r, 100));
    await post({ readings: [{ sensor: "CB-12", ts, temp_c: 23.4, rh: 97 }] });
    const timeout = new Promise<false>((r) => setTimeout(() => r(false), 1_000));
    expect(await Promise.race([got, timeout])).toBe(true);
    expect(text).toContain("event: readings");
    controller.abort();
  });
});
