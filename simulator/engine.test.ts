import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { batchReading, singleReadingPayload } from "./contract";
import {
  createEngine,
  FLAWS,
  flushEngine,
  initialEngineState,
  selectSensors,
  stepEngine,
  type EngineConfig,
  type Outgoing,
  type Reading,
} from "./engine";
import { parseFaults, type Fault } from "./faults";
import { demoSensors } from "./plant";
import { aloneBatchBody, batchElement, packBatches, singlePayload, type Units } from "./wire";

const NOW = Date.UTC(2026, 2, 2, 4, 0, 0);
const MIN = 60_000;
const HOUR = 3_600_000;
const cfg: EngineConfig = { sensors: demoSensors, demoNowMs: NOW, seed: 11 };

/** Runs an engine over `rounds` rounds `stepMs` apart from NOW; returns every item, round by round. */
function run(faults: Fault[], rounds: number, stepMs = 10 * MIN, config = cfg) {
  const engine = createEngine(config, faults);
  const out: Outgoing[][] = [];
  for (let i = 0; i < rounds; i++) out.push(engine.tick(NOW + i * stepMs));
  return { engine, out };
}

const readingsOf = (items: readonly Outgoing[]) =>
  items.flatMap((i) => (i.kind === "reading" ? [i.reading] : []));
const at = (items: readonly Outgoing[], sensor: string, ts: number): Reading => {
  const r = readingsOf(items).find((x) => x.sensor === sensor && x.ts === ts);
  if (!r) throw new Error(`no reading of ${sensor} at ${new Date(ts).toISOString()}`);
  return r;
};
const key = (r: Reading) => `${r.sensor}|${r.ts}`;

describe("the engine without faults", () => {
  it("sends one reading from every sensor each round, at the round's time", () => {
    const { out } = run([], 3);
    out.forEach((round, i) => {
      expect(round).toHaveLength(demoSensors.length);
      expect(new Set(readingsOf(round).map((r) => r.sensor)).size).toBe(demoSensors.length);
      expect(readingsOf(round).every((r) => r.ts === NOW + i * 10 * MIN)).toBe(true);
    });
  });

  it("gives the same stream for the same inputs", () => {
    const faults = parseFaults("duplicates:0.3,malformed:0.2,out-of-order:3", demoSensors);
    expect(run(faults, 9).out).toEqual(run(faults, 9).out);
  });

  it("reads what the demo physics reads", () => {
    const { out } = run([], 1);
    expect(at(out[0]!, "EP-06", NOW).tempC).toBeGreaterThan(30); // P-2611-04, 11 h old, near its heat peak
    expect(at(out[0]!, "CB-14", NOW).rhPct).toBeGreaterThan(95);
    expect(at(out[0]!, "AB-01", NOW).rhPct).toBeNull();
  });
});

