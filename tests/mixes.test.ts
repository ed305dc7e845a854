import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { ageConversionFactor } from "@/domain/maturity/arrhenius";
import { lbYd3ToKgM3, mpaToPsi } from "@/domain/units";
import { demoMixes, demoPours } from "../simulator/plant";
import { call, demoEmail, signIn, startPlinth, type RunningPlinth } from "./helpers/server";

// Mixes and their calibration through the API, against the built server with the demo plant.
// Check values come from /work/shared/domain.md (cited beside each) or are worked out here
// from ASTM C1074 Eq. 1 with the numbers shown.

let plinth: RunningPlinth;
let qc: string;
let operator: string;
let viewer: string;
let manager: string;

beforeAll(async () => {
  plinth = await startPlinth();
  qc = await signIn(plinth.url, demoEmail("qc"));
  operator = await signIn(plinth.url, demoEmail("operator"));
  viewer = await signIn(plinth.url, demoEmail("viewer"));
  manager = await signIn(plinth.url, demoEmail("manager"));
});
afterAll(async () => {
  await plinth?.stop();
});

const send = (cookie: string | null, path: string, method: string, body?: unknown) =>
  call(plinth.url, cookie, path, {
    method,
    headers: { "content-type": "application/json" },
    body: body === undefined ? "{}" : JSON.stringify(body),
  });
const get = (cookie: string | null, path: string) => call(plinth.url, cookie, path);

interface Fit {
  id: number;
  model: string;
  params: Record<string, number>;
  r2: number;
  rmse_psi: number;
  point_count: number;
  ages: number;
  warnings: { code: string; message: string }[];
  points: { ttf_c_h: number; strength_psi: number; fitted_psi: number; residual_psi: number }[];
  curve: { ttf_c_h: number; strength_psi: number }[];
  thresholds: Record<
    "strip" | "ship",
    { strength_psi: number; ttf_c_h: number | null; standing: string }
  >;
  current: boolean;
}

const baseMix = {
  design_strength_psi: 6000,
  strip_strength_psi: 3000,
  ship_strength_psi: 4500,
  datum_temp_c: 0,
  activation_energy_j_mol: 41_570,
};
let nameSeq = 0;
async function newMix(over: Record<string, unknown> = {}): Promise<{ id: number; name: string }> {
  const name = `T-${++nameSeq}`;
  const res = await send(qc, "/api/v1/mixes", "POST", { name, ...baseMix, ...over });
  expect(res.status).toBe(201);
  return (await res.json()) as { id: number; name: string };
}

async function mixIdByName(name: string): Promise<number> {
  const body = (await (await get(qc, "/api/v1/mixes")).json()) as {
    mixes: { id: number; name: string }[];
  };
  return body.mixes.find((m) => m.name === name)!.id;
}

const within = (actual: number, expected: number, tol: number) => {
  expect(actual, `expected ${expected} ± ${tol}`).toBeGreaterThanOrEqual(expected - tol);
  expect(actual, `expected ${expected} ± ${tol}`).toBeLessThanOrEqual(expected + tol);
};

// domain.md §3.3 Set H (hyperbolic, exact): Su 45 MPa, k 0.35 1/d, t0 0.25 d, cured at 23 °C with
// datum 0 °C, so M = 23 × 24 × t = 552·t °C·h.
const AGES_D = [1, 3, 7, 14, 28];
const SET_H = AGES_D.map((t) => ({
  ttf_c_h: 552 * t,
  strength_psi: mpaToPsi((45 * 0.35 * (t - 0.25)) / (1 + 0.35 * (t - 0.25))),
}));
// domain.md §3.3 Set X (exponential, exact): Su 50 MPa, τ 1.2 d, β 0.9.
const SET_X = AGES_D.map((t) => ({
  ttf_c_h: 552 * t,
  strength_psi: mpaToPsi(50 * Math.exp(-((1.2 / t) ** 0.9))),
}));

