import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { demoMixes } from "../simulator/plant";
import { call, demoEmail, signIn, startPlinth, type RunningPlinth } from "./helpers/server";

// GET /api/v1/pours/{id}/strength against an independent computation written here from the
// contract's definitions (shared/contracts.md, "GET /api/v1/pours/{id}/strength") and the
// formulas of shared/domain.md §1 and §2. Nothing here imports Plinth's own maturity code.

const H = 3_600_000;
const KEY = "demo-gateway-key-0001";
/** Pascals per psi, exact by definition (domain.md §8.3). */
const PA_PER_PSI = 6894.757293168361;
const mpaToPsi = (mpa: number) => (mpa * 1e6) / PA_PER_PSI;
const psiToMpa = (psi: number) => (psi * PA_PER_PSI) / 1e6;
/** Contract: R = 8.314 J/(mol·K); equivalent age at 20 °C; 0 °C = 273.15 K (domain.md §0). */
const R = 8.314;
const TS_K = 20 + 273.15;
const MAX_GAP_H = 2; // contract: "a gap longer than 2 hours adds nothing"

interface Reading {
  ts: number;
  temp: number;
}

/** Time order, one reading per timestamp, nothing before cast or after `asOf`. */
function history(rs: readonly Reading[], castMs: number, asOfMs = Infinity): Reading[] {
  const seen = new Set<number>();
  return [...rs]
    .filter((r) => r.ts >= castMs && r.ts <= asOfMs && !seen.has(r.ts) && seen.add(r.ts))
    .sort((a, b) => a.ts - b.ts);
}

/** Each interval between consecutive readings, with the hours it spans and its trapezoid mean. */
function intervals(rs: readonly Reading[]) {
  const out: { a: Reading; b: Reading; hours: number; meanC: number }[] = [];
  for (let i = 1; i < rs.length; i++) {
    const a = rs[i - 1]!;
    const b = rs[i]!;
    out.push({ a, b, hours: (b.ts - a.ts) / H, meanC: (a.temp + b.temp) / 2 });
  }
  return out;
}

/** Nurse-Saul M = Σ max(Ta − T0, 0)·Δt over intervals of at most 2 h (ASTM C1074 Eq. 1; contract). */
function nurseSaul(rs: readonly Reading[], castMs: number, datumC: number): number {
  return intervals(history(rs, castMs))
    .filter((i) => i.hours <= MAX_GAP_H)
    .reduce((m, i) => m + Math.max(i.meanC - datumC, 0) * i.hours, 0);
}

/** te = Σ exp[−(E/R)(1/Ta − 1/Ts)]·Δt, Ts = 20 °C, intervals of at most 2 h (ASTM C1074 Eq. 2; contract). */
function equivalentAge(rs: readonly Reading[], castMs: number, energyJMol: number): number {
  return intervals(history(rs, castMs))
    .filter((i) => i.hours <= MAX_GAP_H)
    .reduce(
      (te, i) => te + Math.exp((-energyJMol / R) * (1 / (i.meanC + 273.15) - 1 / TS_K)) * i.hours,
      0,
    );
}

/** Contract: complete when no gap over 2 h from cast to now (a silent sensor is a gap). */
function complete(rs: readonly Reading[], castMs: number, asOfMs: number): boolean {
  const h = history(rs, castMs, asOfMs);
  if (h.length === 0) return false;
  const times = [castMs, ...h.map((r) => r.ts), asOfMs];
  return times.every((t, i) => i === 0 || (t - times[i - 1]!) / H <= MAX_GAP_H);
}

/** When the factor first reached `targetCH`, growing evenly through the interval it falls in. */
function reachedAt(rs: readonly Reading[], castMs: number, datumC: number, targetCH: number) {
  let m = 0;
  for (const i of intervals(history(rs, castMs))) {
    if (i.hours > MAX_GAP_H) continue;
    const add = Math.max(i.meanC - datumC, 0) * i.hours;
    if (m + add >= targetCH && add > 0) return i.a.ts + ((targetCH - m) / add) * (i.b.ts - i.a.ts);
    m += add;
  }
  return null;
}

