import Database from "better-sqlite3";
import Papa from "papaparse";
import zlib from "node:zlib";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { call, signIn, startPlinth, type RunningPlinth } from "./helpers/server";

// A pour's cure history against the built demo server: the page holds the whole record, the
// CSV has one row per reading in each sensor's window with the running maturity and strength
// the strength view agrees with, and the PDF cure report carries the plant, the pour and the
// sign-offs. Records the demo does not make (a break, an override release, an alert, an ended
// sensor window) are written straight into the test's own database first.

const HOUR = 3_600_000;
const CAUTION =
  "Maturity estimates support, and never replace, the judgement of the engineer of record, the project specifications and local codes.";

let plinth: RunningPlinth;
let manager: string;
let viewer: string;
let pourId: number;
let uncalibratedPourId: number;
let castAtMs: number;
const sensorsOfPour = ["CB-01", "CB-02", "CB-03", "EP-01"];

beforeAll(async () => {
  plinth = await startPlinth();
  manager = await signIn(plinth.url, "manager@example.com");
  viewer = await signIn(plinth.url, "viewer@example.com");
  const db = new Database(plinth.dbPath, { fileMustExist: true });
  try {
    const pour = db
      .prepare<[string], { id: number; cast_at: number }>(
        "select id, cast_at from pours where code = ?",
      )
      .get("P-2611-01")!;
    pourId = pour.id;
    castAtMs = pour.cast_at;
    uncalibratedPourId = db
      .prepare<[string], { id: number }>("select id from pours where code = ?")
      .get("P-2611-05")!.id;
    const qc = db
      .prepare<[], { id: number }>("select id from users where email = 'qc@example.com'")
      .get()!;
    const op = db
      .prepare<[], { id: number }>("select id from users where email = 'operator@example.com'")
      .get()!;
    const now = Date.now();
    // A break at 48 h: 3,300 psi = 22.753 MPa against an estimate of 20.684 MPa (3,000 psi) → 1.10.
    db.prepare(
      `insert into cylinder_breaks (pour_id, specimen_id, broken_at, age_h, strength_mpa, estimate_mpa, lab, note, entered_by, created_at)
       values (?, 'P-2611-01-C7', ?, 48, 22.7527, 20.684272, 'Plant lab', 'Two cylinders, mean', ?, ?)`,
    ).run(pourId, castAtMs + 48 * HOUR, qc.id, now);
    // A ship release signed below threshold with a reason.
    db.prepare(
      `insert into releases (pour_id, kind, released_by, released_at, threshold_mpa, estimate_mpa, governing_sensor_id,
         ttf_c_h, equivalent_age_h, complete_record, override_reason, note, caution)
       values (?, 'ship', ?, ?, 51.71, 49.9, 'CB-02', 8000, 170, 1, 'Engineer of record approved by phone after 7-day breaks', 'Loaded on truck 12', ?)`,
    ).run(pourId, qc.id, castAtMs + 120 * HOUR, CAUTION);
    // An alert on one of the pour's bags, acknowledged with a note and cleared.
    const rule = db
      .prepare(
        `insert into alert_rules (name, kind, threshold, hold_ms, severity, created_at) values ('Dry cure bag (test)', 'rh_low', 95, 600000, 'warning', ?)`,
      )
      .run(now).lastInsertRowid;
    db.prepare(
      `insert into alert_episodes (rule_id, sensor_id, pour_id, state, severity, started_at, opened_at, acknowledged_at, acknowledged_by, ack_note, cleared_at, created_at)
       values (?, 'CB-02', null, 'cleared', 'warning', ?, ?, ?, ?, 'Re-wet the pads on bed 1', ?, ?)`,
    ).run(
      rule,
      castAtMs + 20 * HOUR,
      castAtMs + 20.2 * HOUR,
      castAtMs + 20.5 * HOUR,
      op.id,
      castAtMs + 21 * HOUR,
      now,
    );
    // An alert on another pour's sensor must not show on this pour.
    db.prepare(
      `insert into alert_episodes (rule_id, sensor_id, pour_id, state, severity, started_at, opened_at, ack_note, created_at)
       values (?, 'CB-04', null, 'open', 'warning', ?, ?, 'Not this pour', ?)`,
    ).run(rule, castAtMs + 30 * HOUR, castAtMs + 30 * HOUR, now);
    // The room air sensor watched the pour for one hour only: its readings count in that window alone.
    db.prepare(
      `insert into pour_sensors (pour_id, sensor_id, from_at, to_at, location, created_by, created_at) values (?, 'AM-01', ?, ?, 'Beside bed 1', ?, ?)`,
    ).run(pourId, castAtMs + HOUR, castAtMs + 2 * HOUR, op.id, now);
    db.prepare(
      `insert into audit_log (at, actor_user_id, actor_label, action, entity_type, entity_id, pour_id, detail_json)
       values (?, ?, 'operator@example.com', 'pour.updated', 'pour', ?, ?, '{"bed":"Bed 1","note":"moved tarp"}')`,
    ).run(now, op.id, String(pourId), pourId);
  } finally {
    db.close();
  }
});