describe("POST /api/v1/mixes", () => {
  it("adds a mix for QC and answers 201 with its id, storing SI", async () => {
    const res = await send(qc, "/api/v1/mixes", "POST", {
      name: "WP-7",
      description: "Wall panels",
      design_strength_psi: 7000,
      strip_strength_psi: 3000,
      ship_strength_psi: 5250,
      datum_temp_c: -10,
      activation_energy_j_mol: 41_570,
      placing_temp_min_c: 10,
      placing_temp_max_c: 32,
      cement_lb_yd3: 600,
      water_lb_yd3: 270,
    });
    expect(res.status).toBe(201);
    const mix = (await res.json()) as Record<string, unknown> & { id: number };
    expect(mix.id).toBeGreaterThan(0);
    expect(res.headers.get("location")).toBe(`/api/v1/mixes/${mix.id}`);
    const back = (await (await get(viewer, `/api/v1/mixes/${mix.id}`)).json()) as Record<
      string,
      number | null
    >;
    expect(back.name).toBe("WP-7");
    expect(back.design_strength_psi).toBe(7000);
    // 1 psi = 6894.757293168 Pa (domain.md §8.3): 3000 psi = 20.684272 MPa
    within(back.strip_strength_mpa!, 20.684272, 1e-4);
    // 1 lb = 0.45359237 kg and 1 yd = 0.9144 m (exact by definition, from memory): 600 × 0.45359237 / 0.9144³ = 355.96 kg/m³
    within(back.cement_kg_m3!, 355.96, 0.06);
    within(back.cement_kg_m3!, lbYd3ToKgM3(600), 0.05);
    expect(back.cement_lb_yd3).toBe(600);
    // w/cm = 270 / 600
    expect(back.water_cm_ratio).toBe(0.45);
    expect(back.calibration).toBeNull();
    expect(back.point_count).toBe(0);
  });

  it("refuses bad fields with one error per field (400)", async () => {
    const res = await send(qc, "/api/v1/mixes", "POST", {
      name: "",
      design_strength_psi: "lots",
      strip_strength_psi: 3000,
      ship_strength_psi: 4000,
      datum_temp_c: -60,
    });
    expect(res.status).toBe(400);
    expect(res.headers.get("content-type")).toContain("application/problem+json");
    const body = (await res.json()) as { errors: { field: string; error: string }[] };
    const fields = body.errors.map((e) => e.field);
    expect(fields).toEqual(
      expect.arrayContaining([
        "name",
        "design_strength_psi",
        "datum_temp_c",
        "activation_energy_j_mol",
      ]),
    );
    expect(fields.filter((f) => f === "name")).toHaveLength(1);
    expect(fields).not.toContain("strip_strength_psi");
  });

  it("refuses a strip strength above the ship strength, and ship above design", async () => {
    const res = await send(qc, "/api/v1/mixes", "POST", {
      name: "BAD-1",
      ...baseMix,
      strip_strength_psi: 5000,
      ship_strength_psi: 4500,
    });
    expect(res.status).toBe(400);
    const body = (await res.json()) as { errors: { field: string }[] };
    expect(body.errors.map((e) => e.field)).toEqual(["strip_strength_psi"]);
    const res2 = await send(qc, "/api/v1/mixes", "POST", {
      name: "BAD-2",
      ...baseMix,
      ship_strength_psi: 6500,
    });
    expect(((await res2.json()) as { errors: { field: string }[] }).errors[0]!.field).toBe(
      "ship_strength_psi",
    );
  });

  it("refuses a second mix of the same name (409)", async () => {
    const res = await send(qc, "/api/v1/mixes", "POST", { name: "hs-10", ...baseMix });
    expect(res.status).toBe(409);
  });

  it("is refused to an operator and a viewer (403), and to nobody signed in (401)", async () => {
    expect(
      (await send(operator, "/api/v1/mixes", "POST", { name: "OP-1", ...baseMix })).status,
    ).toBe(403);
    expect((await send(viewer, "/api/v1/mixes", "POST", { name: "VW-1", ...baseMix })).status).toBe(
      403,
    );
    expect((await send(null, "/api/v1/mixes", "POST", { name: "NB-1", ...baseMix })).status).toBe(
      401,
    );
    // Everyone reads.
    expect((await get(operator, "/api/v1/mixes")).status).toBe(200);
  });
});

