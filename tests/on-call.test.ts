import Database from "better-sqlite3";
import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { call, demoEmail, signIn, startPlinth, type RunningPlinth } from "./helpers/server";

// The on-call rota against the built server in demo mode (plant time zone America/Chicago).

type RoleName = "manager" | "qc" | "operator" | "viewer";
let plinth: RunningPlinth;
const cookie = {} as Record<RoleName, string>;
const ids = {} as Record<RoleName, number>;

interface Person {
  user_id: number;
  name: string;
  escalation_order: number;
  shift_id: number;
  shift_name: string;
  has_phone: boolean;
  sms: boolean;
  email: boolean;
}
interface Shift {
  id: number;
  name: string;
  user_id: number;
  user_name: string;
  has_phone: boolean;
  phone_masked: string | null;
  weekdays: number[];
  start: string;
  end: string;
  crosses_midnight: boolean;
  escalation_order: number;
  warnings?: string[];
}
interface Rota {
  time_zone: string;
  now: { at: string; on_call: Person[]; until: string | null; next: Person[] | null };
  shifts: Shift[];
  warnings: string[];
}

const send = (who: string, method: string, path: string, body?: unknown) =>
  call(plinth.url, who, path, {
    method,
    headers: { "content-type": "application/json" },
    ...(body === undefined ? {} : { body: JSON.stringify(body) }),
  });

async function rota(who: string = cookie.manager, query = ""): Promise<Rota> {
  const res = await call(plinth.url, who, `/api/v1/on-call${query}`);
  expect(res.status).toBe(200);
  return (await res.json()) as Rota;
}

async function addShift(body: Record<string, unknown>): Promise<Shift> {
  const res = await send(cookie.manager, "POST", "/api/v1/on-call", body);
  expect(res.status, await res.clone().text()).toBe(201);
  return (await res.json()) as Shift;
}

const everyDay = [0, 1, 2, 3, 4, 5, 6];

beforeAll(async () => {
  plinth = await startPlinth();
  for (const role of ["manager", "qc", "operator", "viewer"] as const) {
    cookie[role] = await signIn(plinth.url, demoEmail(role));
    const me = await call(plinth.url, cookie[role], "/api/v1/me");
    ids[role] = ((await me.json()) as { id: number }).id;
  }
});
afterAll(async () => {
  await plinth?.stop();
});

// Each test starts from an empty rota, whatever the demo seeded.
beforeEach(async () => {
  for (const s of (await rota()).shifts) {
    expect((await send(cookie.manager, "DELETE", `/api/v1/on-call/${s.id}`)).status).toBe(204);
  }
});