describe("faults in the engine", () => {
  it("a dry bag's RH falls toward the room over hours, and a re-wetted bag recovers", () => {
    const faults = parseFaults("dry-bag:CB-14", demoSensors);
    const dry = createEngine(cfg, faults);
    const wet = createEngine(cfg, []);
    const rhAt: { dry: number; wet: number; h: number }[] = [];
    for (let m = 0; m <= 8 * 60; m += 10) {
      const t = NOW + m * MIN;
      const d = at(dry.tick(t), "CB-14", t).rhPct!;
      const w = at(wet.tick(t), "CB-14", t).rhPct!;
      rhAt.push({ dry: d, wet: w, h: m / 60 });
    }
    const after = (h: number) => rhAt.find((x) => x.h === h)!;
    expect(after(0).dry).toBeCloseTo(after(0).wet, 5);
    expect(after(1).dry).toBeLessThan(after(1).wet - 10);
    expect(after(8).dry).toBeLessThan(52); // the room is at 45 %
    expect(after(8).wet).toBeGreaterThan(95);
    expect(after(4).dry).toBeGreaterThan(after(8).dry);

    // Other bags keep their pads wet.
    const t8 = NOW + 8 * HOUR;
    expect(at(wet.tick(t8 + 10 * MIN), "CB-13", t8 + 10 * MIN)).toEqual(
      at(dry.tick(t8 + 10 * MIN), "CB-13", t8 + 10 * MIN),
    );

    dry.faults = [];
    let t = t8 + 10 * MIN;
    for (let m = 0; m < 3 * 60; m += 10) dry.tick((t += 10 * MIN));
    expect(at(dry.tick(t + 10 * MIN), "CB-14", t + 10 * MIN).rhPct).toBeGreaterThan(95);
  });

  it("a cold snap lowers temperatures, the air first and the concrete more slowly, and passes", () => {
    const snap = createEngine(cfg, parseFaults("cold-snap:10", demoSensors));
    const calm = createEngine(cfg, []);
    /** Both engines one round at `t`; how much colder each sensor reads under the snap. */
    const colder = (t: number) => {
      const s = snap.tick(t);
      const c = calm.tick(t);
      return (sensor: string) => at(c, sensor, t).tempC - at(s, sensor, t).tempC;
    };
    expect(colder(NOW)("AM-01")).toBe(0);
    for (let m = 10; m < 60; m += 10) colder(NOW + m * MIN);
    const d = colder(NOW + HOUR);
    expect(d("AM-01")).toBeGreaterThan(9);
    expect(d("AM-03")).toBeGreaterThan(9);
    expect(d("CB-14")).toBeGreaterThan(2);
    expect(d("CB-14")).toBeLessThan(d("AM-01"));
    expect(d("EP-05")).toBeLessThan(d("CB-14"));
    expect(d("AB-01")).toBeLessThan(d("EP-05"));
    expect(d("AB-01")).toBeGreaterThan(0);

    snap.faults = [];
    for (let m = 10; m < 24 * 60; m += 10) colder(NOW + HOUR + m * MIN);
    const later = colder(NOW + 25 * HOUR);
    for (const s of ["AM-01", "EP-05", "AB-01"]) expect(Math.abs(later(s))).toBeLessThan(0.3);
  });

  it("a silent sensor sends nothing while the others carry on", () => {
    const { out, engine } = run(
      parseFaults("silent:EP-03,malformed:1,duplicates:0.5", demoSensors),
      6,
    );
    const all = [...out.flat(), ...engine.flush()];
    expect(all.some((i) => i.reading.sensor === "EP-03")).toBe(false);
    const others = new Set(readingsOf(all).map((r) => r.sensor));
    expect(others.size).toBe(demoSensors.length - 1);
  });

  it("a silent sensor speaks again when the fault is switched off, leaving a gap", () => {
    const engine = createEngine(cfg, parseFaults("silent:EP-0*", demoSensors));
    const seen: Reading[] = [];
    for (let i = 0; i < 6; i++) {
      if (i === 3) engine.faults = [];
      seen.push(...readingsOf(engine.tick(NOW + i * 10 * MIN)));
    }
    const ep03 = seen.filter((r) => r.sensor === "EP-03").map((r) => (r.ts - NOW) / MIN);
    expect(ep03).toEqual([30, 40, 50]);
  });

  it("duplicates repeat the same sensor and ts, and only those", () => {
    const { out, engine } = run(parseFaults("duplicates:0.3", demoSensors), 6);
    const all = [...out.flat(), ...engine.flush()];
    const counts = new Map<string, Reading[]>();
    for (const r of readingsOf(all)) counts.set(key(r), [...(counts.get(key(r)) ?? []), r]);
    expect(counts.size).toBe(6 * demoSensors.length);
    const twice = [...counts.values()].filter((rs) => rs.length > 1);
    expect(twice.length).toBeGreaterThan(0.15 * counts.size);
    expect(twice.length).toBeLessThan(0.45 * counts.size);
    for (const rs of twice) {
      expect(rs).toHaveLength(2);
      expect(rs[1]).toEqual(rs[0]);
    }
  });

  it("out-of-order holds rounds back, then sends them with times that go backwards", () => {
    const { out, engine } = run(parseFaults("out-of-order:3", demoSensors), 7);
    expect(out[0]).toHaveLength(0);
    expect(out[1]).toHaveLength(0);
    expect(out[2]).toHaveLength(3 * demoSensors.length);
    const sent = readingsOf([...out.flat(), ...engine.flush()]);
    expect(new Set(sent.map(key)).size).toBe(7 * demoSensors.length);
    for (const s of demoSensors) {
      const ts = sent.filter((r) => r.sensor === s.id).map((r) => r.ts);
      const backwards = ts.some((t, i) => i > 0 && t < ts[i - 1]!);
      expect(backwards, `${s.id} went forward only`).toBe(true);
    }
  });

  it("switching out-of-order off sends the held backlog with the next round", () => {
    const engine = createEngine(cfg, parseFaults("out-of-order:10", demoSensors));
    expect(engine.tick(NOW)).toHaveLength(0);
    expect(engine.tick(NOW + MIN)).toHaveLength(0);
    engine.faults = [];
    const next = engine.tick(NOW + 2 * MIN);
    expect(next).toHaveLength(3 * demoSensors.length);
    expect(readingsOf(next.slice(0, demoSensors.length)).every((r) => r.ts === NOW + 2 * MIN)).toBe(
      true,
    );
  });

  it("malformed payloads fail the contract's shape, in every form they are sent", () => {
    const { out } = run(parseFaults("malformed:1", demoSensors), 4);
    const bad = out
      .flat()
      .filter((i): i is Outgoing & { kind: "malformed" } => i.kind === "malformed");
    expect(bad.length).toBe(4 * demoSensors.length);
    expect(new Set(bad.map((i) => i.flaw))).toEqual(new Set(FLAWS));
    const failsShape = (
      text: string,
      schema: typeof singleReadingPayload | typeof batchReading,
    ) => {
      let json: unknown;
      try {
        json = JSON.parse(text);
      } catch {
        return true;
      }
      return !schema.safeParse(json).success;
    };
    for (const units of ["c", "f"] as Units[]) {
      for (const item of bad) {
        expect(
          failsShape(singlePayload(item, units), singleReadingPayload),
          singlePayload(item, units),
        ).toBe(true);
        const el = batchElement(item, units);
        if (el === null) {
          expect(() => JSON.parse(aloneBatchBody(item, units))).toThrow();
        } else {
          expect(failsShape(el, batchReading), el).toBe(true);
        }
      }
    }
  });

  it("good readings fit the contract's shape, in °C and in °F", () => {
    const { out } = run([], 1);
    for (const item of out[0]!) {
      const c = JSON.parse(singlePayload(item, "c"));
      expect(singleReadingPayload.safeParse(c).success).toBe(true);
      expect(c.temp_c).toBe(item.reading.tempC);
      const f = JSON.parse(batchElement(item, "f")!);
      expect(batchReading.safeParse(f).success).toBe(true);
      expect(f.temp_c).toBeUndefined();
      expect(f.temp_f).toBeCloseTo((item.reading.tempC * 9) / 5 + 32, 1);
      expect(f.sensor).toBe(item.reading.sensor);
      expect(Date.parse(f.ts)).toBe(item.reading.ts);
    }
  });

  it("loses no good reading of a sensor that is not silenced, whatever the other faults", () => {
    const faultArb = fc.subarray(
      [
        "duplicates:0.4",
        "malformed:0.3",
        "out-of-order:4",
        "cold-snap:12",
        "dry-bag:CB-1*",
        "silent:AM-0*",
      ],
      { minLength: 0 },
    );
    fc.assert(
      fc.property(
        faultArb,
        fc.integer({ min: 1, max: 1_000_000 }),
        fc.integer({ min: 1, max: 9 }),
        (specs, seed, rounds) => {
          const faults = parseFaults(specs.join(","), demoSensors);
          const config = { ...cfg, seed };
          let state = initialEngineState;
          const items: Outgoing[] = [];
          for (let i = 0; i < rounds; i++) {
            const step = stepEngine(config, state, faults, NOW + i * 5 * MIN);
            state = step.state;
            items.push(...step.items);
          }
          items.push(...flushEngine(config, state).items);
          const silent = specs.includes("silent:AM-0*") ? 3 : 0;
          const keys = new Set(readingsOf(items).map(key));
          expect(keys.size).toBe(rounds * (demoSensors.length - silent));
          for (const r of readingsOf(items))
            expect(
              batchReading.safeParse(
                JSON.parse(batchElement({ kind: "reading", reading: r }, "c")!),
              ).success,
            ).toBe(true);
        },
      ),
      { numRuns: 60 },
    );
  });
});