describe("POST /api/v1/mixes/{id}/calibration", () => {
  it("fits the log form to Set H with the sheet's a, b and R² (domain.md §3.3)", async () => {
    const mix = await newMix();
    const res = await send(qc, `/api/v1/mixes/${mix.id}/calibration`, "POST", {
      model: "log",
      points: SET_H,
    });
    expect(res.status).toBe(201);
    const fit = (await res.json()) as Fit;
    // domain.md §3.3: a = −50.0515 MPa, b = 22.2045 MPa/decade, R² = 0.98090
    within(fit.params.a_mpa!, -50.0515, 5e-4);
    within(fit.params.b_mpa_per_decade!, 22.2045, 5e-4);
    within(fit.r2, 0.9809, 5e-5);
    within(fit.params.a_psi!, mpaToPsi(-50.0515), 0.1);
    expect(fit.point_count).toBe(5);
    expect(fit.ages).toBe(5);
    expect(fit.warnings.map((w) => w.code)).not.toContain("few-ages");
    expect(fit.current).toBe(true);
    // domain.md §3.3 predictions: 10.832, 21.426, 29.597, 36.281, 42.965 MPa
    const predicted = [10.832, 21.426, 29.597, 36.281, 42.965];
    fit.points.forEach((p, i) => within(p.fitted_psi, mpaToPsi(predicted[i]!), 0.2));
    fit.points.forEach((p) => within(p.residual_psi, p.strength_psi - p.fitted_psi, 0.11));
    // The drawn curve spans the breaks, rising.
    expect(fit.curve.length).toBeGreaterThan(10);
    expect(fit.curve[0]!.ttf_c_h).toBeLessThan(552);
    expect(fit.curve.at(-1)!.ttf_c_h).toBeGreaterThan(15_456);
    const mixNow = (await (await get(qc, `/api/v1/mixes/${mix.id}`)).json()) as {
      calibration: { id: number };
    };
    expect(mixNow.calibration.id).toBe(fit.id);
  });

  it("fits the hyperbolic form to Set H and the exponential to Set X, recovering their parameters (domain.md §3.3)", async () => {
    const mix = await newMix();
    const hyp = (await (
      await send(qc, `/api/v1/mixes/${mix.id}/calibration`, "POST", {
        model: "hyperbolic",
        points: SET_H,
      })
    ).json()) as Fit;
    // Set H: Su = 45 MPa, k = 0.35 1/d = 0.35/552 per °C·h, t0 = 0.25 d = 138 °C·h
    within(hyp.params.su_mpa!, 45, 45 * 1e-4);
    within(hyp.params.k_per_c_h!, 0.35 / 552, (0.35 / 552) * 1e-4);
    within(hyp.params.m0_c_h!, 138, 138 * 1e-4);
    within(hyp.r2, 1, 1e-9);
    // Set H inverse: 20 MPa at 2.5357 d = 1399.7 °C·h; the mix's strip 3000 psi = 20.684 MPa is just past it
    expect(hyp.thresholds.strip.ttf_c_h!).toBeGreaterThan(2.5357 * 552);

    const exp = (await (
      await send(qc, `/api/v1/mixes/${mix.id}/calibration`, "POST", {
        model: "exponential",
        points: SET_X,
      })
    ).json()) as Fit;
    // Set X: Su = 50 MPa, τ = 1.2 d = 662.4 °C·h, β = 0.9
    within(exp.params.su_mpa!, 50, 50 * 1e-4);
    within(exp.params.tau_c_h!, 662.4, 662.4 * 1e-4);
    within(exp.params.beta!, 0.9, 0.9 * 1e-4);

    const view = (await (await get(viewer, `/api/v1/mixes/${mix.id}/calibration`)).json()) as {
      current: Fit;
      history: Fit[];
    };
    expect(view.current.id).toBe(exp.id);
    expect(view.history.map((f) => f.model)).toEqual(["exponential", "hyperbolic"]);
    expect(view.history.map((f) => f.current)).toEqual([true, false]);
  });

  it("warns few-ages when the stored breaks have fewer than five ages (FC-8)", async () => {
    // The demo's FC-8 has breaks at 1, 3, 7 and 28 days only.
    expect(demoMixes.find((m) => m.name === "FC-8")!.breaks).toHaveLength(4);
    const id = await mixIdByName("FC-8");
    const res = await send(qc, `/api/v1/mixes/${id}/calibration`, "POST", {});
    expect(res.status).toBe(201);
    const fit = (await res.json()) as Fit & { source: string };
    expect(fit.model).toBe("log");
    expect(fit.source).toBe("stored_points");
    expect(fit.point_count).toBe(4);
    expect(fit.warnings.map((w) => w.code)).toContain("few-ages");
  });

  it("refuses a fit of fewer than two points, or of one maturity, with a reason (422)", async () => {
    const mix = await newMix();
    const none = await send(qc, `/api/v1/mixes/${mix.id}/calibration`, "POST", { model: "log" });
    expect(none.status).toBe(422);
    expect(((await none.json()) as { detail: string }).detail).toMatch(/at least 2/);
    const one = await send(qc, `/api/v1/mixes/${mix.id}/calibration`, "POST", {
      points: [{ ttf_c_h: 552, strength_psi: 1500 }],
    });
    expect(one.status).toBe(422);
    const same = await send(qc, `/api/v1/mixes/${mix.id}/calibration`, "POST", {
      points: [
        { ttf_c_h: 552, strength_psi: 1500 },
        { ttf_c_h: 552, strength_psi: 1600 },
      ],
    });
    expect(same.status).toBe(422);
    expect(((await same.json()) as { detail: string }).detail).toMatch(/different maturities/);
    const hyp = await send(qc, `/api/v1/mixes/${mix.id}/calibration`, "POST", {
      model: "hyperbolic",
      points: SET_H.slice(0, 2),
    });
    expect(hyp.status).toBe(422);
    // Strength falling with maturity can estimate nothing.
    const falling = await send(qc, `/api/v1/mixes/${mix.id}/calibration`, "POST", {
      points: [
        { ttf_c_h: 552, strength_psi: 5000 },
        { ttf_c_h: 5000, strength_psi: 3000 },
      ],
    });
    expect(falling.status).toBe(422);
    expect((await get(qc, `/api/v1/mixes/${mix.id}/calibration`)).status).toBe(200);
    expect(
      (
        (await (await get(qc, `/api/v1/mixes/${mix.id}/calibration`)).json()) as {
          history: unknown[];
        }
      ).history,
    ).toEqual([]);
    expect(
      (await send(operator, `/api/v1/mixes/${mix.id}/calibration`, "POST", { points: SET_H }))
        .status,
    ).toBe(403);
    expect(
      (await send(qc, `/api/v1/mixes/999999/calibration`, "POST", { points: SET_H })).status,
    ).toBe(404);
  });
});

