import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { call, demoEmail, signIn, startPlinth, type RunningPlinth } from "./helpers/server";

// Strip and ship releases (contract: POST /api/v1/pours/{id}/releases) and the floor's ready
// list (GET /api/v1/ready) against the built server and the demo plant. The demo's pours are
// placed relative to the server's start (simulator/plant.ts), so their state is known: P-2611-01
// and -02 were released to strip by the demo's QC; P-2611-03 has reached its strip strength;
// P-2611-04 (11 h old) has not; P-2611-05's mix GP-5 is not calibrated. Each test checks that
// state through the strength API first, so a change to the demo shows as a clear failure.

const H = 3_600_000;
const KEY = "demo-gateway-key-0001";
let plinth: RunningPlinth;
let qc: string;
let operator: string;
let viewer: string;
let manager: string;
const ids = new Map<string, number>();

interface Release {
  id: number;
  pour_id: number;
  kind: "strip" | "ship";
  released_by: { id: number; name: string; email: string };
  released_at: string;
  threshold_psi: number;
  estimate_psi: number | null;
  estimate_mpa: number | null;
  governing_sensor: string | null;
  ttf_c_h: number | null;
  equivalent_age_h: number | null;
  complete_record: boolean;
  override_reason: string | null;
  overridden: { code: string; message: string }[];
  warnings: { code: string; message: string }[];
  missing: { sensor: string; kind: string; from: string; to: string }[];
  note: string | null;
  caution: string;
  pour_status?: string;
  basis: {
    strength: {
      as_of: string;
      governing_sensor: string;
      complete_record: boolean;
      sensors: { sensor: string; ttf_c_h: number; strength_psi: number | null }[];
      strip: { threshold_psi: number };
    };
    calibration: { id: number; model: string; params: Record<string, number>; r2: number } | null;
    mix: { name: string; datum_temp_c: number };
  };
}
interface ReadyItem {
  pour_id: number;
  code: string;
  status: string;
  next: "strip" | "ship";
  strength_psi: number | null;
  ready_since: string | null;
  due_at: string | null;
  reason: string | null;
  strip: { reached_at: string | null; released_at: string | null; released_by: string | null };
  ship: { reached_at: string | null; released_at: string | null };
}
const lists = ["ready_to_strip", "ready_to_ship", "coming_up", "cannot_estimate"] as const;
type Ready = Record<(typeof lists)[number], ReadyItem[]> & { as_of: string };

const post = (cookie: string, code: string, body: unknown) =>
  call(plinth.url, cookie, `/api/v1/pours/${ids.get(code)}/releases`, {
    method: "POST",
    headers: { "content-type": "application/json" },
    body: JSON.stringify(body),
  });

async function releases(code: string): Promise<Release[]> {
  const res = await call(plinth.url, viewer, `/api/v1/pours/${ids.get(code)}/releases`);
  expect(res.status).toBe(200);
  return ((await res.json()) as { releases: Release[] }).releases;
}

async function strength(code: string) {
  const res = await call(plinth.url, viewer, `/api/v1/pours/${ids.get(code)}/strength`);
  expect(res.status).toBe(200);
  return (await res.json()) as Release["basis"]["strength"] & {
    calibrated: boolean;
    strip: { threshold_psi: number; reached_at: string | null };
    ship: { threshold_psi: number; reached_at: string | null };
  };
}

async function status(code: string): Promise<string> {
  const res = await call(plinth.url, viewer, `/api/v1/pours/${ids.get(code)}`);
  expect(res.status).toBe(200);
  return ((await res.json()) as { status: string }).status;
}

async function ready(): Promise<Ready> {
  const res = await call(plinth.url, operator, "/api/v1/ready");
  expect(res.status).toBe(200);
  return (await res.json()) as Ready;
}

beforeAll(async () => {
  plinth = await startPlinth();
  qc = await signIn(plinth.url, demoEmail("qc"));
  operator = await signIn(plinth.url, demoEmail("operator"));
  viewer = await signIn(plinth.url, demoEmail("viewer"));
  manager = await signIn(plinth.url, demoEmail("manager"));
  const res = await call(plinth.url, viewer, "/api/v1/pours?limit=500");
  for (const p of ((await res.json()) as { pours: { id: number; code: string }[] }).pours)
    ids.set(p.code, p.id);
});
afterAll(async () => {
  await plinth?.stop();
});

