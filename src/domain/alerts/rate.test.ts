import { describe, expect, it } from "vitest";
import { rateCPerH, trimPoints, type TempPoint } from "./rate";

const MIN = 60_000;
const T0 = Date.UTC(2026, 2, 2, 0, 0);

/** The reference precast cycle of domain.md §7.6 at one reading a minute. */
function referenceCycle(): TempPoint[] {
  const out: TempPoint[] = [];
  for (let m = 0; m <= 15 * 60; m++) {
    const h = m / 60;
    let t: number;
    if (h <= 3) t = 20;
    else if (h <= 5) t = 20 + (h - 3) * 20;
    else if (h <= 13) t = 60;
    else t = 60 - (h - 13) * 20;
    out.push({ tsMs: T0 + m * MIN, tempC: t });
  }
  return out;
}

describe("rate of temperature change", () => {
  it("reads the reference precast cycle's ramps as +20 and -20 °C/h", () => {
    // domain.md §7.6 reference precast cycle: maximum rise and fall rates ±20.0 °C/h.
    const cycle = referenceCycle();
    expect(rateCPerH(cycle.slice(0, 4 * 60 + 31))).toBeCloseTo(20, 9); // at 4.5 h, on the ramp
    expect(rateCPerH(cycle.slice(0, 14 * 60 + 31))).toBeCloseTo(-20, 9); // at 14.5 h, cooling
    expect(rateCPerH(cycle.slice(0, 9 * 60 + 1))).toBeCloseTo(0, 9); // the hold
  });

  it("tells a 23 °C/h rise from a 20 °C/h one (domain.md §7.5 vectors, limit 22 °C/h)", () => {
    const ramp = (perH: number) =>
      Array.from({ length: 61 }, (_, m) => ({ tsMs: T0 + m * MIN, tempC: 20 + (perH * m) / 60 }));
    expect(rateCPerH(ramp(20))!).toBeLessThanOrEqual(22);
    expect(rateCPerH(ramp(23))!).toBeGreaterThan(22);
    // Cooling 4 °C/h against the 3 °C/h cold-weather limit (domain.md §7.5, UFGS).
    expect(-rateCPerH(ramp(-4))!).toBeGreaterThan(3);
  });

  it("ignores one reading's jitter that neighbouring readings would make a steep ramp", () => {
    const flat = Array.from({ length: 61 }, (_, m) => ({
      tsMs: T0 + m * MIN,
      tempC: 30 + (m === 60 ? 0.5 : 0),
    }));
    expect(Math.abs(rateCPerH(flat)!)).toBeLessThan(1);
  });

  it("has no rate without an earlier reading 30 to 90 minutes back", () => {
    expect(rateCPerH([])).toBeNull();
    expect(rateCPerH([{ tsMs: T0, tempC: 20 }])).toBeNull();
    expect(
      rateCPerH([
        { tsMs: T0, tempC: 20 },
        { tsMs: T0 + 20 * MIN, tempC: 30 },
      ]),
    ).toBeNull();
    expect(
      rateCPerH([
        { tsMs: T0, tempC: 20 },
        { tsMs: T0 + 3 * 60 * MIN, tempC: 30 },
      ]),
    ).toBeNull();
    // A gateway sending every 45 min still gets a rate.
    expect(
      rateCPerH([
        { tsMs: T0, tempC: 20 },
        { tsMs: T0 + 45 * MIN, tempC: 35 },
      ]),
    ).toBeCloseTo(20, 9);
  });

  it("trims a buffer to the last stretch", () => {
    const pts = referenceCycle().slice(0, 200);
    trimPoints(pts, 90 * MIN);
    expect(pts.length).toBe(91);
    expect(pts[pts.length - 1]!.tsMs - pts[0]!.tsMs).toBe(90 * MIN);
  });
});
