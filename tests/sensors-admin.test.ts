import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { nextCalibrationDue } from "@/domain/calibration";
import { call, demoEmail, signIn, startPlinth, type RunningPlinth } from "./helpers/server";

// Gateways, API tokens and sensor calibration checks against the built server in demo mode.

let plinth: RunningPlinth;
const cookie: Record<"manager" | "qc" | "operator" | "viewer", string> = {
  manager: "",
  qc: "",
  operator: "",
  viewer: "",
};

beforeAll(async () => {
  plinth = await startPlinth();
  for (const role of ["manager", "qc", "operator", "viewer"] as const) {
    cookie[role] = await signIn(plinth.url, demoEmail(role));
  }
});
afterAll(async () => {
  await plinth?.stop();
});

const postJson = (who: string | null, path: string, body: unknown) =>
  call(plinth.url, who, path, {
    method: "POST",
    headers: { "content-type": "application/json" },
    body: JSON.stringify(body),
  });

const withKey = (key: string, path: string, init: RequestInit = {}) =>
  fetch(`${plinth.url}${path}`, {
    ...init,
    headers: {
      authorization: `Bearer ${key}`,
      "content-type": "application/json",
      ...init.headers,
    },
  });

const sendReadings = (key: string, readings: unknown[]) =>
  withKey(key, "/api/v1/readings", { method: "POST", body: JSON.stringify({ readings }) });

interface SensorJson {
  id: string;
  status: string;
  temp_offset_c?: number;
}

async function sensorsList(who: string): Promise<SensorJson[]> {
  const res = await call(plinth.url, who, "/api/v1/sensors");
  expect(res.status).toBe(200);
  const body = (await res.json()) as SensorJson[] | { sensors: SensorJson[] };
  return Array.isArray(body) ? body : body.sensors;
}

async function auditActions(): Promise<
  { action: string; entity_id: string | null; actor: string }[]
> {
  const res = await call(plinth.url, cookie.manager, "/api/v1/audit?limit=500");
  expect(res.status).toBe(200);
  return (
    (await res.json()) as { entries: { action: string; entity_id: string | null; actor: string }[] }
  ).entries;
}