describe("the demo's past releases", () => {
  it("has P-2611-01 and -02 released to strip by QC, at or above the strip strength", async () => {
    for (const code of ["P-2611-01", "P-2611-02"]) {
      const [r, ...more] = await releases(code);
      expect(more).toEqual([]);
      expect(r!.kind).toBe("strip");
      expect(r!.released_by.email).toBe("qc@example.com");
      expect(r!.estimate_psi!).toBeGreaterThanOrEqual(r!.threshold_psi);
      expect(r!.override_reason).toBeNull();
      // The basis is the strength as it stood when QC signed, not now.
      expect(r!.basis.strength.as_of).toBe(r!.released_at);
      expect(Date.parse(r!.released_at)).toBeLessThan(Date.now() - H);
      expect(r!.caution).toMatch(/engineer of record/);
      expect(await status(code)).toBe("stripped");
    }
  });
});

describe("GET /api/v1/ready", () => {
  it("lists open pours by what comes next, soonest first, and uncalibrated ones apart", async () => {
    const r = await ready();
    const where = (code: string) => lists.filter((k) => r[k].some((i) => i.code === code));
    expect(where("P-2611-03")).toEqual(["ready_to_strip"]);
    expect(where("P-2611-04")).toEqual(["coming_up"]);
    expect(where("P-2611-05")).toEqual(["cannot_estimate"]);
    expect(r.cannot_estimate.find((i) => i.code === "P-2611-05")!.reason).toBe(
      "Cannot estimate: mix not calibrated",
    );
    // Stripped pours come up (or are ready) for the ship next.
    for (const code of ["P-2611-01", "P-2611-02"]) {
      const item = [...r.ready_to_ship, ...r.coming_up].find((i) => i.code === code)!;
      expect(item.next).toBe("ship");
      expect(item.strip.released_by).toBe("Ravi Okafor");
    }
    const strip = r.ready_to_strip.find((i) => i.code === "P-2611-03")!;
    expect(strip.next).toBe("strip");
    expect(strip.ready_since).toBe(strip.strip.reached_at);
    // Soonest first: coming up by forecast, none last; ready lists by when they became ready.
    const due = r.coming_up.map((i) => (i.due_at === null ? Infinity : Date.parse(i.due_at)));
    expect(due).toEqual([...due].sort((a, b) => a - b));
    for (const k of ["ready_to_strip", "ready_to_ship"] as const) {
      const since = r[k].map((i) => Date.parse(i.ready_since!));
      expect(since).toEqual([...since].sort((a, b) => a - b));
    }
  });

  it("is readable by a viewer and needs a session", async () => {
    expect((await call(plinth.url, viewer, "/api/v1/ready")).status).toBe(200);
    expect((await call(plinth.url, null, "/api/v1/ready")).status).toBe(401);
  });
});