interface PourStrength {
  calibrated: boolean;
  sensors: {
    sensor: string;
    ttf_c_h: number;
    strength_psi: number | null;
    last_reading_at: string | null;
  }[];
}

describe("a fit of GP-5 and a change of its datum, seen in a pour's strength", () => {
  // The demo pour of GP-5 (P-2611-05); pours are seeded in the order of demoPours.
  const pourIndex = demoPours.findIndex((p) => p.mix === "GP-5");
  const pourId = pourIndex + 1;

  it("gives no strength before the fit, and the fitted curve's strength after it", async () => {
    expect(pourIndex).toBeGreaterThanOrEqual(0);
    const id = await mixIdByName("GP-5");
    const before = (await (
      await get(qc, `/api/v1/pours/${pourId}/strength`)
    ).json()) as PourStrength;
    expect(before.calibrated).toBe(false);
    expect(before.sensors.length).toBeGreaterThan(0);
    expect(before.sensors.every((s) => s.strength_psi === null)).toBe(true);

    // Lab-cured cylinders at 23 °C (ASTM C511, domain.md §7.1): maturity = age × (23 − datum).
    const breaks = [
      [1, 2450],
      [3, 3900],
      [7, 4700],
      [14, 5250],
      [28, 5800],
    ];
    for (const [days, psi] of breaks) {
      const res = await send(qc, `/api/v1/mixes/${id}/points`, "POST", {
        age_h: days! * 24,
        temp_c: 23,
        strength_psi: psi,
        specimens: `GP5-${days}d A, B`,
      });
      expect(res.status).toBe(201);
    }
    const fitRes = await send(qc, `/api/v1/mixes/${id}/calibration`, "POST", { model: "log" });
    expect(fitRes.status).toBe(201);
    const fit = (await fitRes.json()) as Fit;
    // GP-5's datum is −10 °C: 1 d at 23 °C is 24 × 33 = 792 °C·h (ASTM C1074 Eq. 1)
    expect(fit.points.map((p) => p.ttf_c_h)).toEqual(breaks.map(([d]) => d! * 24 * 33));

    const after = (await (
      await get(qc, `/api/v1/pours/${pourId}/strength`)
    ).json()) as PourStrength;
    expect(after.calibrated).toBe(true);
    for (const s of after.sensors) {
      expect(typeof s.strength_psi).toBe("number");
      // The pour's estimate is the fitted curve S = a + b·log10(M) at its maturity (ASTM C1074).
      const expected = fit.params.a_psi! + fit.params.b_psi_per_decade! * Math.log10(s.ttf_c_h);
      within(s.strength_psi!, expected, 2);
    }
  });

  it("moves the pour's maturity and the stored breaks' when the datum changes", async () => {
    const id = await mixIdByName("GP-5");
    const before = (await (
      await get(qc, `/api/v1/pours/${pourId}/strength`)
    ).json()) as PourStrength;
    const res = await send(qc, `/api/v1/mixes/${id}`, "PATCH", { datum_temp_c: 0 });
    expect(res.status).toBe(200);
    const patched = (await res.json()) as {
      datum_temp_c: number;
      points_rebased: number;
      calibration: { warnings: { code: string }[] };
    };
    expect(patched.datum_temp_c).toBe(0);
    expect(patched.points_rebased).toBe(5);
    expect(patched.calibration.warnings.map((w) => w.code)).toContain("datum-changed");

    const after = (await (
      await get(qc, `/api/v1/pours/${pourId}/strength`)
    ).json()) as PourStrength;
    // ASTM C1074 Eq. 1: with every interval above both datums, raising the datum by 10 °C takes
    // 10 °C·h off for each hour of record. The demo pour was cast 50 h before the seed, and its
    // record runs from its first 5-minute reading after the cast to the seed's last.
    const castHoursAgo = demoPours[pourIndex]!.castHoursAgo;
    for (const s of after.sensors) {
      const was = before.sensors.find((x) => x.sensor === s.sensor)!;
      within(was.ttf_c_h - s.ttf_c_h, 10 * castHoursAgo - 10 * (5 / 60), 10 * (5 / 60) + 0.2);
    }
    // The stored 1-day break at 23 °C is now 24 × 23 = 552 °C·h (domain.md §3.3's M = 552·t).
    const points = (await (await get(qc, `/api/v1/mixes/${id}/points`)).json()) as {
      points: { age_h: number; ttf_c_h: number }[];
    };
    expect(points.points.map((p) => p.ttf_c_h)).toEqual([552, 1656, 3864, 7728, 15456]);

    // Every change is in the audit log with its before and after.
    const audit = (await (await get(manager, "/api/v1/audit?action=mix.updated")).json()) as {
      entries: {
        entity_id: string;
        detail: { before: Record<string, unknown>; after: Record<string, unknown> };
      }[];
    };
    const entry = audit.entries.find((e) => e.entity_id === String(id))!;
    expect(entry.detail.before).toEqual({ datum_temp_c: -10 });
    expect(entry.detail.after).toEqual({ datum_temp_c: 0 });
  });
});