/** The demo mix's strength-maturity curve, fitted here: least squares of S (MPa) on log10 M. */
function logFit(points: { m: number; s: number }[]) {
  const xs = points.map((p) => Math.log10(p.m));
  const n = xs.length;
  const mx = xs.reduce((a, b) => a + b, 0) / n;
  const my = points.reduce((a, p) => a + p.s, 0) / n;
  const b =
    xs.reduce((a, x, i) => a + (x - mx) * (points[i]!.s - my), 0) /
    xs.reduce((a, x) => a + (x - mx) ** 2, 0);
  return { a: my - b * mx, b };
}

// The demo plant's HS-10 (simulator/plant.ts): lab breaks of cylinders cured at 23 °C, so the
// maturity of each is age × 24 h × (23 − datum) (Nurse-Saul at a constant temperature, domain.md
// §1.5 N-1/N-2 form). The contract's `strength_psi` reads the mix's fitted curve.
const hs10 = demoMixes.find((m) => m.name === "HS-10")!;
const curve = logFit(
  hs10.breaks.map(([days, psi]) => ({ m: days * 24 * (23 - hs10.datumC), s: psiToMpa(psi) })),
);
const strengthPsi = (m: number) =>
  m > 0 ? mpaToPsi(Math.max(0, curve.a + curve.b * Math.log10(m))) : 0;
const maturityFor = (psi: number) => 10 ** ((psiToMpa(psi) - curve.a) / curve.b);

/** Readings every `stepH` from `fromH` to `toH` (hours after cast), at `temp(h)`. */
function series(
  castMs: number,
  fromH: number,
  toH: number,
  stepH: number,
  temp: (h: number) => number,
) {
  const out: Reading[] = [];
  for (let k = 0; fromH + k * stepH <= toH + 1e-9; k++) {
    const h = fromH + k * stepH;
    out.push({ ts: castMs + Math.round(h * H), temp: temp(h) });
  }
  return out;
}

let plinth: RunningPlinth;
let operator: string;
let viewer: string;
let mixId: number;
// Cast a little over a day ago on a whole minute; the last readings are 15 minutes old.
const castMs = Math.floor((Date.now() - 24 * H - 15 * 60_000) / 60_000) * 60_000;

// N-3 (domain.md §1.5): hourly 10, 12, 16, 20, 22 °C, then 20 h more at 22 °C.
const n3 = [
  ...[10, 12, 16, 20, 22].map((temp, h) => ({ ts: castMs + h * H, temp })),
  ...series(castMs, 4.5, 24, 0.5, () => 22),
];
// N-5 (domain.md §1.5), a cold spell below the datum: 6 h at −15 °C, then 5 °C (the step taken
// 3.6 s after the last cold reading), held to the end.
const n5 = [
  ...series(castMs, 0, 6, 0.5, () => -15),
  { ts: castMs + 6 * H + 3_600, temp: 5 },
  ...series(castMs, 6.5, 24, 0.5, () => 5),
];
// 20 °C with no reading for 3.5 h (5 h to 8.5 h after cast): a gap over 2 h.
const gap = [...series(castMs, 0, 5, 0.5, () => 20), ...series(castMs, 8.5, 24, 0.5, () => 20)];
// Warming from 15 °C to 23 °C over 16 h, then held; sent newest half first, oldest half later,
// and one reading between two stored ones last.
const late = series(castMs, 0, 24, 0.25, (h) => (h < 16 ? 15 + 0.5 * h : 23));
const lateNewer = late.filter((r) => r.ts >= castMs + 12 * H);
const lateOlder = late.filter((r) => r.ts < castMs + 12 * H);
const lateBetween = { ts: castMs + 13 * H + 7 * 60_000, temp: 30 };
// E-1 (domain.md §2.5): 24 h at 30 °C.
const e1 = series(castMs, 0, 24, 0.5, () => 30);
const warm = series(castMs, 0, 24, 0.5, () => 30);

const sensors: Record<string, Reading[]> = {
  "TS-N3": n3,
  "TS-N5": n5,
  "TS-GAP": gap,
  "TS-LATE": [...late, lateBetween],
  "TS-E1": e1,
};

