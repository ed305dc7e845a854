import Database from "better-sqlite3";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { defaultRules } from "@/domain/alerts/rules";
import { call, demoEmail, signIn, startPlinth, type RunningPlinth } from "./helpers/server";

// Alert rules through the API and on their page, against the built demo server. Defaults and
// their sources come from src/domain/alerts/rules.ts; the °F checks use °F = 1.8·°C + 32, exact
// by the definition of the Fahrenheit degree (domain.md §8.3: 10 °C = 50 °F, 22 °C/h = 39.6 °F/h).

let plinth: RunningPlinth;
let qc: string;
let operator: string;
let viewer: string;
let manager: string;
let yardAreaId: number;
let pourId: number;

interface Rule {
  id: number;
  name: string;
  kind: string;
  threshold: number | null;
  threshold_high: number | null;
  threshold_unit: string;
  hold_min: number;
  clear_margin: number;
  severity: string;
  audience: string;
  scope: {
    area_id: number | null;
    area: string | null;
    sensor_kind: string | null;
    sensor_id: string | null;
    pour_id: number | null;
    pour_code: string | null;
  };
  escalate_after_min: number | null;
  enabled: boolean;
  source: string | null;
  description: string;
  open_episodes: number;
  updated_at: string;
}

interface Problem {
  status: number;
  title: string;
  detail?: string;
  errors?: { field: string; error: string }[];
}

const send = (cookie: string | null, path: string, method: string, body?: unknown) =>
  call(plinth.url, cookie, path, {
    method,
    headers: { "content-type": "application/json" },
    ...(body !== undefined && { body: JSON.stringify(body) }),
  });
const get = (cookie: string | null, path: string) => call(plinth.url, cookie, path);

async function listRules(cookie = qc): Promise<Rule[]> {
  const res = await get(cookie, "/api/v1/alert-rules");
  expect(res.status).toBe(200);
  return ((await res.json()) as { rules: Rule[] }).rules;
}

/** A rule that can never fire (disabled, and a limit no reading reaches), for tests of the record. */
const quietRule = (name: string) => ({
  name,
  kind: "temp_high",
  threshold: 119,
  hold_min: 0,
  clear_margin: 0,
  severity: "info",
  audience: "digest",
  enabled: false,
  scope: { sensor_id: "CB-01" },
});

async function create(body: unknown): Promise<Rule> {
  const res = await send(qc, "/api/v1/alert-rules", "POST", body);
  expect(res.status, JSON.stringify(await res.clone().json())).toBe(201);
  return (await res.json()) as Rule;
}

function withDb<T>(fn: (db: Database.Database) => T): T {
  const db = new Database(plinth.dbPath, { fileMustExist: true });
  try {
    return fn(db);
  } finally {
    db.close();
  }
}

beforeAll(async () => {
  plinth = await startPlinth();
  qc = await signIn(plinth.url, demoEmail("qc"));
  operator = await signIn(plinth.url, demoEmail("operator"));
  viewer = await signIn(plinth.url, demoEmail("viewer"));
  manager = await signIn(plinth.url, demoEmail("manager"));
  withDb((db) => {
    yardAreaId = db.prepare<[], { id: number }>("select id from areas where name = 'Yard'").get()!
      .id;
    pourId = db.prepare<[], { id: number }>("select id from pours where code = 'P-2611-01'").get()!
      .id;
  });
  // The alert engine adds the defaults to a plant without rules; where it has not (yet), the
  // same defaults go in through the API, which also shows each of them passes its checks.
  if ((await listRules()).length === 0) {
    for (const d of defaultRules) {
      await create({
        name: d.name,
        kind: d.kind,
        threshold: d.threshold,
        threshold_high: d.thresholdHigh,
        hold_min: d.holdMin,
        clear_margin: d.clearMargin,
        severity: d.severity,
        audience: d.audience,
        scope: { sensor_kind: d.scopeSensorKind },
        escalate_after_min: d.escalateAfterMin,
        source: d.source,
      });
    }
  }
});
afterAll(async () => {
  await plinth?.stop();
});

