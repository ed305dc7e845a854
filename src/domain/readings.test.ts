import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { applyOffsets, checkReading, parseTimestamp } from "./readings";

const now = Date.parse("2026-03-02T04:10:00Z");
const ok = (raw: unknown, topic?: string) => {
  const r = checkReading(raw, now, topic);
  if (!r.ok) throw new Error(r.error);
  return r.reading;
};
const err = (raw: unknown, topic?: string) => {
  const r = checkReading(raw, now, topic);
  return r.ok ? null : r.error;
};

// The rules below are the readings contract (shared/contracts.md, "Readings in").
describe("a reading", () => {
  it("is accepted in the contract's own example", () => {
    expect(ok({ sensor: "CB-07", ts: "2026-03-02T04:10:00Z", temp_c: 31.2, rh: 96.5 })).toEqual({
      sensorId: "CB-07",
      tsMs: now,
      tempC: 31.2,
      rhPct: 96.5,
      batteryPct: null,
    });
  });

  it("takes epoch milliseconds and offsets other than Z", () => {
    expect(ok({ sensor: "A", ts: now, temp_c: 20 }).tsMs).toBe(now);
    expect(ok({ sensor: "A", ts: "2026-03-01T22:10:00-06:00", temp_c: 20 }).tsMs).toBe(now);
  });

  // domain.md §8.3: °F = 1.8·°C + 32; 88 °F... 190.4 °F is 88 °C.
  it("converts temp_f to °C", () => {
    expect(ok({ sensor: "A", ts: now, temp_f: 190.4 }).tempC).toBeCloseTo(88, 9);
    expect(ok({ sensor: "A", ts: now, temp_f: 14 }).tempC).toBeCloseTo(-10, 9);
  });

  it.each([
    [{ sensor: "A", ts: now + 10 * 60_000 + 1, temp_c: 20 }, /future/],
    [{ sensor: "A", ts: now, temp_c: -40.1 }, /outside/],
    [{ sensor: "A", ts: now, temp_c: 120.1 }, /outside/],
    [{ sensor: "A", ts: now, temp_f: 250 }, /outside/],
    [{ sensor: "A", ts: now, temp_c: 20, rh: 100.5 }, /rh/],
    [{ sensor: "A", ts: now, temp_c: 20, rh: -1 }, /rh/],
    [{ sensor: "A", ts: now, temp_c: "20" }, /finite number/],
    [{ sensor: "A", ts: now, temp_c: Number.NaN }, /finite number/],
    [{ sensor: "A", ts: now, temp_c: Number.POSITIVE_INFINITY }, /finite number/],
    [{ sensor: "A", ts: now }, /missing/],
    [{ sensor: "A", temp_c: 20 }, /ts is missing/],
    [{ ts: now, temp_c: 20 }, /sensor/],
    [{ sensor: "A", ts: "2026-03-02T04:10:00", temp_c: 20 }, /offset/],
    [{ sensor: "A", ts: "yesterday", temp_c: 20 }, /ts must/],
    [{ sensor: "A", ts: now, temp_c: 20, temp_f: 68 }, /not both/],
    [{ sensor: "'; drop table readings; --", ts: now, temp_c: 20 }, /sensor must/],
    [{ sensor: "ＣＢ-07", ts: now, temp_c: 20 }, /sensor must/],
    [[1, 2], /object/],
    [null, /object/],
  ])("is rejected with a clear error: %j", (raw, pattern) => {
    expect(err(raw)).toMatch(pattern);
  });

  it("keeps the boundaries: −40 °C, 120 °C, 0 and 100 % RH, exactly 10 minutes ahead", () => {
    expect(ok({ sensor: "A", ts: now + 10 * 60_000, temp_c: -40, rh: 0 }).tempC).toBe(-40);
    expect(ok({ sensor: "A", ts: now, temp_c: 120, rh: 100 }).rhPct).toBe(100);
  });

  it("takes the sensor from an MQTT topic, and refuses a body that disagrees", () => {
    expect(ok({ ts: now, temp_c: 20 }, "EP-03").sensorId).toBe("EP-03");
    expect(err({ sensor: "EP-04", ts: now, temp_c: 20 }, "EP-03")).toMatch(/topic/);
  });

  it("never accepts a non-finite number or a value out of range, whatever is sent", () => {
    fc.assert(
      fc.property(fc.anything(), fc.anything(), fc.anything(), (ts, t, rh) => {
        const r = checkReading({ sensor: "X-1", ts, temp_c: t, rh }, now);
        if (r.ok) {
          expect(Number.isFinite(r.reading.tempC)).toBe(true);
          expect(r.reading.tempC).toBeGreaterThanOrEqual(-40);
          expect(r.reading.tempC).toBeLessThanOrEqual(120);
          expect(r.reading.tsMs).toBeLessThanOrEqual(now + 600_000);
        }
      }),
    );
  });
});

describe("timestamps", () => {
  it("refuses fractions of a millisecond and negative epochs", () => {
    expect(parseTimestamp(1.5)).toBeNull();
    expect(parseTimestamp(-1)).toBeNull();
  });
});

describe("calibration offsets", () => {
  it("adds the offsets and keeps humidity within 0 to 100 %", () => {
    const r = { sensorId: "A", tsMs: 0, tempC: 20, rhPct: 99, batteryPct: null };
    expect(applyOffsets(r, -0.4, 2)).toMatchObject({ tempC: 19.6, rhPct: 100 });
  });
});