describe("packing for the wire", () => {
  it("keeps order, respects the batch size and sends bad JSON and NaN alone", () => {
    const { out } = run(parseFaults("malformed:0.5", demoSensors), 3);
    const items = out.flat();
    const messages = packBatches(items, 25, "c", null);
    expect(messages.flatMap((m) => m.items)).toEqual(items);
    for (const m of messages) {
      expect(m.items.length).toBeLessThanOrEqual(25);
      if (m.alone) expect(m.items).toHaveLength(1);
      else expect(JSON.parse(m.body).readings).toHaveLength(m.items.length);
    }
    expect(messages.some((m) => m.alone)).toBe(true);
  });
});

describe("choosing sensors", () => {
  it("takes ids and globs, and sends an unknown id as a new sensor", () => {
    expect(selectSensors("CB-1*,EP-05").map((s) => s.id)).toEqual([
      ...Array.from({ length: 10 }, (_, i) => `CB-${10 + i}`),
      "EP-05",
    ]);
    expect(selectSensors(undefined)).toHaveLength(demoSensors.length);
    const fresh = selectSensors("XT-99");
    expect(fresh).toEqual([{ id: "XT-99", label: "XT-99", kind: "bag", area: "Cure Room 1" }]);
    expect(() => selectSensors("ZZ-*")).toThrow(/matches no sensor/);
    expect(() => selectSensors("bad id!")).toThrow(/not a sensor id/);
  });
});