describe("gateways", () => {
  it("a manager adds a gateway whose key sends readings, and its new sensor waits to be named", async () => {
    const res = await postJson(cookie.manager, "/api/v1/gateways", { name: "yard-gw.1" });
    expect(res.status).toBe(201);
    const made = (await res.json()) as { id: number; name: string; key: string };
    expect(Object.keys(made).sort()).toEqual(["id", "key", "name"]);
    expect(made.name).toBe("yard-gw.1");
    expect(made.key).toMatch(/^plg_[A-Za-z0-9_-]{32}$/);

    const sent = await sendReadings(made.key, [{ sensor: "GW-T1", ts: Date.now(), temp_c: 20 }]);
    expect(sent.status).toBe(200);
    expect(await sent.json()).toMatchObject({ accepted: 1, duplicates: 0, rejected: [] });

    const gwT1 = (await sensorsList(cookie.manager)).find((s) => s.id === "GW-T1");
    expect(gwT1?.status).toBe("new");

    // The sensors page lists it in the queue of new sensors, with the manager's action.
    const page = await call(plinth.url, cookie.manager, "/sensors");
    expect(page.status).toBe(200);
    const html = await page.text();
    expect(html).toContain("GW-T1");
    expect(html).toContain("Name and place");

    // The gateway's last use is recorded.
    const list = (await (await call(plinth.url, cookie.manager, "/api/v1/gateways")).json()) as {
      gateways: { id: number; last_used_at: string | null }[];
    };
    expect(list.gateways.find((g) => g.id === made.id)?.last_used_at).not.toBeNull();
  });

  it("never shows a full key again, in the API or on the page", async () => {
    const made = (await (
      await postJson(cookie.manager, "/api/v1/gateways", { name: "cure-room-b" })
    ).json()) as {
      id: number;
      key: string;
    };
    const res = await call(plinth.url, cookie.manager, "/api/v1/gateways");
    expect(res.status).toBe(200);
    const text = await res.text();
    expect(text).not.toContain(made.key);
    const listed = (JSON.parse(text) as { gateways: Record<string, unknown>[] }).gateways;
    const entry = listed.find((g) => g.id === made.id)!;
    expect(Object.keys(entry).sort()).toEqual(
      ["created_at", "id", "key_prefix", "last_used_at", "name", "revoked_at"].sort(),
    );
    expect(made.key.startsWith(entry.key_prefix as string)).toBe(true);
    expect((entry.key_prefix as string).length).toBeLessThan(made.key.length / 2);
    // The demo gateway is listed too, without its key.
    expect(listed.some((g) => g.name === "demo-gateway")).toBe(true);
    expect(text).not.toContain("demo-gateway-key-0001");

    const page = await call(plinth.url, cookie.manager, "/gateways");
    expect(page.status).toBe(200);
    const html = await page.text();
    expect(html).toContain("cure-room-b");
    expect(html).not.toContain(made.key);
  });

  it("refuses a name already taken (409) and names a gateway cannot carry (400)", async () => {
    expect((await postJson(cookie.manager, "/api/v1/gateways", { name: "dup-gw" })).status).toBe(
      201,
    );
    const again = await postJson(cookie.manager, "/api/v1/gateways", { name: "dup-gw" });
    expect(again.status).toBe(409);
    expect(again.headers.get("content-type")).toContain("application/problem+json");
    for (const name of ["", "has space", "slash/name", "x".repeat(65), "ümlaut"]) {
      const bad = await postJson(cookie.manager, "/api/v1/gateways", { name });
      expect(bad.status, JSON.stringify(name)).toBe(400);
      const p = (await bad.json()) as { errors: { field: string }[] };
      expect(p.errors.map((e) => e.field)).toContain("name");
    }
    expect(
      (await postJson(cookie.manager, "/api/v1/gateways", { name: "x".repeat(64) })).status,
    ).toBe(201);
  });

  it("a revoked gateway's key gets 401, and both events are in the audit log", async () => {
    const made = (await (
      await postJson(cookie.manager, "/api/v1/gateways", { name: "to-revoke" })
    ).json()) as {
      id: number;
      key: string;
    };
    expect(
      (await sendReadings(made.key, [{ sensor: "GW-T2", ts: Date.now(), temp_c: 21 }])).status,
    ).toBe(200);

    const revoked = await postJson(cookie.manager, `/api/v1/gateways/${made.id}/revoke`, {});
    expect(revoked.status).toBe(200);
    expect(((await revoked.json()) as { revoked_at: string | null }).revoked_at).not.toBeNull();

    const refused = await sendReadings(made.key, [{ sensor: "GW-T2", ts: Date.now(), temp_c: 21 }]);
    expect(refused.status).toBe(401);
    expect((await postJson(cookie.manager, `/api/v1/gateways/${made.id}/revoke`, {})).status).toBe(
      409,
    );
    expect((await postJson(cookie.manager, "/api/v1/gateways/999999/revoke", {})).status).toBe(404);

    const entries = await auditActions();
    const about = entries.filter(
      (e) => e.entity_id === String(made.id) && e.action.startsWith("gateway."),
    );
    expect(about.map((e) => e.action).sort()).toEqual(["gateway.created", "gateway.revoked"]);
    expect(about.every((e) => e.actor === "manager@example.com")).toBe(true);
  });

  it("is for managers only", async () => {
    for (const role of ["qc", "operator", "viewer"] as const) {
      expect(
        (await postJson(cookie[role], "/api/v1/gateways", { name: `by-${role}` })).status,
      ).toBe(403);
      expect((await call(plinth.url, cookie[role], "/api/v1/gateways")).status).toBe(403);
    }
  });
});