describe("reading the rules", () => {
  it("lists the defaults with SI thresholds, their unit, words and source", async () => {
    const rules = await listRules(viewer);
    const dry = rules.find((r) => r.name === "Dry cure bag")!;
    // ASTM C511: moist curing at 95 % RH or more (domain.md §7.1).
    expect(dry).toMatchObject({
      kind: "rh_low",
      threshold: 95,
      threshold_high: null,
      threshold_unit: "pct_rh",
      hold_min: 0,
      clear_margin: 1.5,
      severity: "critical",
      audience: "on_call",
      scope: { sensor_kind: "bag", area_id: null, sensor_id: null, pour_id: null },
      escalate_after_min: 15,
      description: "humidity below 95 % RH",
    });
    expect(dry.source).toContain("ASTM C511");
    const bins = rules.find((r) => r.kind === "bin_range")!;
    // ACI 301 / 305.1: at most 35 °C at discharge (domain.md §5.3).
    expect(bins).toMatchObject({ threshold: 2, threshold_high: 35, threshold_unit: "c" });
    const rise = rules.find((r) => r.kind === "rate_rise")!;
    // PCI MNL-116 §4.19.3, 22 °C/h (domain.md §7.4, from memory).
    expect(rise).toMatchObject({ threshold: 22, threshold_unit: "c_per_h" });
    const strip = rules.find((r) => r.kind === "pour_strip")!;
    expect(strip).toMatchObject({ threshold: null, threshold_unit: "none" });
    expect(rules.find((r) => r.kind === "silent")!.threshold_unit).toBe("min");
    expect(rules.find((r) => r.kind === "battery_low")!.threshold_unit).toBe("pct_battery");
  });

  it("answers 401 without a session and 404 for a rule that does not exist", async () => {
    expect((await get(null, "/api/v1/alert-rules")).status).toBe(401);
    expect((await send(null, "/api/v1/alert-rules", "POST", quietRule("x"))).status).toBe(401);
    expect((await get(qc, "/api/v1/alert-rules/999999")).status).toBe(404);
    expect((await send(qc, "/api/v1/alert-rules/999999", "PATCH", { enabled: false })).status).toBe(
      404,
    );
    expect((await send(qc, "/api/v1/alert-rules/999999", "DELETE")).status).toBe(404);
  });
});

