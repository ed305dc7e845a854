import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

// The running maturity of open pours and what the strength view keeps beside it (when each
// threshold was crossed, the readings of the last hours), on a real SQLite file migrated by the
// real migrations, fed through the real ingest. Each view the running states give is held
// against the same view after every state is dropped and rebuilt from the stored readings:
// both must agree whatever order the readings came in (the accumulator's contract, ASTM C1074
// Eq. 1 and 2 as the strength view applies them).

const H = 3_600_000;
const MIN = 60_000;
/** A cast time in the past; every reading is sent as if it had just been taken. */
const castAtMs = Date.UTC(2026, 0, 5, 6);

let dir: string;
let savedPath: string | undefined;
let plinth: {
  ingest: typeof import("../ingest/ingest");
  maturity: typeof import("./maturity");
  strength: typeof import("./pourStrength");
  client: typeof import("../db/client");
};
let pourId: number;
let otherPourId: number;

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "plinth-maturity-"));
  savedPath = process.env.DATABASE_PATH;
  process.env.DATABASE_PATH = path.join(dir, "t.db");
  const [ingest, maturity, strength, client, schema, bus, curves, units, drizzle] =
    await Promise.all([
      import("../ingest/ingest"),
      import("./maturity"),
      import("./pourStrength"),
      import("../db/client"),
      import("../db/schema"),
      import("../live/bus"),
      import("@/domain/strength/curves"),
      import("@/domain/units"),
      import("drizzle-orm"),
    ]);
  plinth = { ingest, maturity, strength, client };
  client.migrateDatabase();
  const db = client.getDb();
  // A mix calibrated on lab breaks at 23 °C (the demo's HS-10 breaks; datum −10 °C).
  const breaks: [number, number][] = [
    [1, 4_150],
    [3, 6_900],
    [7, 8_650],
    [14, 9_700],
    [28, 10_850],
  ];
  const mix = db
    .insert(schema.mixes)
    .values({
      name: "T-10",
      designStrengthMpa: units.psiToMpa(10_000),
      stripStrengthMpa: units.psiToMpa(3_500),
      shipStrengthMpa: units.psiToMpa(7_500),
      datumTempC: -10,
      activationEnergyJMol: 41_570,
    })
    .returning()
    .get();
  const fit = curves.fitStrengthCurve(
    "log",
    breaks.map(([d, psi]) => ({ ttfCH: d * 24 * 33, strengthMpa: units.psiToMpa(psi) })),
  );
  const { model, ...params } = fit.curve;
  const cal = db
    .insert(schema.mixCalibrations)
    .values({ mixId: mix.id, model, paramsJson: JSON.stringify(params), pointCount: 5 })
    .returning()
    .get();
  db.update(schema.mixes)
    .set({ currentCalibrationId: cal.id })
    .where(drizzle.eq(schema.mixes.id, mix.id))
    .run();
  for (const id of ["TA", "TB", "TC"])
    db.insert(schema.sensors).values({ id, kind: "bag", status: "active" }).run();
  const pour = (code: string) =>
    db.insert(schema.pours).values({ code, mixId: mix.id, castAt: castAtMs }).returning().get();
  pourId = pour("T-1").id;
  otherPourId = pour("T-2").id;
  for (const sensorId of ["TA", "TB"])
    db.insert(schema.pourSensors).values({ pourId, sensorId, fromAt: castAtMs }).run();
  // As Plinth's services do: each committed batch advances the open pours.
  bus.bus().on("readings", (events) => {
    maturity.advanceOpenPours(events);
  });
  maturity.reconcileMaturity();
});

afterAll(() => {
  plinth?.client.closeDatabase();
  if (savedPath === undefined) delete process.env.DATABASE_PATH;
  else process.env.DATABASE_PATH = savedPath;
  fs.rmSync(dir, { recursive: true, force: true });
});

/** Readings of one sensor every 15 minutes from `fromH` to `toH` hours after cast (inclusive). */
function every15(sensor: string, fromH: number, toH: number, tempC: (h: number) => number) {
  const out: { sensor: string; ts: number; temp_c: number }[] = [];
  for (let m = fromH * 60; m <= toH * 60; m += 15)
    out.push({ sensor, ts: castAtMs + m * MIN, temp_c: tempC(m / 60) });
  return out;
}

function send(readings: { sensor: string; ts: number; temp_c: number }[]): void {
  const nowMs = Math.max(...readings.map((r) => r.ts)) + MIN;
  const answer = plinth.ingest.ingestReadings(readings, "http", { nowMs });
  expect(answer.rejected).toEqual([]);
}

/** The view from the running states, then the same view with every state rebuilt from the readings. */
function bothViews(id: number, asOfMs: number) {
  const running = plinth.strength.pourStrength(id, asOfMs)!;
  plinth.maturity.dropMaturityStates();
  const rebuilt = plinth.strength.pourStrength(id, asOfMs)!;
  return { running, rebuilt };
}