describe("the rota's shifts", () => {
  it("a manager adds, changes and removes a shift, and each change is audited", async () => {
    const made = await addShift({
      name: "Nights",
      user_id: ids.operator,
      weekdays: [5, 1, 1],
      start: "22:00",
      end: "06:00",
      escalation_order: 0,
    });
    expect(made).toMatchObject({
      name: "Nights",
      user_id: ids.operator,
      user_name: "Sam Lindqvist",
      weekdays: [1, 5],
      start: "22:00",
      end: "06:00",
      crosses_midnight: true,
      escalation_order: 0,
      warnings: [],
    });

    const changed = await send(cookie.manager, "PATCH", `/api/v1/on-call/${made.id}`, {
      end: "07:30",
      weekdays: everyDay,
    });
    expect(changed.status).toBe(200);
    expect(await changed.json()).toMatchObject({
      name: "Nights",
      start: "22:00",
      end: "07:30",
      weekdays: everyDay,
    });
    expect((await rota()).shifts.map((s) => [s.id, s.end])).toEqual([[made.id, "07:30"]]);

    expect((await send(cookie.manager, "DELETE", `/api/v1/on-call/${made.id}`)).status).toBe(204);
    expect((await rota()).shifts).toEqual([]);
    expect((await send(cookie.manager, "DELETE", `/api/v1/on-call/${made.id}`)).status).toBe(404);
    expect(
      (await send(cookie.manager, "PATCH", `/api/v1/on-call/${made.id}`, { name: "x" })).status,
    ).toBe(404);

    const audit = await call(plinth.url, cookie.manager, "/api/v1/audit?action=on_call&limit=500");
    const entries = (
      (await audit.json()) as {
        entries: { action: string; entity_type: string; entity_id: string; detail: unknown }[];
      }
    ).entries.filter((e) => e.entity_id === String(made.id));
    expect(entries.map((e) => e.action)).toEqual([
      "on_call.delete",
      "on_call.update",
      "on_call.create",
    ]);
    expect(entries.every((e) => e.entity_type === "on_call_shift")).toBe(true);
    expect(entries[1]!.detail).toMatchObject({
      before: { end: "06:00", weekdays: [1, 5] },
      after: { end: "07:30", weekdays: everyDay },
    });
  });

  it("refuses a body that is not a shift, with one error per field", async () => {
    const res = await send(cookie.manager, "POST", "/api/v1/on-call", {
      user_id: ids.operator,
      weekdays: [],
      start: "6:00",
      end: "24:00",
      escalation_order: -1,
    });
    expect(res.status).toBe(400);
    expect(res.headers.get("content-type")).toContain("application/problem+json");
    const fields = ((await res.json()) as { errors: { field: string }[] }).errors.map(
      (e) => e.field,
    );
    expect(fields.sort()).toEqual(["end", "escalation_order", "start", "weekdays"]);
    const s = await addShift({
      user_id: ids.operator,
      weekdays: [1],
      start: "06:00",
      end: "18:00",
    });
    const empty = await send(cookie.manager, "PATCH", `/api/v1/on-call/${s.id}`, {});
    expect(empty.status).toBe(400);
  });

  it.each(["qc", "operator", "viewer"] as const)(
    "lets %s read the rota but not change it",
    async (role) => {
      const s = await addShift({
        user_id: ids.operator,
        weekdays: everyDay,
        start: "00:00",
        end: "00:00",
      });
      expect((await rota(cookie[role])).shifts).toHaveLength(1);
      const body = { user_id: ids.qc, weekdays: everyDay, start: "06:00", end: "18:00" };
      expect((await send(cookie[role], "POST", "/api/v1/on-call", body)).status).toBe(403);
      expect(
        (await send(cookie[role], "PATCH", `/api/v1/on-call/${s.id}`, { end: "01:00" })).status,
      ).toBe(403);
      expect((await send(cookie[role], "DELETE", `/api/v1/on-call/${s.id}`)).status).toBe(403);
      expect((await rota()).shifts).toMatchObject([{ id: s.id, end: "00:00" }]);
    },
  );

  it("shows nobody a phone number, only whether one is set and its last digits", async () => {
    await addShift({ user_id: ids.operator, weekdays: everyDay, start: "00:00", end: "00:00" });
    for (const role of ["viewer", "operator", "manager"] as const) {
      const res = await call(plinth.url, cookie[role], "/api/v1/on-call");
      const text = await res.text();
      // The demo operator's number is +15550100003 (src/lib/server/demo/seed.ts).
      expect(text).not.toContain("5550100003");
      expect(text).not.toContain("+1555");
      const body = JSON.parse(text) as Rota;
      expect(body.shifts[0]).toMatchObject({ has_phone: true, phone_masked: "•••• 0003" });
      expect(body.now.on_call[0]).toMatchObject({ user_id: ids.operator, has_phone: true });
      expect(Object.keys(body.now.on_call[0]!)).not.toContain("phone");
    }
  });
});