describe("QC keeps the rules", () => {
  it("adds, reads, changes, disables and deletes a rule, each change audited", async () => {
    const made = await create({
      name: "Yard beds too cold",
      kind: "temp_low",
      threshold: 5,
      hold_min: 20,
      clear_margin: 1,
      severity: "warning",
      audience: "quality",
      scope: { area_id: yardAreaId, sensor_kind: "bag" },
      source: "ACI 306R cold weather: 5 °C daily mean",
    });
    expect(made).toMatchObject({
      name: "Yard beds too cold",
      threshold: 5,
      threshold_unit: "c",
      hold_min: 20,
      escalate_after_min: null,
      enabled: true,
      scope: { area_id: yardAreaId, area: "Yard", sensor_kind: "bag", pour_code: null },
      description: "temperature below 5 °C",
      open_episodes: 0,
    });
    const again = await get(viewer, `/api/v1/alert-rules/${made.id}`);
    expect(again.status).toBe(200);
    expect(await again.json()).toEqual(made);

    const changed = await send(qc, `/api/v1/alert-rules/${made.id}`, "PATCH", {
      threshold: 4,
      hold_min: 30,
      scope: { pour_id: pourId },
    });
    expect(changed.status).toBe(200);
    const c = (await changed.json()) as Rule;
    // A scope field given replaces that field only (JSON merge patch, RFC 7396).
    expect(c).toMatchObject({
      threshold: 4,
      hold_min: 30,
      scope: { area: "Yard", sensor_kind: "bag", pour_id: pourId, pour_code: "P-2611-01" },
    });

    const off = await send(manager, `/api/v1/alert-rules/${made.id}`, "PATCH", { enabled: false });
    expect(off.status).toBe(200);
    expect(((await off.json()) as Rule).enabled).toBe(false);

    expect((await send(qc, `/api/v1/alert-rules/${made.id}`, "DELETE")).status).toBe(204);
    expect((await get(qc, `/api/v1/alert-rules/${made.id}`)).status).toBe(404);

    const audit = await get(manager, "/api/v1/audit?action=alert_rule.&limit=500");
    const entries = (
      (await audit.json()) as {
        entries: {
          action: string;
          actor: string;
          entity_type: string;
          entity_id: string;
          detail: Record<string, unknown>;
        }[];
      }
    ).entries.filter((e) => e.entity_id === String(made.id));
    expect(entries.map((e) => `${e.action} by ${e.actor}`).reverse()).toEqual([
      "alert_rule.create by qc@example.com",
      "alert_rule.update by qc@example.com",
      "alert_rule.update by manager@example.com",
      "alert_rule.delete by qc@example.com",
    ]);
    expect(entries.every((e) => e.entity_type === "alert_rule")).toBe(true);
    const firstChange = entries.find(
      (e) => e.actor === "qc@example.com" && e.action === "alert_rule.update",
    )!;
    expect(firstChange.detail).toMatchObject({
      before: { threshold: 5, hold_min: 20, scope: { pour_id: null } },
      after: { threshold: 4, hold_min: 30, scope: { pour_id: pourId } },
    });
  });

  it("refuses a second rule of the same name (409, on the name field), letter case and spaces aside", async () => {
    // Rules are told apart by name on alerts, texts and the audit (Plinth policy).
    const first = await create(quietRule("Bin B too warm"));
    const twin = await send(qc, "/api/v1/alert-rules", "POST", quietRule("  bin b TOO warm "));
    expect(twin.status).toBe(409);
    expect(((await twin.json()) as Problem).errors).toEqual([
      { field: "name", error: 'Another rule is already called "Bin B too warm"' },
    ]);
    const other = await create(quietRule("Bin C too warm"));
    const rename = await send(qc, `/api/v1/alert-rules/${other.id}`, "PATCH", {
      name: "BIN B too warm",
    });
    expect(rename.status).toBe(409);
    // A rule's own name in other letters is no clash.
    const own = await send(qc, `/api/v1/alert-rules/${first.id}`, "PATCH", {
      name: "Bin B Too Warm",
    });
    expect(own.status).toBe(200);
    const names = (await listRules()).map((r) => r.name.toLowerCase());
    expect(names.filter((n) => n === "bin b too warm")).toHaveLength(1);
    expect(names.filter((n) => n === "bin c too warm")).toHaveLength(1);
  });

  it("writes nothing when a change changes nothing", async () => {
    const made = await create(quietRule("Unchanged"));
    const res = await send(qc, `/api/v1/alert-rules/${made.id}`, "PATCH", { threshold: 119 });
    expect(res.status).toBe(200);
    const audit = await get(manager, `/api/v1/audit?action=alert_rule.update&q=${made.id}`);
    const entries = ((await audit.json()) as { entries: { entity_id: string }[] }).entries;
    expect(entries.filter((e) => e.entity_id === String(made.id))).toEqual([]);
  });

  it("keeps a rule out of reach of operators and viewers (403), who may still read it", async () => {
    const made = await create(quietRule("Only QC edits"));
    for (const who of [operator, viewer]) {
      expect((await send(who, "/api/v1/alert-rules", "POST", quietRule("nope"))).status).toBe(403);
      expect(
        (await send(who, `/api/v1/alert-rules/${made.id}`, "PATCH", { enabled: true })).status,
      ).toBe(403);
      expect((await send(who, `/api/v1/alert-rules/${made.id}`, "DELETE")).status).toBe(403);
      expect((await get(who, `/api/v1/alert-rules/${made.id}`)).status).toBe(200);
    }
    expect((await get(qc, `/api/v1/alert-rules/${made.id}`)).status).toBe(200);
  });
});