describe("the running strength view", () => {
  it("agrees with a rebuild from the readings as readings arrive, late ones included", () => {
    const warm = (h: number) => 30 + 2 * Math.sin(h);
    // TA leaves out 4 h to 7 h (a gap that adds nothing) for now; TB is complete.
    const ta = [...every15("TA", 0, 4, warm), ...every15("TA", 7, 30, warm)];
    const tb = every15("TB", 0, 30, (h) => 31 + Math.cos(h));
    for (let h = 0; h <= 30; h++) {
      const hour = (r: { ts: number }) => r.ts >= castAtMs + h * H && r.ts < castAtMs + (h + 1) * H;
      send([...ta.filter(hour), ...tb.filter(hour)]);
      if (h === 6 || h === 12) {
        // Before strip strength: forecasts from the last hours.
        const v = plinth.strength.pourStrength(pourId, castAtMs + h * H + 50 * MIN)!;
        expect(v.strip.reached_at).toBeNull();
        expect(v.strip.forecast_at).not.toBeNull();
      }
    }
    const asOfMs = castAtMs + 30 * H + MIN;
    // Strip reached, ship forecast: the crossings and recent readings are now kept.
    const first = bothViews(pourId, asOfMs);
    expect(first.running).toEqual(first.rebuilt);
    expect(first.running.strip.reached_at).not.toBeNull();
    expect(first.running.ship.forecast_at).not.toBeNull();
    expect(plinth.strength.pourStrength(pourId, asOfMs)).toEqual(first.rebuilt);

    // TA's missing hours arrive late: its maturity grows, so strip was reached earlier.
    send(every15("TA", 4.25, 6.75, warm));
    const late = bothViews(pourId, asOfMs);
    expect(late.running).toEqual(late.rebuilt);
    expect(Date.parse(late.running.strip.reached_at!)).toBeLessThanOrEqual(
      Date.parse(first.running.strip.reached_at!),
    );
    expect(late.running.sensors.find((s) => s.sensor === "TA")!.ttf_c_h).toBeGreaterThan(
      first.running.sensors.find((s) => s.sensor === "TA")!.ttf_c_h,
    );

    // A late reading inside the forecast's window, much warmer: the forecast moves.
    plinth.strength.pourStrength(pourId, asOfMs);
    send([{ sensor: "TA", ts: castAtMs + 28 * H + 7 * MIN, temp_c: 70 }]);
    const inWindow = bothViews(pourId, asOfMs);
    expect(inWindow.running).toEqual(inWindow.rebuilt);
    expect(inWindow.running.ship.forecast_at).not.toEqual(late.running.ship.forecast_at);

    // And on, a reading at a time, past the 8 hours the view keeps.
    plinth.strength.pourStrength(pourId, asOfMs);
    for (let m = 30 * 60 + 15; m <= 40 * 60; m += 15) {
      send([
        { sensor: "TA", ts: castAtMs + m * MIN, temp_c: 29 },
        { sensor: "TB", ts: castAtMs + m * MIN, temp_c: 30 },
      ]);
      expect(plinth.strength.pourStrength(pourId, castAtMs + m * MIN + MIN)).toBeDefined();
    }
    const later = bothViews(pourId, castAtMs + 40 * H + MIN);
    expect(later.running).toEqual(later.rebuilt);
  });

  it("follows a sensor added to a pour once the pour is rebuilt", () => {
    const db = plinth.client.getDb();
    const asOfMs = castAtMs + 40 * H + MIN;
    expect(plinth.strength.pourStrength(otherPourId, asOfMs)!.sensors).toEqual([]);
    send(every15("TC", 0, 40, () => 25));
    db.$client
      .prepare(
        "insert into pour_sensors (pour_id, sensor_id, from_at, created_at) values (?, ?, ?, ?)",
      )
      .run(otherPourId, "TC", castAtMs, Date.now());
    plinth.maturity.rebuildPour(otherPourId);
    const view = plinth.strength.pourStrength(otherPourId, asOfMs)!;
    expect(view.sensors.map((s) => s.sensor)).toEqual(["TC"]);
    // 40 h at 25 °C, datum −10 °C: 40 × 35 = 1,400 °C·h (ASTM C1074 Eq. 1, domain.md §1.5 N-1 form).
    expect(view.sensors[0]!.ttf_c_h).toBeCloseTo(1_400, 1);
    send([{ sensor: "TC", ts: castAtMs + 40 * H + 15 * MIN, temp_c: 25 }]);
    const next = bothViews(otherPourId, castAtMs + 40 * H + 16 * MIN);
    expect(next.running).toEqual(next.rebuilt);
    expect(next.running.sensors[0]!.ttf_c_h).toBeCloseTo(1_400 + 0.25 * 35, 1);
    // The first pour still has its own two sensors.
    expect(
      plinth.strength
        .pourStrength(pourId, asOfMs)!
        .sensors.map((s) => s.sensor)
        .sort(),
    ).toEqual(["TA", "TB"]);
  });
});
