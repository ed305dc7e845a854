import { describe, expect, it } from "vitest";
import { ttfReachedAt } from "./crossing";

const H = 3_600_000;
const params = { datumC: -10, activationEnergyJMol: 41_570 };
const steady = (hours: number, tempC: number) =>
  Array.from({ length: hours + 1 }, (_, i) => ({ tsMs: i * H, tempC }));

describe("when a temperature-time factor was reached", () => {
  // domain.md §1.5 N-2: 24 h at 20 °C with datum −10 °C gives 720 °C·h, so 360 °C·h falls at 12 h.
  it("finds the hour of a steady history", () => {
    expect(ttfReachedAt(steady(24, 20), 0, params, 720)).toBe(24 * H);
    expect(ttfReachedAt(steady(24, 20), 0, params, 360)).toBe(12 * H);
  });

  it("interpolates inside an interval", () => {
    // 30 °C·h per hour: 45 °C·h is reached half-way through the second hour.
    expect(ttfReachedAt(steady(3, 20), 0, params, 45)).toBe(1.5 * H);
  });

  it("is null when the target is not reached", () => {
    expect(ttfReachedAt(steady(24, 20), 0, params, 721)).toBeNull();
  });

  // domain.md §1.3 and §1.5 N-5: hours at −15 °C add nothing with datum −10 °C; 5 °C adds 15 °C·h an hour.
  it("adds nothing below the datum", () => {
    const cold = [
      ...steady(6, -15),
      ...steady(6, 5).map((r) => ({ tsMs: r.tsMs + 7 * H, tempC: 5 })),
    ];
    // 6 → 7 h: interval mean −5 °C adds 5 °C·h; 7 → 13 h add 6 × 15 = 90.
    expect(ttfReachedAt(cold, 0, params, 5)).toBe(7 * H);
    expect(ttfReachedAt(cold, 0, params, 95)).toBe(13 * H);
    expect(ttfReachedAt(cold, 0, params, 0.5)).toBe(6.1 * H);
  });

  it("adds nothing across a gap over 2 hours", () => {
    const gap = [
      { tsMs: 0, tempC: 20 },
      { tsMs: 1 * H, tempC: 20 },
      { tsMs: 4 * H, tempC: 20 },
      { tsMs: 5 * H, tempC: 20 },
    ];
    expect(ttfReachedAt(gap, 0, params, 60)).toBe(5 * H);
  });
});