describe("checks for each kind", () => {
  const base = { name: "Check", hold_min: 0, clear_margin: 0, audience: "quality", enabled: false };
  // Plinth policy (src/domain/alerts/ruleForm.ts), with the trade's bounds: RH and battery are
  // 0–100 %; a reading is −40 to 120 °C (readings contract).
  it.each<[string, Record<string, unknown>, string]>([
    ["a bin range without its top", { kind: "bin_range", threshold: 2 }, "threshold_high"],
    [
      "a bin range upside down",
      { kind: "bin_range", threshold: 35, threshold_high: 2 },
      "threshold_high",
    ],
    ["a strip milestone with a threshold", { kind: "pour_strip", threshold: 3000 }, "threshold"],
    [
      "a ship milestone on bag sensors",
      { kind: "pour_ship", scope: { sensor_kind: "bag" } },
      "scope.sensor_kind",
    ],
    [
      "a ship milestone on one sensor",
      { kind: "pour_ship", scope: { sensor_id: "CB-01" } },
      "scope.sensor_id",
    ],
    ["a silence of no minutes", { kind: "silent", threshold: 0 }, "threshold"],
    ["humidity of 120 %", { kind: "rh_low", threshold: 120 }, "threshold"],
    ["a battery of −5 %", { kind: "battery_low", threshold: -5 }, "threshold"],
    ["a low temperature with no limit", { kind: "temp_low" }, "threshold"],
    ["a hold over a day", { kind: "temp_low", threshold: 5, hold_min: 1441 }, "hold_min"],
    ["a negative margin", { kind: "temp_low", threshold: 5, clear_margin: -1 }, "clear_margin"],
    [
      "escalation after no time",
      { kind: "temp_low", threshold: 5, audience: "on_call", escalate_after_min: 0 },
      "escalate_after_min",
    ],
    [
      "escalation of an e-mail-only rule",
      { kind: "temp_low", threshold: 5, escalate_after_min: 15 },
      "escalate_after_min",
    ],
    ["an empty name", { kind: "temp_low", threshold: 5, name: "  " }, "name"],
    ["a name of 81 characters", { kind: "temp_low", threshold: 5, name: "x".repeat(81) }, "name"],
    ["a kind Plinth does not have", { kind: "dew_point", threshold: 5 }, "kind"],
  ])("refuses %s (400, naming the field)", async (_what, over, field) => {
    const res = await send(qc, "/api/v1/alert-rules", "POST", { ...base, ...over });
    expect(res.status).toBe(400);
    expect(res.headers.get("content-type")).toContain("application/problem+json");
    const p = (await res.json()) as Problem;
    expect(p.errors?.map((e) => e.field)).toContain(field);
  });

  it("answers 422 naming each scope field that points at nothing", async () => {
    const res = await send(qc, "/api/v1/alert-rules", "POST", {
      ...base,
      kind: "temp_low",
      threshold: 5,
      scope: { area_id: 999_999, pour_id: 999_999 },
    });
    expect(res.status).toBe(422);
    const p = (await res.json()) as Problem;
    expect(p.errors?.map((e) => e.field).sort()).toEqual(["scope.area_id", "scope.pour_id"]);
    const sensor = await send(qc, "/api/v1/alert-rules", "POST", {
      ...base,
      kind: "temp_low",
      threshold: 5,
      scope: { sensor_id: "NO-SUCH-9" },
    });
    expect(sensor.status).toBe(422);
    expect(((await sensor.json()) as Problem).errors).toEqual([
      { field: "scope.sensor_id", error: "No sensor is called NO-SUCH-9" },
    ]);
  });

  it("checks a change against the whole rule: a new kind names what no longer fits", async () => {
    const made = await create({
      ...base,
      name: "Becomes a milestone",
      kind: "temp_low",
      threshold: 5,
      hold_min: 10,
      clear_margin: 1,
      scope: { area_id: yardAreaId },
    });
    const bad = await send(qc, `/api/v1/alert-rules/${made.id}`, "PATCH", { kind: "pour_strip" });
    expect(bad.status).toBe(400);
    expect(((await bad.json()) as Problem).errors?.map((e) => e.field).sort()).toEqual([
      "clear_margin",
      "hold_min",
      "scope.area_id",
      "threshold",
    ]);
    const good = await send(qc, `/api/v1/alert-rules/${made.id}`, "PATCH", {
      kind: "pour_strip",
      threshold: null,
      hold_min: 0,
      clear_margin: 0,
      scope: { area_id: null, pour_id: pourId },
    });
    expect(good.status).toBe(200);
    expect(await good.json()).toMatchObject({
      kind: "pour_strip",
      threshold_unit: "none",
      description: "strip strength reached",
      scope: { area_id: null, pour_code: "P-2611-01" },
    });
  });
});

