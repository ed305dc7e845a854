import Database from "better-sqlite3";
import Papa from "papaparse";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { seedAlerts, type SeededAlerts } from "./helpers/alertSeed";
import { call, signIn, startPlinth, type RunningPlinth } from "./helpers/server";

// Alert episodes against the built demo server: the list's contract and filters, the
// acknowledgement (who may, once only, with its audit entry), and the pages that show them.
// The episodes are written straight into the test's own database (helpers/alertSeed.ts), under
// rules of the test's own, so the demo's episodes never blur what is checked.

let plinth: RunningPlinth;
let operator: string;
let viewer: string;
let qc: string;
let manager: string;
let seed: SeededAlerts;

beforeAll(async () => {
  plinth = await startPlinth();
  operator = await signIn(plinth.url, "operator@example.com");
  viewer = await signIn(plinth.url, "viewer@example.com");
  qc = await signIn(plinth.url, "qc@example.com");
  manager = await signIn(plinth.url, "manager@example.com");
  seed = seedAlerts(plinth.dbPath);
});

afterAll(async () => {
  await plinth?.stop();
});

type Item = Record<string, unknown> & { id: number; state: string };

async function list(query: string, cookie = operator): Promise<Item[]> {
  const res = await call(plinth.url, cookie, `/api/v1/alerts?${query}`);
  expect(res.status).toBe(200);
  expect(res.headers.get("content-type")).toContain("application/json");
  const body = (await res.json()) as Item[];
  expect(Array.isArray(body)).toBe(true);
  return body;
}

const ids = (items: Item[]) => items.map((e) => e.id);
const isIsoOrNull = (v: unknown) =>
  v === null || (typeof v === "string" && !Number.isNaN(Date.parse(v)) && v.endsWith("Z"));

function ack(id: number, cookie: string | null, body: unknown) {
  return call(plinth.url, cookie, `/api/v1/alerts/${id}/ack`, {
    method: "POST",
    headers: { "content-type": "application/json" },
    body: JSON.stringify(body),
  });
}

describe("the list of alert episodes", () => {
  it("answers ?state=open with the contract's fields and types, open ones only", async () => {
    const open = await list("state=open");
    expect(ids(open)).toEqual(expect.arrayContaining([seed.openDry, seed.openCold]));
    expect(ids(open)).not.toContain(seed.clearedDry);
    expect(ids(open)).not.toContain(seed.ackedCold);
    for (const e of open) {
      // contracts.md: [{"id", "rule", "sensor", "pour_id", "state", "opened_at", "acknowledged_at", "cleared_at"}]
      expect(typeof e.id).toBe("number");
      expect(typeof e.rule).toBe("string");
      expect(e.sensor === null || typeof e.sensor === "string").toBe(true);
      expect(e.pour_id === null || typeof e.pour_id === "number").toBe(true);
      expect(e.state).toBe("open");
      expect(isIsoOrNull(e.opened_at) && e.opened_at !== null).toBe(true);
      expect(e.acknowledged_at).toBeNull();
      expect(e.cleared_at).toBeNull();
    }
    const dry = open.find((e) => e.id === seed.openDry)!;
    expect(dry).toMatchObject({
      rule: "Test dry bag (CB-13)",
      sensor: "CB-13",
      pour_id: seed.pourId,
      state: "open",
      severity: "warning",
      worst_value: 91.2,
      pour_code: "P-2611-03",
    });
  });

  it("gives every state one of open, acknowledged, cleared with times to match", async () => {
    const all = await list(`rule_id=${seed.dryRuleId}`);
    const all2 = await list(`rule_id=${seed.coldRuleId}`);
    for (const e of [...all, ...all2]) {
      expect(["open", "acknowledged", "cleared"]).toContain(e.state);
      expect(isIsoOrNull(e.acknowledged_at)).toBe(true);
      expect(isIsoOrNull(e.cleared_at)).toBe(true);
      if (e.state === "cleared") expect(e.cleared_at).not.toBeNull();
      if (e.state === "acknowledged") expect(e.acknowledged_at).not.toBeNull();
    }
  });

  it("filters by sensor, rule, severity, pour, state, time and page", async () => {
    expect(new Set((await list("sensor=CB-13")).map((e) => e.sensor))).toEqual(new Set(["CB-13"]));
    expect(ids(await list(`rule_id=${seed.dryRuleId}`)).sort()).toEqual(
      [seed.openDry, seed.clearedDry].sort(),
    );
    const critical = await list("state=open&severity=critical");
    expect(ids(critical)).toContain(seed.openCold);
    expect(ids(critical)).not.toContain(seed.openDry);
    expect(critical.every((e) => e.severity === "critical")).toBe(true);
    const onPour = ids(await list(`pour_id=${seed.pourId}`));
    expect(onPour).toEqual(expect.arrayContaining([seed.openDry, seed.openCold, seed.clearedDry]));
    expect(onPour).not.toContain(seed.ackedCold);
    const active = ids(await list(`state=active&sensor=CB-15`));
    expect(active.sort()).toEqual([seed.openCold, seed.ackedCold].sort());
    // Opened within the last ten hours: the episode of twenty hours ago is left out.
    const since = new Date(Date.now() - 10 * 3_600_000).toISOString();
    const recent = ids(await list(`rule_id=${seed.dryRuleId}&since=${encodeURIComponent(since)}`));
    expect(recent).toEqual([seed.openDry]);
    const older = await list(`before_id=${seed.openCold}`);
    expect(older.every((e) => e.id < seed.openCold)).toBe(true);
    expect(await list("limit=1")).toHaveLength(1);
  });

  it("refuses a filter it does not know with a problem naming the field", async () => {
    const res = await call(plinth.url, operator, "/api/v1/alerts?state=snoozed");
    expect(res.status).toBe(400);
    expect(res.headers.get("content-type")).toContain("application/problem+json");
    const body = (await res.json()) as { errors: { field: string }[] };
    expect(body.errors.map((e) => e.field)).toContain("state");
  });

  it("is for signed-in people only", async () => {
    expect((await call(plinth.url, null, "/api/v1/alerts?state=open")).status).toBe(401);
    expect((await list("state=open", viewer)).length).toBeGreaterThan(0);
  });
});