describe("API tokens", () => {
  it("a viewer token reads sensors but not the audit log, and stops working once revoked", async () => {
    const res = await postJson(cookie.manager, "/api/v1/tokens", {
      name: "lab export",
      role: "viewer",
    });
    expect(res.status).toBe(201);
    const made = (await res.json()) as { id: number; name: string; role: string; key: string };
    expect(Object.keys(made).sort()).toEqual(["id", "key", "name", "role"]);
    expect(made).toMatchObject({ name: "lab export", role: "viewer" });
    expect(made.key).toMatch(/^plk_[A-Za-z0-9_-]{32}$/);

    expect((await withKey(made.key, "/api/v1/sensors")).status).toBe(200);
    expect((await withKey(made.key, "/api/v1/audit")).status).toBe(403);
    expect(
      (await withKey(made.key, "/api/v1/gateways", { method: "POST", body: '{"name":"sneaky"}' }))
        .status,
    ).toBe(403);
    // A token cannot send readings: that is a gateway's job.
    expect(
      (await withKey(made.key, "/api/v1/readings", { method: "POST", body: '{"readings":[]}' }))
        .status,
    ).toBe(403);

    const listed = await call(plinth.url, cookie.manager, "/api/v1/tokens");
    const text = await listed.text();
    expect(text).not.toContain(made.key);
    const entry = (
      JSON.parse(text) as {
        tokens: { id: number; last_used_at: string | null; key_prefix: string }[];
      }
    ).tokens.find((t) => t.id === made.id)!;
    expect(entry.last_used_at).not.toBeNull();
    expect(made.key.startsWith(entry.key_prefix)).toBe(true);

    expect((await postJson(cookie.manager, `/api/v1/tokens/${made.id}/revoke`, {})).status).toBe(
      200,
    );
    expect((await withKey(made.key, "/api/v1/sensors")).status).toBe(401);
    expect((await postJson(cookie.manager, `/api/v1/tokens/${made.id}/revoke`, {})).status).toBe(
      409,
    );

    const actions = (await auditActions())
      .filter((e) => e.entity_id === String(made.id) && e.action.startsWith("api_token."))
      .map((e) => e.action)
      .sort();
    expect(actions).toEqual(["api_token.created", "api_token.revoked"]);
  });

  it("a token may not make tokens, even a manager's; names in use and unknown roles are refused", async () => {
    const made = (await (
      await postJson(cookie.manager, "/api/v1/tokens", { name: "erp", role: "manager" })
    ).json()) as {
      key: string;
    };
    expect((await withKey(made.key, "/api/v1/tokens")).status).toBe(200);
    const minted = await withKey(made.key, "/api/v1/tokens", {
      method: "POST",
      body: JSON.stringify({ name: "child", role: "manager" }),
    });
    expect(minted.status).toBe(403);
    expect(
      (await postJson(cookie.manager, "/api/v1/tokens", { name: "erp", role: "viewer" })).status,
    ).toBe(409);
    const bad = await postJson(cookie.manager, "/api/v1/tokens", { name: "x", role: "owner" });
    expect(bad.status).toBe(400);
    expect(
      ((await bad.json()) as { errors: { field: string }[] }).errors.map((e) => e.field),
    ).toContain("role");
  });
});