afterAll(async () => {
  await plinth?.stop();
});

/** The text a PDF's pages show: each content stream inflated, each TJ/Tj string decoded. */
function pdfText(pdf: Buffer): string {
  const raw = pdf.toString("latin1");
  const out: string[] = [];
  const streams = /stream\r?\n([\s\S]*?)\r?\nendstream/g;
  for (let m = streams.exec(raw); m; m = streams.exec(raw)) {
    let content: string;
    try {
      content = zlib.inflateSync(Buffer.from(m[1]!, "latin1")).toString("latin1");
    } catch {
      content = m[1]!;
    }
    // One text-showing operation per line of text: its hex strings (kerning numbers between them).
    for (const op of content.matchAll(
      /\[((?:<[0-9a-fA-F]*>|[-\d.\s])*)\]\s*TJ|<([0-9a-fA-F]*)>\s*Tj/g,
    )) {
      const hexes =
        op[1] !== undefined ? [...op[1].matchAll(/<([0-9a-fA-F]*)>/g)].map((h) => h[1]!) : [op[2]!];
      out.push(hexes.map((h) => Buffer.from(h, "hex").toString("latin1")).join(""));
    }
  }
  return out.join(" ").replace(/\s+/g, " ");
}

describe("a pour's cure history page", () => {
  it("holds the whole cure record of a demo pour, in the plant's words", async () => {
    const res = await call(plinth.url, manager, `/pours/${pourId}/history`);
    expect(res.status).toBe(200);
    const html = await res.text();
    for (const text of [
      "Cure history",
      "P-2611-01",
      "Brindle Hollow Precast",
      "HS-10",
      "Post base 8 in.",
      "Cure over time",
      "Cylinder breaks",
      "Releases and sign-offs",
      "Alerts",
      "Audit entries",
      "P-2611-01-C7",
      "Engineer of record approved by phone after 7-day breaks",
      "Re-wet the pads on bed 1",
      "Dry cure bag (test)",
      "moved tarp",
      "Download CSV",
      "Print cure report (PDF)",
    ])
      expect(html, text).toContain(text);
    // The caution stands on the page (apostrophes and commas as written).
    expect(html).toContain(
      "Maturity estimates support, and never replace, the judgement of the engineer of record",
    );
    // Break ÷ estimate: 22.7527 / 20.684272 = 1.10 (3,300 psi over 3,000 psi, domain.md §8.3).
    expect(html).toContain("1.10");
    // The alert on another pour's sensor is not this pour's.
    expect(html).not.toContain("Not this pour");
    expect(html).toContain(`href="/api/v1/pours/${pourId}/history.csv"`);
    expect(html).toContain(`href="/api/v1/pours/${pourId}/report.pdf"`);
  });

  it("sends the charts their data thinned, with every sensor on the pour", async () => {
    const html = await (await call(plinth.url, manager, `/pours/${pourId}/history`)).text();
    const json =
      /<script type="application\/json" id="pour-history-data">([\s\S]*?)<\/script>/.exec(
        html,
      )?.[1];
    expect(json).toMatch(/^\s*\{/);
    const data = JSON.parse(json!) as {
      units: string;
      calibrated: boolean;
      releases: { kind: string; override: boolean }[];
      sensors: { sensor: string; temps: { tsMs: number[]; tempC: number[] } }[];
      governing: { tsMs: number[]; strengthMpa: (number | null)[] };
    };
    expect(data.sensors.map((s) => s.sensor).sort()).toEqual([...sensorsOfPour, "AM-01"].sort());
    expect(data.calibrated).toBe(true);
    expect(data.releases).toContainEqual(expect.objectContaining({ kind: "ship", override: true }));
    for (const s of data.sensors) {
      // The budget is 8,000 temperature points across the pour (at most 1,500 a sensor).
      expect(s.temps.tsMs.length).toBeLessThanOrEqual(1_500);
      for (let i = 1; i < s.temps.tsMs.length; i++)
        expect(s.temps.tsMs[i]!).toBeGreaterThan(s.temps.tsMs[i - 1]!);
    }
    // The governing line never falls: maturity only adds up (ASTM C1074 Eq. 1).
    const g = data.governing.strengthMpa.map((v) => v ?? 0);
    for (let i = 1; i < g.length; i++) expect(g[i]!).toBeGreaterThanOrEqual(g[i - 1]!);
  });

  it("shows a viewer the record but not the audit entries, which are the manager's", async () => {
    const res = await call(plinth.url, viewer, `/pours/${pourId}/history`);
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html).toContain("Releases and sign-offs");
    expect(html).not.toContain("Audit entries");
    expect(html).not.toContain("moved tarp");
  });

  it("says plainly when the mix is not calibrated", async () => {
    const html = await (
      await call(plinth.url, manager, `/pours/${uncalibratedPourId}/history`)
    ).text();
    expect(html).toContain("P-2611-05");
    expect(html).toContain("Mix not calibrated");
    expect(html).toContain("No cylinder breaks recorded for this pour.");
  });

  it("answers 404 for a pour that does not exist, on the page and both downloads", async () => {
    expect((await call(plinth.url, manager, "/pours/999999/history")).status).toBe(404);
    for (const path of ["/api/v1/pours/999999/history.csv", "/api/v1/pours/abc/report.pdf"]) {
      const res = await call(plinth.url, manager, path);
      expect(res.status).toBe(404);
      expect(res.headers.get("content-type")).toContain("application/problem+json");
    }
  });
});