describe("PATCH /api/v1/mixes/{id}", () => {
  it("changes any subset, refuses disagreement, a taken name and an operator", async () => {
    const mix = await newMix();
    const ok = await send(qc, `/api/v1/mixes/${mix.id}`, "PATCH", {
      strip_strength_psi: 2500,
      description: "Edited",
    });
    expect(ok.status).toBe(200);
    const body = (await ok.json()) as {
      strip_strength_psi: number;
      description: string;
      points_rebased?: number;
    };
    expect(body.strip_strength_psi).toBe(2500);
    expect(body.description).toBe("Edited");
    expect(body.points_rebased).toBeUndefined();
    const bad = await send(qc, `/api/v1/mixes/${mix.id}`, "PATCH", { ship_strength_psi: 2000 });
    expect(bad.status).toBe(400);
    expect(((await bad.json()) as { errors: { field: string }[] }).errors[0]!.field).toBe(
      "strip_strength_psi",
    );
    expect((await send(qc, `/api/v1/mixes/${mix.id}`, "PATCH", { name: "HS-10" })).status).toBe(
      409,
    );
    expect((await send(qc, `/api/v1/mixes/${mix.id}`, "PATCH", { colour: "red" })).status).toBe(
      400,
    );
    expect(
      (await send(operator, `/api/v1/mixes/${mix.id}`, "PATCH", { description: "x" })).status,
    ).toBe(403);
    expect((await send(qc, `/api/v1/mixes/999999`, "PATCH", { description: "x" })).status).toBe(
      404,
    );
  });
});