describe("people on the rota", () => {
  it("warns of a person with no phone, or with texts off, and refuses viewers and the deactivated", async () => {
    const made = await send(cookie.manager, "POST", "/api/v1/users", {
      email: "ana.oncall@example.com",
      name: "Ana Ferreira",
      role: "operator",
      password: "a long enough password",
    });
    expect(made.status).toBe(201);
    const ana = ((await made.json()) as { id: number }).id;

    const shift = await addShift({ user_id: ana, weekdays: [0, 6], start: "06:00", end: "18:00" });
    expect(shift.has_phone).toBe(false);
    expect(shift.phone_masked).toBeNull();
    expect(shift.warnings).toEqual(["Ana Ferreira has no phone number: texts will go by e-mail."]);
    expect((await rota()).warnings).toContain(
      "Ana Ferreira has no phone number: texts will go by e-mail.",
    );

    // She adds a phone (E.164: + and 8 to 15 digits, ITU-T E.164) and turns texts off.
    const anaCookie = await signIn(plinth.url, "ana.oncall@example.com", "a long enough password");
    const bad = await send(anaCookie, "PATCH", "/api/v1/me", { phone: "555-0142" });
    expect(bad.status).toBe(400);
    expect(((await bad.json()) as { errors: { field: string }[] }).errors[0]!.field).toBe("phone");
    const tooLong = await send(anaCookie, "PATCH", "/api/v1/me", { phone: "+1234567890123456" });
    expect(tooLong.status).toBe(400);
    const ok = await send(anaCookie, "PATCH", "/api/v1/me", {
      phone: "+1 (555) 010-0142",
      notify_sms: false,
    });
    expect(ok.status).toBe(200);
    expect(((await ok.json()) as { phone: string }).phone).toBe("+15550100142");
    const after = await rota();
    expect(after.shifts[0]).toMatchObject({
      has_phone: true,
      phone_masked: "•••• 0142",
      sms: false,
    });
    expect(after.warnings).toContain(
      "Ana Ferreira has texts turned off: alerts will go by e-mail only.",
    );

    // A viewer only reads, and cannot acknowledge an alert: not on the rota.
    const viewer = await send(cookie.manager, "POST", "/api/v1/on-call", {
      user_id: ids.viewer,
      weekdays: everyDay,
      start: "00:00",
      end: "00:00",
    });
    expect(viewer.status).toBe(400);
    expect(((await viewer.json()) as { errors: { field: string }[] }).errors[0]!.field).toBe(
      "user_id",
    );

    // Deactivated later: the shift stays, with a warning, and she is no longer on call.
    expect(
      (await send(cookie.manager, "PATCH", `/api/v1/users/${ana}`, { active: false })).status,
    ).toBe(200);
    // Saturday 2026-06-13 12:00 CDT = 17:00 UTC.
    const sat = await rota(cookie.manager, "?at=2026-06-13T17:00:00Z");
    expect(sat.now.on_call).toEqual([]);
    expect(sat.warnings).toContain("Ana Ferreira is deactivated: their shifts tell nobody.");
    const again = await send(cookie.manager, "POST", "/api/v1/on-call", {
      user_id: ana,
      weekdays: everyDay,
      start: "00:00",
      end: "00:00",
    });
    expect(again.status).toBe(400);
    const moved = await send(cookie.manager, "PATCH", `/api/v1/on-call/${shift.id}`, {
      user_id: ana,
      end: "19:00",
    });
    expect(moved.status).toBe(200);
    const unknown = await send(cookie.manager, "PATCH", `/api/v1/on-call/${shift.id}`, {
      user_id: 999_999,
    });
    expect(unknown.status).toBe(400);
  });

  it("keeps a daily digest choice, off by default for an operator", async () => {
    const res = await send(cookie.operator, "PATCH", "/api/v1/me", { notify_email: false });
    expect(res.status).toBe(200);
    const stored = () => {
      const db = new Database(plinth.dbPath, { readonly: true });
      try {
        const row = db.prepare("select notify_json from users where id = ?").get(ids.operator) as {
          notify_json: string;
        };
        return JSON.parse(row.notify_json) as Record<string, boolean>;
      } finally {
        db.close();
      }
    };
    // Never chosen: no digest key is written, so it follows the role.
    expect(stored()).toEqual({ sms: true, email: false });
    expect(
      (await send(cookie.operator, "PATCH", "/api/v1/me", { notify_digest: true })).status,
    ).toBe(200);
    expect(stored()).toEqual({ sms: true, email: false, digest: true });
    expect(
      (await send(cookie.operator, "PATCH", "/api/v1/me", { notify_digest: "yes" })).status,
    ).toBe(400);
    expect(
      (await send(cookie.operator, "PATCH", "/api/v1/me", { notify_email: true })).status,
    ).toBe(200);
  });
});