describe("a rule with a record", () => {
  it("counts its open episodes, keeps its kind, and refuses to be deleted (409), saying to disable it", async () => {
    const made = await create(quietRule("Has a record"));
    const now = Date.now();
    withDb((db) => {
      const insert = db.prepare(
        `insert into alert_episodes (rule_id, sensor_id, state, severity, started_at, opened_at, cleared_at, created_at)
         values (?, 'CB-01', ?, 'info', ?, ?, ?, ?)`,
      );
      insert.run(made.id, "cleared", now - 7_200_000, now - 7_200_000, now - 3_600_000, now);
      insert.run(made.id, "open", now - 600_000, now - 600_000, null, now);
    });
    const read = (await (await get(qc, `/api/v1/alert-rules/${made.id}`)).json()) as Rule;
    expect(read.open_episodes).toBe(1);

    const newKind = await send(qc, `/api/v1/alert-rules/${made.id}`, "PATCH", {
      kind: "temp_low",
    });
    expect(newKind.status).toBe(409);
    expect(((await newKind.json()) as Problem).detail).toContain("Add a new rule instead");

    const res = await send(qc, `/api/v1/alert-rules/${made.id}`, "DELETE");
    expect(res.status).toBe(409);
    const p = (await res.json()) as Problem;
    expect(p.detail).toContain("2 alert episodes");
    expect(p.detail).toContain("Disable it instead");
    expect((await get(qc, `/api/v1/alert-rules/${made.id}`)).status).toBe(200);
    const audit = await get(manager, `/api/v1/audit?action=alert_rule.delete&q=${made.id}`);
    const entries = ((await audit.json()) as { entries: { entity_id: string }[] }).entries;
    expect(entries.filter((e) => e.entity_id === String(made.id))).toEqual([]);
  });
});

describe("the rules page", () => {
  /** What each rule's card says it alerts on, as drawn (not the island's props). */
  const watchTexts = (html: string) =>
    [...html.matchAll(/data-testid="rule-watch">([^<]*)</g)].map((m) => m[1]!);

  it("shows a us reader °F and °F/h, and an SI reader °C", async () => {
    const us = await get(qc, "/alerts/rules");
    expect(us.status).toBe(200);
    const html = await us.text();
    expect(html).toContain("<title>Alert rules");
    const shown = watchTexts(html);
    // "Cold cure bag": 10 °C = 50 °F; "Concrete heating too fast": 22 °C/h = 39.6 °F/h;
    // bins 2 to 35 °C = 35.6 to 95 °F (domain.md §8.3).
    expect(shown).toContain("temperature below 50 °F");
    expect(shown).toContain("rising faster than 39.6 °F/h");
    expect(shown).toContain("outside 35.6 to 95 °F");
    // Humidity is the same in both systems.
    expect(shown).toContain("humidity below 95 % RH");
    expect(shown.filter((t) => t.includes("°C"))).toEqual([]);
    expect(html).toContain("Add a rule");

    const toSi = await send(manager, "/api/v1/me", "PATCH", { units: "si" });
    expect(toSi.status).toBe(200);
    const si = watchTexts(await (await get(manager, "/alerts/rules")).text());
    expect(si).toContain("temperature below 10 °C");
    expect(si).toContain("rising faster than 22 °C/h");
    expect(si.filter((t) => t.includes("°F"))).toEqual([]);
  });

  it("gives operators and viewers the rules read only", async () => {
    for (const who of [operator, viewer]) {
      const res = await get(who, "/alerts/rules");
      expect(res.status).toBe(200);
      const html = await res.text();
      expect(html).toContain("Dry cure bag");
      expect(html).toContain("Texts the operator on call, e-mails QC and managers");
      expect(html).toContain("QC or a manager edits them");
      expect(html).not.toContain("Add a rule");
      expect(html).not.toContain('role="switch"');
      expect(html).not.toMatch(/>Delete</);
    }
  });
});

describe("the API's description", () => {
  it("documents the rule routes with their bodies", async () => {
    const doc = (await (await fetch(`${plinth.url}/api/v1/openapi.json`)).json()) as {
      paths: Record<
        string,
        Record<
          string,
          {
            summary: string;
            requestBody?: {
              content: { "application/json": { schema: { properties: Record<string, unknown> } } };
            };
          }
        >
      >;
    };
    const post = doc.paths["/api/v1/alert-rules"]!.post!;
    expect(Object.keys(post.requestBody!.content["application/json"].schema.properties)).toEqual(
      expect.arrayContaining([
        "name",
        "kind",
        "threshold",
        "threshold_high",
        "hold_min",
        "clear_margin",
        "scope",
        "escalate_after_min",
      ]),
    );
    expect(doc.paths["/api/v1/alert-rules/{id}"]!.delete!.summary).toContain("409");
  });
});