describe("the cure history as CSV", () => {
  let text: string;
  let res: Response;
  beforeAll(async () => {
    res = await call(plinth.url, manager, `/api/v1/pours/${pourId}/history.csv`);
    text = await res.text();
  });

  it("is a download with a sensible file name", () => {
    expect(res.status).toBe(200);
    expect(res.headers.get("content-type")).toContain("text/csv");
    expect(res.headers.get("content-disposition")).toBe(
      'attachment; filename="P-2611-01-cure-history.csv"',
    );
  });

  it("starts with the header block: plant, pour, mix, cast and generation time", () => {
    const head = text.split("\r\n").slice(0, 6);
    expect(head[0]).toBe("# plant,Brindle Hollow Precast");
    expect(head[1]).toBe("# pour,P-2611-01");
    expect(head[2]).toBe("# mix,HS-10");
    expect(head[3]).toBe(`# cast_at,${new Date(castAtMs).toISOString()}`);
    expect(Date.parse(head[4]!.replace("# generated_at,", ""))).toBeGreaterThan(castAtMs);
    expect(head[5]).toBe("ts,sensor,temp_c,rh_pct,ttf_c_h,strength_psi");
  });

  it("has one row per reading in each sensor's window, as the readings API tells them", async () => {
    const parsed = Papa.parse<Record<string, string>>(text, {
      comments: "#",
      header: true,
      skipEmptyLines: true,
    });
    expect(parsed.errors).toEqual([]);
    const generatedAt = text.split("\r\n")[4]!.replace("# generated_at,", "");
    for (const sensor of sensorsOfPour) {
      const mine = parsed.data.filter((r) => r.sensor === sensor);
      const api = await call(
        plinth.url,
        manager,
        `/api/v1/sensors/${sensor}/readings?from=${encodeURIComponent(new Date(castAtMs).toISOString())}&to=${encodeURIComponent(generatedAt)}&max_points=20000`,
      );
      const { readings } = (await api.json()) as {
        readings: { ts: string; temp_c: number; rh: number | null }[];
      };
      expect(readings.length).toBeGreaterThan(100);
      expect(mine.map((r) => r.ts)).toEqual(readings.map((r) => r.ts));
      expect(mine.map((r) => Number(r.temp_c))).toEqual(readings.map((r) => r.temp_c));
      expect(mine.map((r) => (r.rh_pct === "" ? null : Number(r.rh_pct)))).toEqual(
        readings.map((r) => r.rh),
      );
    }
    // The ended window: readings every 5 minutes from cast + 1 h to cast + 2 h, both ends in.
    const air = parsed.data.filter((r) => r.sensor === "AM-01");
    expect(air.length).toBeGreaterThanOrEqual(12);
    expect(air.length).toBeLessThanOrEqual(13);
    for (const r of air) {
      expect(Date.parse(r.ts!)).toBeGreaterThanOrEqual(castAtMs + HOUR);
      expect(Date.parse(r.ts!)).toBeLessThanOrEqual(castAtMs + 2 * HOUR);
    }
  });

  it("carries each sensor's running maturity and strength, ending where the strength view is", async () => {
    const parsed = Papa.parse<Record<string, string>>(text, {
      comments: "#",
      header: true,
      skipEmptyLines: true,
    });
    const strength = (await (
      await call(plinth.url, manager, `/api/v1/pours/${pourId}/strength`)
    ).json()) as { sensors: { sensor: string; ttf_c_h: number; strength_psi: number }[] };
    for (const sensor of sensorsOfPour) {
      const mine = parsed.data.filter((r) => r.sensor === sensor);
      // The record starts at the first reading: nothing accrued yet (ASTM C1074 Eq. 1).
      expect(Number(mine[0]!.ttf_c_h)).toBe(0);
      for (let i = 1; i < mine.length; i++)
        expect(Number(mine[i]!.ttf_c_h)).toBeGreaterThanOrEqual(Number(mine[i - 1]!.ttf_c_h));
      const view = strength.sensors.find((s) => s.sensor === sensor)!;
      const last = mine.at(-1)!;
      // The strength view rounds to 0.1 °C·h and the CSV to 0.01; both from the same readings.
      expect(Math.abs(Number(last.ttf_c_h) - view.ttf_c_h)).toBeLessThanOrEqual(0.06);
      expect(Math.abs(Number(last.strength_psi) - view.strength_psi)).toBeLessThanOrEqual(1);
    }
  });

  it("leaves strength empty for a mix with no calibration", async () => {
    const csv = await (
      await call(plinth.url, manager, `/api/v1/pours/${uncalibratedPourId}/history.csv`)
    ).text();
    const rows = Papa.parse<Record<string, string>>(csv, {
      comments: "#",
      header: true,
      skipEmptyLines: true,
    }).data;
    expect(rows.length).toBeGreaterThan(100);
    expect(rows.every((r) => r.strength_psi === "")).toBe(true);
    expect(rows.some((r) => Number(r.ttf_c_h) > 0)).toBe(true);
  });

  it("may be downloaded by a viewer, who reads everything", async () => {
    const res = await call(plinth.url, viewer, `/api/v1/pours/${pourId}/history.csv`);
    expect(res.status).toBe(200);
    expect((await res.text()).startsWith("# plant,")).toBe(true);
  });
});