describe("POST /api/v1/pours/{id}/releases", () => {
  it("refuses a strip release below the threshold (409) and records nothing", async () => {
    const s = await strength("P-2611-04");
    expect(s.calibrated).toBe(true);
    expect(s.strip.reached_at).toBeNull();
    const res = await post(qc, "P-2611-04", { kind: "strip", note: "Forms needed for bed 5" });
    expect(res.status).toBe(409);
    expect(res.headers.get("content-type")).toContain("application/problem+json");
    const body = (await res.json()) as {
      type: string;
      detail: string;
      errors: { field: string }[];
    };
    expect(body.type).toMatch(/release-needs-override$/);
    expect(body.detail).toMatch(/below the strip strength \(3,500 psi\)/);
    expect(body.errors.map((e) => e.field)).toEqual(["override_reason"]);
    expect(await releases("P-2611-04")).toEqual([]);
    expect(await status("P-2611-04")).toBe("curing");
  });

  it("lets only QC and managers sign: operator and viewer get 403", async () => {
    for (const who of [operator, viewer]) {
      const res = await post(who, "P-2611-03", { kind: "strip", note: null });
      expect(res.status).toBe(403);
    }
    expect((await post(qc, "P-2611-03", { kind: "scrap" })).status).toBe(400);
    expect(
      (
        await call(plinth.url, qc, "/api/v1/pours/999999/releases", {
          method: "POST",
          headers: { "content-type": "application/json" },
          body: JSON.stringify({ kind: "strip" }),
        })
      ).status,
    ).toBe(404);
    expect(await releases("P-2611-03")).toEqual([]);
  });

  it("records a strip release at the threshold with its basis, and strips the pour", async () => {
    const before = await strength("P-2611-03");
    expect(before.strip.reached_at).not.toBeNull();
    const res = await post(qc, "P-2611-03", { kind: "strip", note: "Bed 4 north end first" });
    expect(res.status).toBe(201);
    const r = (await res.json()) as Release;
    expect(r.kind).toBe("strip");
    expect(r.pour_status).toBe("stripped");
    expect(r.released_by.email).toBe("qc@example.com");
    expect(Math.abs(Date.parse(r.released_at) - Date.now())).toBeLessThan(60_000);
    expect(r.threshold_psi).toBe(3_500);
    expect(r.override_reason).toBeNull();
    expect(r.overridden).toEqual([]);
    expect(r.note).toBe("Bed 4 north end first");
    expect(r.caution).toMatch(/never replace/);
    // The estimate is the governing (weakest) sensor's, as the strength view gives it.
    const gov = before.sensors.find((s) => s.sensor === before.governing_sensor)!;
    expect(r.governing_sensor).toBe(before.governing_sensor);
    expect(Math.abs(r.estimate_psi! - gov.strength_psi!)).toBeLessThanOrEqual(1);
    expect(r.estimate_psi!).toBeGreaterThanOrEqual(r.threshold_psi);
    expect(Math.abs(r.ttf_c_h! - gov.ttf_c_h)).toBeLessThanOrEqual(0.1);
    expect(r.complete_record).toBe(true);
    // The stored basis: the whole strength view then, and the calibration behind it.
    expect(r.basis.strength.governing_sensor).toBe(before.governing_sensor);
    expect(r.basis.strength.sensors.map((s) => s.sensor)).toEqual(
      before.sensors.map((s) => s.sensor),
    );
    expect(r.basis.calibration!.model).toBe("log");
    expect(Object.keys(r.basis.calibration!.params).sort()).toEqual(["a_mpa", "b_mpa_per_decade"]);
    expect(r.basis.calibration!.r2).toBeGreaterThan(0.9);
    expect(r.basis.mix).toMatchObject({ name: "HS-10", datum_temp_c: -10 });
    // Stored: the list gives the same row back.
    const [stored] = await releases("P-2611-03");
    expect(stored).toEqual((({ pour_status: _s, ...rest }) => rest)(r));
    expect(await status("P-2611-03")).toBe("stripped");

    const audit = (await (
      await call(plinth.url, manager, "/api/v1/audit?action=release.strip&limit=50")
    ).json()) as {
      entries: {
        action: string;
        pour_id: number;
        actor: string;
        detail: Record<string, unknown>;
      }[];
    };
    const entry = audit.entries.find((e) => e.pour_id === ids.get("P-2611-03"))!;
    expect(entry.action).toBe("release.strip");
    expect(entry.actor).toBe("qc@example.com");
    expect(entry.detail).toMatchObject({
      pour_code: "P-2611-03",
      estimate_psi: r.estimate_psi,
      overridden: [],
    });
  });

  it("refuses a second release of the same kind, even with an override reason", async () => {
    const res = await post(qc, "P-2611-03", { kind: "strip", override_reason: "once more" });
    expect(res.status).toBe(409);
    expect(((await res.json()) as { type: string }).type).toMatch(/release-refused$/);
    expect(await releases("P-2611-03")).toHaveLength(1);
  });

  it("refuses a ship release below the ship strength, then takes it with an override reason", async () => {
    const s = await strength("P-2611-03");
    expect(s.ship.reached_at).toBeNull();
    const refused = await post(qc, "P-2611-03", { kind: "ship" });
    expect(refused.status).toBe(409);
    expect(((await refused.json()) as { detail: string }).detail).toMatch(
      /ship strength \(7,500 psi\)/,
    );

    const reason = "Cylinder breaks at 7,800 psi (lab sheet 2611-03-B); engineer of record agreed";
    const res = await post(manager, "P-2611-03", { kind: "ship", override_reason: `  ${reason} ` });
    expect(res.status).toBe(201);
    const r = (await res.json()) as Release;
    expect(r.override_reason).toBe(reason);
    expect(r.overridden.map((o) => o.code)).toEqual(["below-threshold"]);
    expect(r.warnings.map((w) => w.code)).toContain("override");
    expect(r.estimate_psi!).toBeLessThan(r.threshold_psi);
    expect(r.released_by.email).toBe("manager@example.com");
    expect(r.pour_status).toBe("ready_to_ship");
    expect(await status("P-2611-03")).toBe("ready_to_ship");
    expect((await releases("P-2611-03")).map((x) => x.kind)).toEqual(["strip", "ship"]);

    const audit = (await (
      await call(plinth.url, manager, "/api/v1/audit?action=release.ship&limit=50")
    ).json()) as { entries: { pour_id: number; detail: Record<string, unknown> }[] };
    expect(audit.entries.find((e) => e.pour_id === ids.get("P-2611-03"))!.detail).toMatchObject({
      override_reason: reason,
      overridden: ["below-threshold"],
      status: { from: "stripped", to: "ready_to_ship" },
    });
    // Signed off to ship, it shows on the floor's list as ready to ship, with who signed.
    const item = (await ready()).ready_to_ship.find((i) => i.code === "P-2611-03")!;
    expect(item.ship.released_at).toBe(r.released_at);
  });

  it("refuses releases of a pour whose mix is not calibrated, unless overridden", async () => {
    const ship = await post(qc, "P-2611-05", { kind: "ship" });
    expect(ship.status).toBe(409);
    const detail = ((await ship.json()) as { detail: string }).detail;
    expect(detail).toMatch(/not calibrated/);
    expect(detail).toMatch(/no strip release/);
    const strip = await post(qc, "P-2611-05", { kind: "strip", override_reason: "" });
    expect(strip.status).toBe(409);

    const res = await post(qc, "P-2611-05", {
      kind: "strip",
      override_reason: "Field-cured cylinders broke at 2,900 psi this morning",
    });
    expect(res.status).toBe(201);
    const r = (await res.json()) as Release;
    expect(r.estimate_psi).toBeNull();
    expect(r.overridden.map((o) => o.code)).toEqual(["not-calibrated"]);
    expect(r.basis.calibration).toBeNull();
    expect(r.pour_status).toBe("stripped");
  });

  it("allows a release at the threshold with an incomplete record, and says so", async () => {
    // A pour of the demo's HS-10 cast 24 h ago at 30 °C with 3 hours of no readings: the gap
    // adds nothing (contract), and 21 h × 40 °C·h = 840 °C·h is still past the strip strength.
    const cast = Math.floor((Date.now() - 24 * H - 10 * 60_000) / 60_000) * 60_000;
    const rs: { sensor: string; ts: number; temp_c: number }[] = [];
    for (let h = 0; h <= 24; h += 0.5)
      if (h <= 6 || h >= 9) rs.push({ sensor: "TR-GAP", ts: cast + h * H, temp_c: 30 });
    const sent = await fetch(`${plinth.url}/api/v1/readings`, {
      method: "POST",
      headers: { authorization: `Bearer ${KEY}`, "content-type": "application/json" },
      body: JSON.stringify({ readings: rs }),
    });
    expect(sent.status).toBe(200);
    const mixes = (await (await call(plinth.url, qc, "/api/v1/mixes")).json()) as {
      mixes: { id: number; name: string }[];
    };
    const made = await call(plinth.url, operator, "/api/v1/pours", {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify({
        code: "T-REL-GAP",
        mix_id: mixes.mixes.find((m) => m.name === "HS-10")!.id,
        cast_at: cast,
        sensors: ["TR-GAP"],
      }),
    });
    expect(made.status).toBe(201);
    ids.set("T-REL-GAP", ((await made.json()) as { id: number }).id);
    const s = await strength("T-REL-GAP");
    expect(s.complete_record).toBe(false);
    expect(Math.abs(s.sensors[0]!.ttf_c_h - 840)).toBeLessThanOrEqual(0.1);

    const res = await post(qc, "T-REL-GAP", { kind: "strip" });
    expect(res.status).toBe(201);
    const r = (await res.json()) as Release;
    expect(r.complete_record).toBe(false);
    expect(r.overridden).toEqual([]);
    expect(r.warnings.map((w) => w.code)).toEqual(["incomplete-record"]);
    expect(r.missing).toEqual([
      {
        sensor: "TR-GAP",
        kind: "gap",
        from: new Date(cast + 6 * H).toISOString(),
        to: new Date(cast + 9 * H).toISOString(),
      },
    ]);
    const [stored] = await releases("T-REL-GAP");
    expect(stored!.complete_record).toBe(false);
    expect(stored!.basis.strength.complete_record).toBe(false);
  });
});