describe("calibration checks", () => {
  const sensor = "CB-05";

  it("qc records a check: the offset is stored and corrects readings from then on, not before", async () => {
    const before = Date.now() - 60_000;
    expect(
      (await sendReadings("demo-gateway-key-0001", [{ sensor, ts: before, temp_c: 20.4 }])).status,
    ).toBe(200);

    const res = await postJson(cookie.qc, `/api/v1/sensors/${sensor}/calibrations`, {
      reference_temp_c: 20.0,
      sensor_temp_c: 20.4,
      note: "Beside the lab reference, 15 min settle",
    });
    expect(res.status).toBe(201);
    const check = (await res.json()) as {
      checked_at: string;
      next_due_at: string;
      temp_offset_c: number;
      rh_offset_pct: number;
      checked_by_name: string;
      applied: boolean;
    };
    expect(check.temp_offset_c).toBeCloseTo(-0.4, 10);
    expect(check.rh_offset_pct).toBe(0);
    expect(check.applied).toBe(true);
    expect(Math.abs(Date.parse(check.checked_at) - Date.now())).toBeLessThan(60_000);
    // domain.md §7.1, ASTM C511: the next check defaults to six months on.
    expect(Date.parse(check.next_due_at)).toBe(nextCalibrationDue(Date.parse(check.checked_at)));

    const listed = (await (
      await call(plinth.url, cookie.viewer, `/api/v1/sensors/${sensor}/calibrations`)
    ).json()) as {
      temp_offset_c: number;
      calibrations: {
        reference_temp_c: number;
        sensor_temp_c: number;
        checked_by_name: string;
        note: string;
      }[];
    };
    expect(listed.temp_offset_c).toBeCloseTo(-0.4, 10);
    expect(listed.calibrations[0]).toMatchObject({
      reference_temp_c: 20,
      sensor_temp_c: 20.4,
      note: "Beside the lab reference, 15 min settle",
    });
    expect(listed.calibrations[0]!.checked_by_name).toBeTruthy();

    const after = Date.now();
    expect(
      (await sendReadings("demo-gateway-key-0001", [{ sensor, ts: after, temp_c: 20.4 }])).status,
    ).toBe(200);
    const window = await call(
      plinth.url,
      cookie.qc,
      `/api/v1/sensors/${sensor}/readings?from=${before}&to=${after}&max_points=20000`,
    );
    expect(window.status).toBe(200);
    const readings = ((await window.json()) as { readings: { ts: string; temp_c: number }[] })
      .readings;
    const at = (ms: number) => readings.find((r) => Date.parse(r.ts) === ms)?.temp_c;
    expect(at(after)).toBeCloseTo(20.0, 10);
    expect(at(before)).toBeCloseTo(20.4, 10); // stored before the check: unchanged

    const entry = (await auditActions()).find(
      (e) => e.action === "sensor.calibration_recorded" && e.entity_id === sensor,
    );
    expect(entry?.actor).toBe("qc@example.com");
  });

  it("takes a given offset, a back-dated check keeps the newer one's offset, and the page flags checks", async () => {
    const id = "EP-02";
    const given = await postJson(cookie.manager, `/api/v1/sensors/${id}/calibrations`, {
      checked_at: new Date(Date.now() - 3_600_000).toISOString(),
      reference_temp_c: 22,
      sensor_temp_c: 22.3,
      temp_offset_c: -0.25,
      rh_offset_pct: 1.5,
      next_due_at: Date.now() + 30 * 86_400_000,
    });
    expect(given.status).toBe(201);
    expect(await given.json()).toMatchObject({
      temp_offset_c: -0.25,
      rh_offset_pct: 1.5,
      applied: true,
    });

    const older = await postJson(cookie.qc, `/api/v1/sensors/${id}/calibrations`, {
      checked_at: Date.now() - 40 * 86_400_000,
      reference_temp_c: 22,
      sensor_temp_c: 23,
    });
    expect(older.status).toBe(201);
    expect(((await older.json()) as { applied: boolean }).applied).toBe(false);
    const now = (await (
      await call(plinth.url, cookie.qc, `/api/v1/sensors/${id}/calibrations`)
    ).json()) as {
      temp_offset_c: number;
      rh_offset_pct: number;
      calibrations: unknown[];
    };
    expect(now).toMatchObject({ temp_offset_c: -0.25, rh_offset_pct: 1.5 });
    // The two checks made here, beside the demo plant's own check of this sensor.
    expect(now.calibrations).toHaveLength(3);

    // The demo plant leaves CB-22 and EP-08 overdue (checked seven months ago): the page flags them.
    const html = await (await call(plinth.url, cookie.operator, "/sensors")).text();
    expect(html).toMatch(/due a calibration check/);
  });

  it("refuses operators and viewers (403), unknown sensors (404) and bad checks (400)", async () => {
    const body = { reference_temp_c: 20, sensor_temp_c: 20.4 };
    expect(
      (await postJson(cookie.operator, "/api/v1/sensors/CB-06/calibrations", body)).status,
    ).toBe(403);
    expect((await postJson(cookie.viewer, "/api/v1/sensors/CB-06/calibrations", body)).status).toBe(
      403,
    );
    expect((await postJson(cookie.qc, "/api/v1/sensors/NO-SUCH/calibrations", body)).status).toBe(
      404,
    );
    expect(
      (await call(plinth.url, cookie.operator, "/api/v1/sensors/CB-06/calibrations")).status,
    ).toBe(200);

    const cases: [unknown, string][] = [
      [{ sensor_temp_c: 20 }, "reference_temp_c"],
      [{ reference_temp_c: "warm", sensor_temp_c: 20 }, "reference_temp_c"],
      [{ reference_temp_c: 20, sensor_temp_c: 35 }, "sensor_temp_c"], // 15 °C out: replace it
      [{ ...body, checked_at: "yesterday" }, "checked_at"],
      [{ ...body, checked_at: Date.now() + 3_600_000 }, "checked_at"],
      [{ ...body, next_due_at: "2000-01-01T00:00:00Z" }, "next_due_at"],
      [{ ...body, temp_offset_c: 11 }, "temp_offset_c"],
      [{ ...body, rh_offset_pct: -25 }, "rh_offset_pct"],
    ];
    for (const [bad, field] of cases) {
      const res = await postJson(cookie.qc, "/api/v1/sensors/CB-06/calibrations", bad);
      expect(res.status, JSON.stringify(bad)).toBe(400);
      const p = (await res.json()) as { errors?: { field: string }[] };
      expect(
        p.errors?.map((e) => e.field),
        JSON.stringify(bad),
      ).toContain(field);
    }
    const list = (await (
      await call(plinth.url, cookie.qc, "/api/v1/sensors/CB-06/calibrations")
    ).json()) as {
      calibrations: unknown[];
      temp_offset_c: number;
    };
    // Only the demo plant's own check is on record: none of the refused ones was kept.
    expect(list).toMatchObject({ sensor: "CB-06", temp_offset_c: 0, rh_offset_pct: 0 });
    expect(list.calibrations).toHaveLength(1);
  });
});