describe("the printable cure report", () => {
  it("is a PDF with the plant, the pour, the mix, the sign-offs and the caution", async () => {
    const res = await call(plinth.url, manager, `/api/v1/pours/${pourId}/report.pdf`);
    expect(res.status).toBe(200);
    expect(res.headers.get("content-type")).toBe("application/pdf");
    expect(res.headers.get("content-disposition")).toContain(
      'filename="P-2611-01-cure-report.pdf"',
    );
    const pdf = Buffer.from(await res.arrayBuffer());
    expect(pdf.subarray(0, 5).toString("latin1")).toBe("%PDF-");
    expect(pdf.subarray(-6).toString("latin1")).toContain("%%EOF");
    const text = pdfText(pdf);
    for (const s of [
      "Cure report",
      "Brindle Hollow Precast",
      "Pour P-2611-01",
      "HS-10",
      "Post base 8 in.",
      "Temperature at each sensor",
      "Estimated strength over time",
      "Cylinder breaks",
      "P-2611-01-C7",
      "Releases and sign-offs",
      "OVERRIDE: Engineer of record approved by phone after 7-day breaks",
      "Re-wet the pads on bed 1",
      CAUTION,
    ])
      expect(text, s).toContain(s);
    // The manager works in US units (the demo default): psi and °F.
    expect(text).toContain("psi");
    expect(text).toContain("°F");
    // Every page is numbered "Page i of n".
    const pages = Number(/\/Type \/Pages\s*\/Count (\d+)/.exec(pdf.toString("latin1"))?.[1]);
    expect(pages).toBeGreaterThanOrEqual(1);
    for (let i = 1; i <= pages; i++) expect(text).toContain(`Page ${i} of ${pages}`);
  });

  it("follows the units asked for", async () => {
    const res = await call(plinth.url, manager, `/api/v1/pours/${pourId}/report.pdf?units=si`);
    const text = pdfText(Buffer.from(await res.arrayBuffer()));
    expect(text).toContain("MPa");
    expect(text).toContain("°C·h");
    expect(text).not.toContain(" psi");
    const bad = await call(
      plinth.url,
      manager,
      `/api/v1/pours/${pourId}/report.pdf?units=imperial`,
    );
    expect(bad.status).toBe(400);
  });

  it("may be downloaded by a viewer", async () => {
    const res = await call(plinth.url, viewer, `/api/v1/pours/${pourId}/report.pdf`);
    expect(res.status).toBe(200);
    expect(
      Buffer.from(await res.arrayBuffer())
        .subarray(0, 5)
        .toString("latin1"),
    ).toBe("%PDF-");
  });

  it("is refused without a session", async () => {
    expect((await call(plinth.url, null, `/api/v1/pours/${pourId}/report.pdf`)).status).toBe(401);
    expect((await call(plinth.url, null, `/api/v1/pours/${pourId}/history.csv`)).status).toBe(401);
  });
});
