import { afterEach, describe, expect, it, vi } from "vitest";
import { demoNowFromPour, startSimulator, type Simulator } from "./index";
import { demoPours, demoSensors } from "./plant";
import { startFakePlinth, startTestBroker } from "./test-support";

const KEY = "demo-gateway-key-0001";
let cleanup: (() => Promise<unknown>)[] = [];
afterEach(async () => {
  for (const c of cleanup.reverse()) await c();
  cleanup = [];
});

function track(sim: Simulator): Simulator {
  cleanup.push(() => sim.stop({ drainMs: 0 }));
  return sim;
}

async function fakePlinth() {
  const plinth = await startFakePlinth(KEY);
  cleanup.push(() => plinth.close());
  return plinth;
}

describe("the simulator", () => {
  it("sends one round over HTTP with --once and stops when it is delivered", async () => {
    const plinth = await fakePlinth();
    const lines: string[] = [];
    const sim = track(
      startSimulator({
        transport: "http",
        httpUrl: plinth.url,
        once: true,
        statusEveryS: 0,
        log: (l) => lines.push(l),
      }),
    );
    const result = await sim.done;
    expect(result.undelivered).toBe(0);
    expect(result.fatal).toBeNull();
    expect(result.report).toMatchObject({
      rounds: 1,
      sent: demoSensors.length,
      accepted: demoSensors.length,
    });
    expect(plinth.stored.size).toBe(demoSensors.length);
    expect(lines.at(-1)).toMatch(
      /^simulator http · .* · sent 39 · accepted 39 · duplicates 0 · rejected 0 · queue 0 · stopped$/,
    );
  });

  it("sends one round over MQTT with --once, faults applied", async () => {
    const broker = await startTestBroker("demo-gateway", KEY);
    cleanup.push(() => broker.close());
    const sim = track(
      startSimulator({
        transport: "mqtt",
        mqttUrl: broker.url,
        once: true,
        statusEveryS: 0,
        log: () => {},
        sensors: "EP-*",
        faults: "silent:EP-03",
      }),
    );
    const result = await sim.done;
    expect(result.report).toMatchObject({ rounds: 1, sent: 7, acked: 7, faults: ["silent:EP-03"] });
    expect(broker.published.map((m) => m.topic).sort()).toEqual(
      ["EP-01", "EP-02", "EP-04", "EP-05", "EP-06", "EP-07", "EP-08"].map(
        (s) => `plinth/readings/${s}`,
      ),
    );
  });

  it("started in the past at speed, sends the backlog quickly and then keeps to the clock", async () => {
    const plinth = await fakePlinth();
    const t0 = Date.now();
    const sim = track(
      startSimulator({
        transport: "http",
        httpUrl: plinth.url,
        startMs: t0 - 2 * 3_600_000,
        speed: 20_000,
        intervalS: 600,
        sensors: "AM-01",
        statusEveryS: 0,
        log: () => {},
      }),
    );
    // Rounds on the 10-minute marks from two hours back up to now, then none until the next mark.
    const step = 600_000;
    const due = () => Math.floor(Date.now() / step) - Math.floor((t0 - 2 * 3_600_000) / step) + 1;
    await vi.waitFor(() => expect(plinth.stored.size).toBe(due()));
    await new Promise((r) => setTimeout(r, 200));
    expect(plinth.stored.size).toBe(due());
    const ts = [...plinth.stored.values()].map((r) => r.tsMs);
    expect(Math.max(...ts)).toBeLessThanOrEqual(Date.now());
    expect(Math.min(...ts)).toBeGreaterThanOrEqual(t0 - 2 * 3_600_000 - step);
    await sim.stop();
  });

  it("switches faults at run time from control commands", async () => {
    const plinth = await fakePlinth();
    const lines: string[] = [];
    const sim = track(
      startSimulator({
        transport: "http",
        httpUrl: plinth.url,
        statusEveryS: 0,
        log: (l) => lines.push(l),
        faults: "cold-snap",
      }),
    );
    expect(sim.faults()).toEqual(["cold-snap:8"]);
    expect(sim.command("dry-bag:CB-14")).toBe("faults on: cold-snap:8, dry-bag:CB-14");
    expect(sim.command("-cold-snap")).toBe("faults on: dry-bag:CB-14");
    expect(sim.command("dry-bag:CB-14")).toBe("no faults on");
    expect(sim.command("+silent:EP-0*")).toBe("faults on: silent:EP-0*");
    expect(sim.command("faults")).toBe("faults on: silent:EP-0*");
    expect(sim.command("flood")).toMatch(/unknown fault "flood"/);
    expect(sim.command("help")).toContain("out-of-order[:ROUNDS]");
    expect(sim.command("status")).toMatch(/^simulator http/);
    sim.clearFaults();
    expect(sim.faults()).toEqual([]);
    expect(lines).toContain("simulator: fault on: dry-bag:CB-14");
    expect(lines).toContain("simulator: fault off: cold-snap:8");
    expect(sim.command("stop")).toMatch(/stopping/);
    const result = await sim.done;
    expect(result.undelivered).toBe(0);
  });

  it("stops by itself, saying why, when Plinth refuses the key", async () => {
    const plinth = await fakePlinth();
    const lines: string[] = [];
    const sim = track(
      startSimulator({
        transport: "http",
        httpUrl: plinth.url,
        key: "wrong",
        statusEveryS: 0,
        log: (l) => lines.push(l),
      }),
    );
    const result = await sim.done;
    expect(result.fatal).toMatch(/refused the gateway key/);
    expect(lines.some((l) => l.includes("refused the gateway key"))).toBe(true);
  });

  it("finds the demo's now from a pour as Plinth stored it", () => {
    const pour = demoPours[0]!;
    const seededAt = Date.UTC(2026, 2, 2, 4, 0, 0);
    expect(demoNowFromPour(pour.code, seededAt - pour.castHoursAgo * 3_600_000)).toBe(seededAt);
    expect(() => demoNowFromPour("P-0000-00", 0)).toThrow();
  });
});