describe("calibration points", () => {
  it("compute maturity = age × (temperature − datum) from a curing temperature", async () => {
    const mix = await newMix({ datum_temp_c: -10 });
    const res = await send(qc, `/api/v1/mixes/${mix.id}/points`, "POST", {
      age_h: 72,
      temp_c: 23,
      strength_psi: 3900,
      broken_at: "2026-03-05T15:00:00Z",
    });
    expect(res.status).toBe(201);
    const p = (await res.json()) as {
      id: number;
      ttf_c_h: number;
      equivalent_age_h: number;
      strength_psi: number;
      broken_at: string;
    };
    // domain.md §7.1 (ASTM C511 at 23 °C) with ASTM C1074 Eq. 1, datum −10 °C: 72 × 33 = 2376 °C·h
    expect(p.ttf_c_h).toBe(2376);
    // domain.md §2.3: α(23 °C) = 1.1886 at Q = 5000 K (E = 41,570 J/mol), Ts = 20 °C
    within(p.equivalent_age_h, 72 * 1.1886, 0.04);
    within(
      p.equivalent_age_h,
      72 * ageConversionFactor(23, { activationEnergyJMol: 41_570 }),
      0.01,
    );
    expect(p.strength_psi).toBe(3900);
    expect(p.broken_at).toBe("2026-03-05T15:00:00.000Z");
  });

  it("compute maturity from the specimens' temperature record", async () => {
    const mix = await newMix({ datum_temp_c: -10 });
    const t0 = Date.UTC(2026, 2, 2);
    const temps = [10, 12, 16, 20, 22].map((c, i) => ({ ts: t0 + i * 3_600_000, temp_c: c }));
    const res = await send(qc, `/api/v1/mixes/${mix.id}/points`, "POST", {
      strength_mpa: 5,
      temps,
    });
    expect(res.status).toBe(201);
    const p = (await res.json()) as { ttf_c_h: number; age_h: number; strength_mpa: number };
    // domain.md §1.5 N-3: hourly 10, 12, 16, 20, 22 °C, datum −10 °C -> 104 °C·h
    expect(p.ttf_c_h).toBe(104);
    expect(p.age_h).toBe(4);
    expect(p.strength_mpa).toBe(5);

    const gap = await send(qc, `/api/v1/mixes/${mix.id}/points`, "POST", {
      strength_psi: 1000,
      temps: [temps[0], { ts: t0 + 3 * 3_600_000, temp_c: 20 }],
    });
    expect(gap.status).toBe(400);
    expect(((await gap.json()) as { errors: { field: string }[] }).errors[0]!.field).toBe("temps");
    const wrongAge = await send(qc, `/api/v1/mixes/${mix.id}/points`, "POST", {
      strength_psi: 1000,
      age_h: 24,
      temps,
    });
    expect(wrongAge.status).toBe(400);
    expect(((await wrongAge.json()) as { errors: { field: string }[] }).errors[0]!.field).toBe(
      "age_h",
    );
  });

  it("refuse a curing temperature at the datum, two maturities at once, and a missing strength", async () => {
    const mix = await newMix({ datum_temp_c: -10 });
    const cold = await send(qc, `/api/v1/mixes/${mix.id}/points`, "POST", {
      age_h: 24,
      temp_c: -10,
      strength_psi: 500,
    });
    expect(cold.status).toBe(400);
    expect(((await cold.json()) as { errors: { field: string }[] }).errors[0]!.field).toBe(
      "temp_c",
    );
    const both = await send(qc, `/api/v1/mixes/${mix.id}/points`, "POST", {
      age_h: 24,
      temp_c: 23,
      ttf_c_h: 792,
      strength_psi: 2000,
    });
    expect(both.status).toBe(400);
    const noStrength = await send(qc, `/api/v1/mixes/${mix.id}/points`, "POST", {
      age_h: 24,
      temp_c: 23,
    });
    expect(noStrength.status).toBe(400);
    expect(((await noStrength.json()) as { errors: { field: string }[] }).errors[0]!.field).toBe(
      "strength_psi",
    );
  });

  it("are removed one at a time, with the removal audited", async () => {
    const mix = await newMix();
    const made = (await (
      await send(qc, `/api/v1/mixes/${mix.id}/points`, "POST", {
        age_h: 24,
        ttf_c_h: 552,
        strength_psi: 1500,
      })
    ).json()) as { id: number };
    expect((await send(viewer, `/api/v1/mixes/${mix.id}/points/${made.id}`, "DELETE")).status).toBe(
      403,
    );
    expect((await send(qc, `/api/v1/mixes/${mix.id}/points/${made.id}`, "DELETE")).status).toBe(
      204,
    );
    expect((await send(qc, `/api/v1/mixes/${mix.id}/points/${made.id}`, "DELETE")).status).toBe(
      404,
    );
    const list = (await (await get(viewer, `/api/v1/mixes/${mix.id}/points`)).json()) as {
      points: unknown[];
    };
    expect(list.points).toEqual([]);
    const audit = (await (await get(manager, "/api/v1/audit?action=mix.point_removed")).json()) as {
      entries: { entity_id: string; detail: { point: { id: number; ttf_c_h: number } } }[];
    };
    const entry = audit.entries.find((e) => e.entity_id === String(mix.id))!;
    expect(entry.detail.point).toMatchObject({ id: made.id, ttf_c_h: 552 });
  });
});