async function send(sensor: string, rs: readonly Reading[]) {
  const res = await fetch(`${plinth.url}/api/v1/readings`, {
    method: "POST",
    headers: { authorization: `Bearer ${KEY}`, "content-type": "application/json" },
    body: JSON.stringify({ readings: rs.map((r) => ({ sensor, ts: r.ts, temp_c: r.temp })) }),
  });
  expect(res.status).toBe(200);
  const body = (await res.json()) as { accepted: number; rejected: unknown[] };
  expect(body.rejected).toEqual([]);
  expect(body.accepted).toBe(rs.length);
}

interface SensorView {
  sensor: string;
  ttf_c_h: number;
  equivalent_age_h: number;
  strength_psi: number | null;
  complete_record: boolean;
  last_reading_at: string | null;
}
interface StrengthView {
  pour_id: number;
  as_of: string;
  governing_sensor: string | null;
  complete_record: boolean;
  sensors: SensorView[];
  strip: { threshold_psi: number; reached_at: string | null; forecast_at: string | null };
  ship: { threshold_psi: number; reached_at: string | null; forecast_at: string | null };
}

async function strength(pourId: number): Promise<StrengthView> {
  const res = await call(plinth.url, viewer, `/api/v1/pours/${pourId}/strength`);
  expect(res.status).toBe(200);
  return (await res.json()) as StrengthView;
}

async function createPour(code: string, sensorIds: string[]): Promise<number> {
  const res = await call(plinth.url, operator, "/api/v1/pours", {
    method: "POST",
    headers: { "content-type": "application/json" },
    body: JSON.stringify({ code, mix_id: mixId, cast_at: castMs, sensors: sensorIds }),
  });
  expect(res.status, await res.clone().text()).toBe(201);
  return ((await res.json()) as { id: number }).id;
}

/** The whole expected view of a pour from its sensors' readings, as of `asOfMs`. */
function expected(readings: Record<string, Reading[]>, asOfMs: number) {
  const datum = hs10.datumC;
  const per = Object.entries(readings).map(([sensor, rs]) => {
    const m = nurseSaul(rs, castMs, datum);
    const h = history(rs, castMs, asOfMs);
    return {
      sensor,
      rs,
      m,
      te: equivalentAge(rs, castMs, hs10.activationEnergyJMol),
      psi: strengthPsi(m),
      complete: complete(rs, castMs, asOfMs),
      last: h.length ? h[h.length - 1]!.ts : null,
      // Contract: "if the last 6 hours' mean temperature held". Each sensor below reads a
      // constant temperature over its last 6 hours, so that mean is its last reading.
      meanC: h[h.length - 1]!.temp,
    };
  });
  const milestone = (psi: number) => {
    const target = maturityFor(psi);
    if (per.every((p) => p.m >= target)) {
      const at = Math.max(...per.map((p) => reachedAt(p.rs, castMs, datum, target)!));
      return { reached: at, forecast: null };
    }
    const fc = per
      .filter((p) => p.m < target)
      .map((p) => asOfMs + ((target - p.m) / (p.meanC - datum)) * H);
    return { reached: null, forecast: Math.max(...fc) };
  };
  const governing = [...per].sort((a, b) => a.m - b.m)[0]!.sensor;
  return {
    per,
    governing,
    complete: per.every((p) => p.complete),
    strip: milestone(hs10.stripPsi),
    ship: milestone(hs10.shipPsi),
  };
}