describe("one episode's story", () => {
  it("has its notices, with addresses for managers only", async () => {
    const asManager = (await (
      await call(plinth.url, manager, `/api/v1/alerts/${seed.openDry}`)
    ).json()) as {
      notices: { channel: string; to: string | null; reason: string; status: string }[];
    };
    expect(asManager.notices).toEqual([
      expect.objectContaining({
        channel: "sms",
        to: seed.textedTo,
        reason: "first",
        status: "sent",
      }),
    ]);
    const asOperator = (await (
      await call(plinth.url, operator, `/api/v1/alerts/${seed.openDry}`)
    ).json()) as { notices: { to: string | null }[] };
    expect(asOperator.notices[0]!.to).toBeNull();
  });

  it("answers 404 for an episode that does not exist", async () => {
    expect((await call(plinth.url, operator, "/api/v1/alerts/999999")).status).toBe(404);
  });

  it("shows the address on the page to a manager and hides it from an operator", async () => {
    const mine = await (await call(plinth.url, manager, `/alerts/${seed.openDry}`)).text();
    expect(mine).toContain(seed.textedTo);
    const res = await call(plinth.url, operator, `/alerts/${seed.openDry}`);
    expect(res.status).toBe(200);
    // Numbers are held to their units by no-break spaces; read them as plain spaces.
    const html = (await res.text()).replace(/\u00a0|&nbsp;|&#160;/g, " ");
    expect(html).not.toContain(seed.textedTo);
    expect(html).toContain("Text to Sam Lindqvist");
    // domain.md §7.1 (ASTM C511): below 95 % RH is not moist curing; 92 % RH now, 91.2 % worst.
    expect(html).toContain("Humidity 92 % RH, below 95 % RH");
    expect(html).toContain("91.2 % RH");
  });

  it("answers a missing page with 404", async () => {
    expect((await call(plinth.url, operator, "/alerts/999999")).status).toBe(404);
  });
});

describe("acknowledging an episode", () => {
  it("refuses a body that is not a note, naming the field", async () => {
    for (const body of [{ note: 42 }, { note: "x".repeat(501) }, { remark: "done" }]) {
      const res = await ack(seed.openDry, operator, body);
      expect(res.status).toBe(400);
      expect(res.headers.get("content-type")).toContain("application/problem+json");
      const problem = (await res.json()) as { errors: { field: string; error: string }[] };
      expect(problem.errors.length).toBeGreaterThan(0);
    }
  });

  it("is refused without a session (401) and for a viewer (403)", async () => {
    expect((await ack(seed.openDry, null, { note: "x" })).status).toBe(401);
    const res = await ack(seed.openDry, viewer, { note: "x" });
    expect(res.status).toBe(403);
    expect(res.headers.get("content-type")).toContain("application/problem+json");
  });

  it("acknowledges an open episode for an operator, with the note, and tells the live feed", async () => {
    // Follow the live feed while acknowledging: the episode's change must go out as an event.
    const feed = new AbortController();
    const live = await call(plinth.url, qc, "/api/v1/live", { signal: feed.signal });
    expect(live.status).toBe(200);
    const reader = live.body!.getReader();
    const seen = (async () => {
      let text = "";
      const decoder = new TextDecoder();
      for (;;) {
        const { value, done } = await reader.read();
        if (done) return text;
        text += decoder.decode(value, { stream: true });
        if (new RegExp(`event: alert\\ndata: \\{"id":${seed.openDry},`).test(text)) return text;
      }
    })();

    const before = Date.now();
    const res = await ack(seed.openDry, operator, { note: "  Re-wet the pads, closed the tarp  " });
    expect(res.status).toBe(200);
    const body = (await res.json()) as Item;
    expect(body).toMatchObject({
      id: seed.openDry,
      state: "acknowledged",
      acknowledged_by: "Sam Lindqvist",
      ack_note: "Re-wet the pads, closed the tarp",
      ack_via: "web",
      cleared_at: null,
    });
    expect(Date.parse(body.acknowledged_at as string)).toBeGreaterThanOrEqual(before - 1000);

    const text = await Promise.race([
      seen,
      new Promise<string>((_, reject) =>
        setTimeout(() => reject(new Error("no alert event within 5 s")), 5_000),
      ),
    ]);
    feed.abort();
    const event = JSON.parse(
      new RegExp(`event: alert\\ndata: (\\{"id":${seed.openDry},[^\\n]*)`).exec(text)![1]!,
    ) as Record<string, unknown>;
    expect(event).toMatchObject({
      id: seed.openDry,
      change: "acknowledged",
      state: "acknowledged",
      sensor: "CB-13",
      pour_id: seed.pourId,
    });

    const openNow = ids(await list("state=open"));
    expect(openNow).not.toContain(seed.openDry);
  });

  it("refuses a second acknowledgement with 409, keeping the first note", async () => {
    const res = await ack(seed.openDry, qc, { note: "Also looked" });
    expect(res.status).toBe(409);
    expect(res.headers.get("content-type")).toContain("application/problem+json");
    expect(((await res.json()) as { detail: string }).detail).toContain("Sam Lindqvist");
    const story = (await (await call(plinth.url, qc, `/api/v1/alerts/${seed.openDry}`)).json()) as {
      ack_note: string;
    };
    expect(story.ack_note).toBe("Re-wet the pads, closed the tarp");
  });

  it("writes one audit entry naming the episode and its pour", async () => {
    const db = new Database(plinth.dbPath, { readonly: true, fileMustExist: true });
    try {
      const rows = db
        .prepare<
          [string],
          {
            action: string;
            entity_type: string;
            pour_id: number | null;
            detail_json: string;
            actor_user_id: number;
          }
        >(
          "select action, entity_type, pour_id, detail_json, actor_user_id from audit_log where entity_type = 'alert_episode' and entity_id = ? and action = 'alert.acknowledge'",
        )
        .all(String(seed.openDry));
      expect(rows).toHaveLength(1);
      expect(rows[0]).toMatchObject({
        entity_type: "alert_episode",
        pour_id: seed.pourId,
        actor_user_id: seed.operatorId,
      });
      expect(JSON.parse(rows[0]!.detail_json)).toMatchObject({
        note: "Re-wet the pads, closed the tarp",
        via: "web",
      });
    } finally {
      db.close();
    }
    const story = (await (
      await call(plinth.url, operator, `/api/v1/alerts/${seed.openDry}`)
    ).json()) as { audit: { action: string }[] };
    expect(story.audit.map((a) => a.action)).toContain("alert.acknowledge");
  });

  it("lets QC acknowledge too", async () => {
    const res = await ack(seed.openCold, qc, {});
    expect(res.status).toBe(200);
    expect(((await res.json()) as Item).state).toBe("acknowledged");
  });
});

describe("the pages that show episodes", () => {
  it("offers the acknowledge button to an operator and not to a viewer", async () => {
    const db = new Database(plinth.dbPath, { fileMustExist: true });
    let fresh: number;
    try {
      fresh = Number(
        db
          .prepare(
            `insert into alert_episodes (rule_id, sensor_id, pour_id, state, severity, started_at, opened_at, worst_value, last_value, created_at)
             values (?, 'CB-13', ?, 'open', 'warning', ?, ?, 93.5, 93.5, ?)`,
          )
          .run(seed.dryRuleId, seed.pourId, Date.now() - 60_000, Date.now() - 60_000, Date.now())
          .lastInsertRowid,
      );
    } finally {
      db.close();
    }
    const asOperator = await (await call(plinth.url, operator, "/alerts")).text();
    expect(asOperator).toContain(`data-episode="${fresh}"`);
    expect(asOperator).toMatch(/aria-label="Acknowledge: Test dry bag \(CB-13\)/);
    expect(asOperator).toContain('href="/alerts/rules"');
    expect(asOperator).toContain('href="/on-call"');
    // The open count on the navigation, by number and words.
    expect(asOperator).toMatch(/data-testid="nav-alert-count"/);
    const asViewer = await (await call(plinth.url, viewer, "/alerts")).text();
    expect(asViewer).toContain(`data-episode="${fresh}"`);
    expect(asViewer).not.toMatch(/aria-label="Acknowledge: /);
    const detail = await (await call(plinth.url, viewer, `/alerts/${fresh}`)).text();
    expect(detail).not.toMatch(/aria-label="Acknowledge: /);
  });

  it("lists a sensor's episodes on its page, active first, each linked", async () => {
    const html = await (await call(plinth.url, viewer, "/sensors/CB-13")).text();
    expect(html).toContain("Alerts on this sensor");
    const at = (id: number) => html.indexOf(`href="/alerts/${id}"`);
    expect(at(seed.openDry)).toBeGreaterThan(-1);
    expect(at(seed.clearedDry)).toBeGreaterThan(at(seed.openDry));
  });

  it("lists a pour's episodes on its page and in its cure history, with what was done", async () => {
    const pour = await (await call(plinth.url, viewer, `/pours/${seed.pourId}`)).text();
    expect(pour).toContain(`href="/alerts/${seed.clearedDry}"`);
    expect(pour).toContain("Re-wet the pads on CB-13");
    const history = await (await call(plinth.url, viewer, `/pours/${seed.pourId}/history`)).text();
    expect(history).toContain(`href="/alerts/${seed.clearedDry}"`);
    expect(history).toContain("Re-wet the pads on CB-13");
    expect(history).toContain("by text reply");
    // The acknowledgement in the list was made by a person in Plinth.
    expect(history).toContain("Re-wet the pads, closed the tarp");
  });

  it("puts the pour's episodes in the CSV after the readings, as comment lines", async () => {
    const res = await call(plinth.url, viewer, `/api/v1/pours/${seed.pourId}/history.csv`);
    expect(res.status).toBe(200);
    const text = await res.text();
    const lines = text.split("\r\n");
    const head = lines.findIndex((l) => l.startsWith("# alerts,"));
    expect(head).toBeGreaterThan(5);
    expect(lines[head]).toBe(
      "# alerts,id,rule,severity,sensor,state,started_at,opened_at,worst_value,value_unit,acknowledged_at,acknowledged_by,ack_via,ack_note,cleared_at",
    );
    const rows = Papa.parse<string[]>(lines.slice(head + 1).join("\r\n"), {
      skipEmptyLines: true,
    }).data;
    const cleared = rows.find((r) => r[1] === String(seed.clearedDry))!;
    expect(cleared[0]).toBe("# alert");
    expect(cleared.slice(2, 6)).toEqual(["Test dry bag (CB-13)", "warning", "CB-13", "cleared"]);
    expect(cleared.slice(8, 10)).toEqual(["90.4", "pct_rh"]);
    expect(cleared.slice(11, 14)).toEqual(["Sam Lindqvist", "sms", "Re-wet the pads on CB-13"]);
    expect(Date.parse(cleared[14]!)).toBeGreaterThan(Date.parse(cleared[7]!));
    // A reader that skips comments gets the readings table and nothing else.
    const table = Papa.parse<Record<string, string>>(text, {
      comments: "#",
      header: true,
      skipEmptyLines: true,
    });
    expect(table.errors).toEqual([]);
    expect(table.meta.fields).toEqual([
      "ts",
      "sensor",
      "temp_c",
      "rh_pct",
      "ttf_c_h",
      "strength_psi",
    ]);
  });
});