describe("POST /api/v1/mixes/{id}/points/upload (the lab's CSV)", () => {
  const csv = [
    "Lab report, project 26-114",
    "Cylinder,Age (days),Strength (psi),Curing temp (°F)",
    "L-1A,1,2400,73.4",
    "L-1B,1,2500,73.4",
    "L-3A,3,3900,",
    "L-3B,3,4000,",
    "L-7A,7,abc,",
    "L-7B,7,4700,",
  ].join("\r\n");

  it("previews without storing on a dry run, then imports, listing the rows it cannot read", async () => {
    const mix = await newMix({ datum_temp_c: -10 });
    const dry = await send(qc, `/api/v1/mixes/${mix.id}/points/upload`, "POST", {
      file_name: "C:\\lab\\breaks.csv",
      csv,
      dry_run: true,
      curing_temp_c: 23,
    });
    expect(dry.status).toBe(200);
    const preview = (await dry.json()) as {
      file_name: string;
      header_row: number;
      columns: Record<string, string | null>;
      rows_in: number;
      errors: { row: number; error: string }[];
      points: { age_h: number; ttf_c_h: number; strength_psi: number; cylinder_count: number }[];
      imported: number;
    };
    expect(preview.file_name).toBe("breaks.csv");
    expect(preview.header_row).toBe(2);
    expect(preview.columns).toMatchObject({
      specimen: "Cylinder",
      age: "Age (days)",
      strength: "Strength (psi)",
      curing_temp: "Curing temp (°F)",
    });
    expect(preview.rows_in).toBe(6);
    expect(preview.errors).toEqual([{ row: 7, error: 'the strength "abc" is not a number' }]);
    expect(preview.imported).toBe(0);
    // 73.4 °F = 23 °C (domain.md §8.3); rows without a temperature take the lab's 23 °C.
    // Datum −10 °C: 1 d -> 792, 3 d -> 2376, 7 d -> 5544 °C·h (ASTM C1074 Eq. 1).
    expect(
      preview.points.map((p) => [p.age_h, p.ttf_c_h, p.strength_psi, p.cylinder_count]),
    ).toEqual([
      [24, 792, 2450, 2],
      [72, 2376, 3950, 2],
      [168, 5544, 4700, 1],
    ]);
    const stored = (await (await get(qc, `/api/v1/mixes/${mix.id}/points`)).json()) as {
      points: unknown[];
    };
    expect(stored.points).toEqual([]);

    const real = await send(qc, `/api/v1/mixes/${mix.id}/points/upload`, "POST", {
      file_name: "breaks.csv",
      csv,
      curing_temp_c: 23,
    });
    expect(real.status).toBe(201);
    const done = (await real.json()) as {
      imported: number;
      upload_id: number;
      point_ids: number[];
    };
    expect(done.imported).toBe(3);
    const after = (await (await get(qc, `/api/v1/mixes/${mix.id}/points`)).json()) as {
      points: { id: number; ttf_c_h: number; upload_id: number; specimens: string }[];
    };
    expect(after.points.map((p) => p.ttf_c_h)).toEqual([792, 2376, 5544]);
    expect(after.points.every((p) => p.upload_id === done.upload_id)).toBe(true);
    expect(after.points[0]!.specimens).toBe("L-1A, L-1B");

    // The same file again is flagged, as is each age already stored.
    const again = (await (
      await send(qc, `/api/v1/mixes/${mix.id}/points/upload`, "POST", {
        file_name: "breaks.csv",
        csv,
        dry_run: true,
        curing_temp_c: 23,
      })
    ).json()) as { warnings: string[] };
    expect(again.warnings[0]).toMatch(/^This file was imported for T-\d+ on /);
    expect(again.warnings).toContain(`${mix.name} already has a point at 3 d.`);
  });

  it("says which unit it needs, and refuses a file with no header it can use (422)", async () => {
    const mix = await newMix({ datum_temp_c: -10 });
    const noUnit = (await (
      await send(qc, `/api/v1/mixes/${mix.id}/points/upload`, "POST", {
        file_name: "x.csv",
        csv: "Specimen,Age,Strength\nA,1,2400\n",
        dry_run: true,
        curing_temp_c: 23,
      })
    ).json()) as { errors: { row: number; error: string }[] };
    expect(noUnit.errors.map((e) => e.error)).toEqual([
      "the strength unit is not known: choose psi or MPa",
    ]);
    const withUnits = (await (
      await send(qc, `/api/v1/mixes/${mix.id}/points/upload`, "POST", {
        file_name: "x.csv",
        csv: "Specimen;Age;Strength;Maturity (°C·h)\nA;24 h;16,9;792\n",
        dry_run: true,
        strength_unit: "mpa",
      })
    ).json()) as { points: { ttf_c_h: number; strength_psi: number }[]; errors: unknown[] };
    expect(withUnits.errors).toEqual([]);
    // 16.9 MPa = 2451.1 psi (1 MPa = 145.0377 psi, domain.md §8.3)
    expect(withUnits.points).toMatchObject([{ ttf_c_h: 792, strength_psi: 2451.1 }]);

    const none = await send(qc, `/api/v1/mixes/${mix.id}/points/upload`, "POST", {
      file_name: "x.csv",
      csv: "a,b\n1,2\n",
    });
    expect(none.status).toBe(422);
    expect(none.headers.get("content-type")).toContain("application/problem+json");
    const allBad = await send(qc, `/api/v1/mixes/${mix.id}/points/upload`, "POST", {
      file_name: "x.csv",
      csv: "Specimen,Age (d),Strength (psi)\nA,1,abc\n",
      curing_temp_c: 23,
    });
    expect(allBad.status).toBe(422);
    expect(
      (
        await send(operator, `/api/v1/mixes/${mix.id}/points/upload`, "POST", {
          file_name: "x.csv",
          csv,
        })
      ).status,
    ).toBe(403);
  });
});

describe("the mix pages", () => {
  it("show a mix's calibration to a viewer, read only, and answer 404 for no mix", async () => {
    const id = await mixIdByName("HS-10");
    const res = await get(viewer, `/mixes/${id}`);
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html).toContain("HS-10");
    expect(html).toContain("governs every strength estimate");
    expect(html).not.toContain("Edit the mix");
    const qcPage = await (await get(qc, `/mixes/${id}`)).text();
    expect(qcPage).toContain("Edit the mix");
    expect((await get(viewer, "/mixes/999999")).status).toBe(404);
    const list = await (await get(viewer, "/mixes")).text();
    expect(list).toContain("GP-5");
    expect(list).not.toContain('id="add-mix"');
  });
});
