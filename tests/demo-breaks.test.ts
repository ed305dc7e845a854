import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoMixes } from "../simulator/plant";
import { call, demoEmail, signIn, startPlinth, type RunningPlinth } from "./helpers/server";

// The demo plant's lab breaks (each mix's calibration points) carry the maturity of cylinders
// held at 23 °C from moulding to the break: the temperature-time factor and the equivalent age
// at 20 °C with the mix's activation energy. Check values from /work/shared/domain.md.

let plinth: RunningPlinth;
let viewer: string;

beforeAll(async () => {
  plinth = await startPlinth();
  viewer = await signIn(plinth.url, demoEmail("viewer"));
});
afterAll(async () => {
  await plinth?.stop();
});

interface Point {
  age_h: number | null;
  ttf_c_h: number;
  equivalent_age_h: number | null;
  specimens: string | null;
}

async function mixPoints(name: string): Promise<Point[]> {
  const list = (await (await call(plinth.url, viewer, "/api/v1/mixes")).json()) as {
    mixes: { id: number; name: string }[];
  };
  const id = list.mixes.find((m) => m.name === name)!.id;
  const res = await call(plinth.url, viewer, `/api/v1/mixes/${id}/points`);
  expect(res.status).toBe(200);
  return ((await res.json()) as { points: Point[] }).points;
}

describe("the demo mixes' lab breaks", () => {
  const withBreaks = demoMixes.filter((m) => m.breaks.length > 0);

  it.each(withBreaks.map((m) => [m.name, m] as const))(
    "%s: every break has its age, maturity and equivalent age at test",
    async (_name, mix) => {
      const points = await mixPoints(mix.name);
      expect(points.map((p) => p.age_h)).toEqual(mix.breaks.map(([days]) => days * 24));
      for (const p of points) {
        const ageH = p.age_h!;
        // ASTM C1074 Eq. 1 at one constant temperature: age × (23 − datum) (domain.md §1.5,
        // N-1/N-2 form); the demo mixes' datum is −10 °C.
        expect(p.ttf_c_h).toBeCloseTo(ageH * (23 - mix.datumC), 1);
        // domain.md §2.3 [D], Q = 5000 K (E = 41.57 kJ/mol, the demo mixes' activation energy),
        // Ts = 20 °C: the age conversion factor at 23 °C is 1.1886 (±5e-4).
        expect(mix.activationEnergyJMol).toBe(41_570);
        expect(p.equivalent_age_h).not.toBeNull();
        expect(Math.abs(p.equivalent_age_h! / ageH - 1.1886)).toBeLessThan(1e-3);
      }
    },
  );

  it("HS-10's 28-day break is about 799 h old at 20 °C", async () => {
    // domain.md §2.3 [D]: 28 d × 24 h × 1.1886 = 798.7 h (±5e-4 on the factor: ±0.34 h).
    const points = await mixPoints("HS-10");
    const last = points.find((p) => p.age_h === 28 * 24)!;
    expect(Math.abs(last.equivalent_age_h! - 798.74)).toBeLessThan(0.5);
  });
});