function expectMatches(view: StrengthView, exp: ReturnType<typeof expected>) {
  expect(view.sensors.map((s) => s.sensor).sort()).toEqual(exp.per.map((p) => p.sensor).sort());
  for (const p of exp.per) {
    const s = view.sensors.find((x) => x.sensor === p.sensor)!;
    // Tolerances of the brief: 0.1 °C·h and 0.01 h (the API rounds to 0.1 and 0.01).
    expect(
      Math.abs(s.ttf_c_h - p.m),
      `${p.sensor} ttf_c_h ${s.ttf_c_h} vs ${p.m}`,
    ).toBeLessThanOrEqual(0.1);
    expect(
      Math.abs(s.equivalent_age_h - p.te),
      `${p.sensor} equivalent_age_h ${s.equivalent_age_h} vs ${p.te}`,
    ).toBeLessThanOrEqual(0.01);
    // The API gives whole psi; 1 psi covers its rounding and the 0.05 °C·h of its ttf.
    expect(Math.abs(s.strength_psi! - p.psi), `${p.sensor} strength_psi`).toBeLessThanOrEqual(1);
    expect(s.complete_record, `${p.sensor} complete_record`).toBe(p.complete);
    expect(s.last_reading_at).toBe(p.last === null ? null : new Date(p.last).toISOString());
  }
  expect(view.governing_sensor).toBe(exp.governing);
  expect(view.complete_record).toBe(exp.complete);
  for (const k of ["strip", "ship"] as const) {
    const want = exp[k];
    expect(view[k].threshold_psi).toBe(k === "strip" ? hs10.stripPsi : hs10.shipPsi);
    for (const [field, value] of [
      ["reached_at", want.reached],
      ["forecast_at", want.forecast],
    ] as const) {
      const got = view[k][field];
      if (value === null) expect(got, `${k}.${field}`).toBeNull();
      else {
        expect(got, `${k}.${field}`).not.toBeNull();
        // Within 2 s: the API rounds to the millisecond; the curve fits agree far closer.
        expect(Math.abs(Date.parse(got!) - value), `${k}.${field}`).toBeLessThanOrEqual(2_000);
      }
    }
  }
}

beforeAll(async () => {
  plinth = await startPlinth();
  operator = await signIn(plinth.url, demoEmail("operator"));
  viewer = await signIn(plinth.url, demoEmail("viewer"));
  const mixes = (await (await call(plinth.url, viewer, "/api/v1/mixes")).json()) as {
    mixes: { id: number; name: string }[];
  };
  mixId = mixes.mixes.find((m) => m.name === "HS-10")!.id;
});
afterAll(async () => {
  await plinth?.stop();
});

describe("the independent computation in this file", () => {
  // Checked first against domain.md's values, so that the checks of the API below rest on it.
  it("gives domain.md's Nurse-Saul check values N-3 and N-5", () => {
    // N-3: hourly 10, 12, 16, 20, 22 °C, T0 = −10 °C → 104 °C·h.
    expect(nurseSaul(n3.slice(0, 5), castMs, -10)).toBeCloseTo(104, 9);
    // N-4: the same readings, T0 = 0 °C → 64 °C·h.
    expect(nurseSaul(n3.slice(0, 5), castMs, 0)).toBeCloseTo(64, 9);
    // N-5: 6 h at −15 °C then 6 h at 5 °C, T0 = −10 °C → 90 °C·h (the clip at the datum);
    // the 3.6 s step between them changes it by less than 0.01 °C·h.
    expect(
      Math.abs(
        nurseSaul(
          n5.filter((r) => r.ts <= castMs + 12 * H + 3_600),
          castMs,
          -10,
        ) - 90,
      ),
    ).toBeLessThan(0.01);
  });

  it("gives domain.md's equivalent-age check values E-1 and E-3", () => {
    // E-1: 24 h at 30 °C, Q = 5000 K (E = 41,570 J/mol with R = 8.314), Ts = 20 °C → 42.127 h.
    expect(equivalentAge(e1, castMs, 41_570)).toBeCloseTo(42.127, 3);
    // E-3: 24 h at 20 °C → 24 h exactly.
    expect(
      equivalentAge(
        series(castMs, 0, 24, 0.5, () => 20),
        castMs,
        41_570,
      ),
    ).toBeCloseTo(24, 9);
  });

  it("adds nothing for a gap over 2 hours and counts a silent sensor as incomplete", () => {
    // Contract: a gap longer than 2 hours adds nothing and makes complete_record false.
    expect(nurseSaul(gap, castMs, -10)).toBeCloseTo((24 - 3.5) * 30, 9);
    expect(complete(gap, castMs, castMs + 24 * H)).toBe(false);
    expect(complete(e1, castMs, castMs + 26 * H)).toBe(true);
    expect(complete(e1, castMs, castMs + 26.1 * H)).toBe(false);
  });
});