describe("who is on call", () => {
  it("is the 24/7 shift's person now, then each escalation in order, all week", async () => {
    await addShift({
      name: "Backup",
      user_id: ids.qc,
      weekdays: everyDay,
      start: "00:00",
      end: "00:00",
      escalation_order: 1,
    });
    await addShift({
      name: "Around the clock",
      user_id: ids.operator,
      weekdays: everyDay,
      start: "00:00",
      end: "00:00",
    });
    const r = await rota(cookie.viewer);
    expect(r.time_zone).toBe("America/Chicago");
    expect(Math.abs(Date.parse(r.now.at) - Date.now())).toBeLessThan(60_000);
    expect(r.now.on_call.map((p) => [p.user_id, p.escalation_order, p.shift_name])).toEqual([
      [ids.operator, 0, "Around the clock"],
      [ids.qc, 1, "Backup"],
    ]);
    expect(r.now.on_call[0]).toMatchObject({
      name: "Sam Lindqvist",
      has_phone: true,
      sms: true,
      email: true,
    });
    expect(r.now.until).toBeNull();
    expect(r.warnings).toEqual([]);
  });

  // IANA tz database: Chicago springs forward on 2026-03-08 at 02:00 CST (08:00 UTC).
  it("follows the plant's clock across a daylight-saving night", async () => {
    await addShift({
      name: "Sat nights",
      user_id: ids.manager,
      weekdays: [6],
      start: "22:00",
      end: "06:00",
    });
    const at = async (iso: string) => (await rota(cookie.qc, `?at=${iso}`)).now;
    expect((await at("2026-03-08T03:59:00Z")).on_call).toEqual([]); // Sat 21:59 CST
    const mid = await at("2026-03-08T08:30:00Z"); // Sun 03:30 CDT
    expect(mid.on_call.map((p) => p.user_id)).toEqual([ids.manager]);
    expect(mid.until).toBe("2026-03-08T11:00:00.000Z"); // 06:00 CDT
    expect(mid.next).toEqual([]);
    expect((await at("2026-03-08T11:00:00Z")).on_call).toEqual([]);
    const epoch = await rota(cookie.qc, `?at=${Date.parse("2026-03-08T10:59:00Z")}`);
    expect(epoch.now.on_call).toHaveLength(1);
    expect((await call(plinth.url, cookie.qc, "/api/v1/on-call?at=tomorrow")).status).toBe(400);
    expect(
      (await call(plinth.url, cookie.qc, "/api/v1/on-call?at=2026-03-08T08:30:00")).status,
    ).toBe(400);
  });

  it("names the stretches of the week nobody covers", async () => {
    await addShift({ user_id: ids.operator, weekdays: [1, 3, 4, 5], start: "06:00", end: "18:00" });
    await addShift({ user_id: ids.operator, weekdays: [2], start: "06:00", end: "12:00" });
    await addShift({ user_id: ids.qc, weekdays: [1, 2, 3, 4], start: "18:00", end: "06:00" });
    // Thursday's night shift runs to Friday 06:00; nothing covers Friday evening to Monday
    // morning (the week wraps), nor Tuesday afternoon; told Monday first.
    expect((await rota()).warnings).toEqual([
      "Nobody is on call Tuesday from 12:00 to 18:00.",
      "Nobody is on call from Friday 18:00 to Monday 06:00.",
    ]);
    expect((await rota(cookie.manager, "?at=2026-06-09T18:00:00Z")).now.on_call).toEqual([]); // Tue 13:00 CDT
  });
});

describe("the API description", () => {
  it("describes the rota's routes with their bodies", async () => {
    const doc = (await (await fetch(`${plinth.url}/api/v1/openapi.json`)).json()) as {
      paths: Record<string, Record<string, { summary: string; requestBody?: unknown }>>;
    };
    expect(doc.paths["/api/v1/on-call"]!.get!.summary).toMatch(/on call now/);
    expect(doc.paths["/api/v1/on-call"]!.post!.requestBody).toBeTruthy();
    expect(doc.paths["/api/v1/on-call/{id}"]!.patch!.requestBody).toBeTruthy();
    expect(doc.paths["/api/v1/on-call/{id}"]!.delete!.summary).toMatch(/Remove/);
  });
});