describe("GET /api/v1/pours/{id}/strength", () => {
  let pourId: number;
  let warmPourId: number;

  it("matches the contract on a pour recorded after its readings, with a newer half only", async () => {
    for (const [sensor, rs] of Object.entries(sensors)) {
      await send(sensor, sensor === "TS-LATE" ? lateNewer : rs.filter((r) => r !== lateBetween));
    }
    await send("TS-W", warm);
    pourId = await createPour("T-STRENGTH-1", Object.keys(sensors));
    warmPourId = await createPour("T-STRENGTH-2", ["TS-W"]);

    const view = await strength(pourId);
    expect(view.pour_id).toBe(pourId);
    const asOf = Date.parse(view.as_of);
    const exp = expected({ ...sensors, "TS-LATE": lateNewer }, asOf);
    expectMatches(view, exp);
    // The newer half starts 12 h after cast: the record is incomplete and adds nothing before.
    expect(view.sensors.find((s) => s.sensor === "TS-LATE")!.complete_record).toBe(false);
  });

  it("matches the full computation once the older readings and one between arrive late", async () => {
    await send("TS-LATE", lateOlder);
    await send("TS-LATE", [lateBetween]);
    const view = await strength(pourId);
    const exp = expected(sensors, Date.parse(view.as_of));
    expectMatches(view, exp);

    const by = (s: string) => view.sensors.find((x) => x.sensor === s)!;
    // N-3 then 20 h at 22 °C: 104 + 20 × 32 = 744 °C·h (domain.md §1.5 N-3).
    expect(Math.abs(by("TS-N3").ttf_c_h - 744)).toBeLessThanOrEqual(0.1);
    // N-5 then 12 h more at 5 °C: 90 + 12 × 15 = 270 °C·h; the cold spell adds nothing (N-5).
    expect(Math.abs(by("TS-N5").ttf_c_h - 270)).toBeLessThanOrEqual(0.1);
    // The gap adds nothing: 20.5 h at 20 °C → 615 °C·h, and 20.5 h of equivalent age (E-3).
    expect(Math.abs(by("TS-GAP").ttf_c_h - 615)).toBeLessThanOrEqual(0.1);
    expect(Math.abs(by("TS-GAP").equivalent_age_h - 20.5)).toBeLessThanOrEqual(0.01);
    expect(by("TS-GAP").complete_record).toBe(false);
    // E-1: 24 h at 30 °C → 42.127 h at 20 °C (domain.md §2.5), 24 × 40 = 960 °C·h.
    expect(Math.abs(by("TS-E1").equivalent_age_h - 42.127)).toBeLessThanOrEqual(0.01);
    expect(Math.abs(by("TS-E1").ttf_c_h - 960)).toBeLessThanOrEqual(0.1);
    // The late half and the reading between count now: all of it, trapezoid by trapezoid.
    expect(by("TS-LATE").complete_record).toBe(true);
    // The coldest place governs: the cold spell's sensor, and the pour's record is incomplete.
    expect(view.governing_sensor).toBe("TS-N5");
    expect(view.complete_record).toBe(false);
    expect(view.strip.reached_at).toBeNull();
    expect(view.strip.forecast_at).not.toBeNull();
  });

  it("gives when a threshold was reached, inside the interval where it was", async () => {
    const view = await strength(warmPourId);
    const asOf = Date.parse(view.as_of);
    const exp = expected({ "TS-W": warm }, asOf);
    expectMatches(view, exp);
    // At a constant 30 °C with a −10 °C datum the factor grows 40 °C·h an hour, so the strip
    // maturity is reached at cast + target / 40 h (domain.md §1.5, N-1/N-2 form).
    const target = maturityFor(hs10.stripPsi);
    expect(
      Math.abs(Date.parse(view.strip.reached_at!) - (castMs + (target / 40) * H)),
    ).toBeLessThanOrEqual(2_000);
    expect(view.ship.reached_at).toBeNull();
    const shipTarget = maturityFor(hs10.shipPsi);
    expect(
      Math.abs(Date.parse(view.ship.forecast_at!) - (asOf + ((shipTarget - 960) / 40) * H)),
    ).toBeLessThanOrEqual(2_000);
  });
});
