import type Database from "better-sqlite3";
import fc from "fast-check";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { bruteRollupRows, bruteThin, ROLLUP_COLUMNS, type Reading } from "./helpers/thinning";

// The readings rollup (migrations 0005 and 0006, queries/rollup.ts) on real SQLite files migrated by the
// real migrations: a long chart window thinned from the rollup must keep exactly the readings
// a thinning over the raw readings keeps, whatever arrived late, and however it arrived.
const dir = fs.mkdtempSync(path.join(os.tmpdir(), "plinth-rollup-"));
process.env.DATABASE_PATH = path.join(dir, "rollup.db");
const client = await import("@/lib/server/db/client");
const { thinnedWindow } = await import("@/lib/server/db/queries/sensors");
const { storeReadings } = await import("@/lib/server/db/queries/ingest");
const { importLoggerUpload } = await import("@/lib/server/db/queries/uploads");
const rollup = await import("@/lib/server/db/queries/rollup");
const { thinSeries } = await import("@/domain/thin");

const MIN = 60_000;
const HOUR = 3_600_000;
const DAY = 86_400_000;
const QUARTER = 900_000;
const T0 = Date.UTC(2026, 0, 5);

beforeAll(() => client.migrateDatabase());
afterAll(() => {
  client.closeDatabase();
  fs.rmSync(dir, { recursive: true, force: true });
});

const store = (sensorId: string, rows: readonly Reading[]) =>
  storeReadings(
    rows.map((r) => ({ sensorId, ...r, batteryPct: null })),
    "http",
  );

function rollupRowsOf(
  sqlite: Database.Database,
  sensorId: string,
  beforeMs: number,
  table = "readings_rollup",
) {
  return sqlite
    .prepare(
      `select ${ROLLUP_COLUMNS} from ${table} where sensor_id = ? and bucket_ms < ? order by bucket_ms`,
    )
    .raw()
    .all(sensorId, beforeMs);
}

/** What the table holds: the first value of each time stands, and SQLite keeps -0 as 0. */
function firstStands(...batches: Reading[][]): Reading[] {
  const byTs = new Map<number, Reading>();
  for (const batch of batches)
    for (const r of batch) if (!byTs.has(r.tsMs)) byTs.set(r.tsMs, { ...r, tempC: r.tempC + 0 });
  return [...byTs.values()];
}

/** Readings at a steady pace with gaps, wandering (neighbours alike) and often tied. */
const stretchArb = (startMs: number, spanMs: number, maxLength: number) =>
  fc
    .tuple(
      fc.integer({ min: 0, max: spanMs / 4 }),
      fc.constantFrom(20_000, MIN, 5 * MIN),
      fc.array(
        fc.record({
          gapSteps: fc.oneof(
            { arbitrary: fc.constant(1), weight: 30 },
            { arbitrary: fc.integer({ min: 1, max: 400 }), weight: 1 },
          ),
          tempStepC: fc.integer({ min: -2, max: 2 }),
          jumpC: fc.option(fc.double({ min: -40, max: 120, noNaN: true }), { freq: 30 }),
          rhStepPct: fc.option(fc.integer({ min: -3, max: 3 }), { freq: 5 }),
        }),
        { minLength: Math.min(300, maxLength), maxLength, size: "large" },
      ),
    )
    .map(([offsetMs, stepMs, rows]) => {
      let tsMs = startMs + offsetMs;
      let tempC = 20;
      let rhPct = 95;
      const out: Reading[] = [];
      for (const r of rows) {
        tsMs += r.gapSteps * stepMs;
        if (tsMs >= startMs + spanMs) break;
        tempC = Math.min(120, Math.max(-40, tempC + r.tempStepC));
        if (r.rhStepPct !== null) rhPct = Math.min(100, Math.max(0, rhPct + r.rhStepPct));
        out.push({ tsMs, tempC: r.jumpC ?? tempC, rhPct: r.rhStepPct === null ? null : rhPct });
      }
      return out;
    });

let nextSensor = 0;
const newSensorId = () => `RU-${String(nextSensor++).padStart(4, "0")}`;

describe("the readings rollup", () => {
  it("thins a window from the rollup to exactly the picks of a brute force over the raw readings, late readings included", () => {
    const span = 4 * DAY;
    fc.assert(
      fc.property(
        stretchArb(T0, span, 4_000),
        fc.array(
          fc.record({
            tsMs: fc.integer({ min: T0, max: T0 + span }),
            tempC: fc.double({ min: -40, max: 120, noNaN: true }),
            rhPct: fc.option(fc.integer({ min: 0, max: 100 })),
          }),
          { maxLength: 30 },
        ),
        fc.integer({ min: span / 4, max: span + DAY }),
        fc.integer({ min: 0, max: span / 2 }),
        fc.integer({ min: span / 2, max: span }),
        fc.integer({ min: 1, max: 80 }),
        fc.boolean(),
        (first, late, rolledAfter, a, b, count, rollAgain) => {
          const sensorId = newSensorId();
          if (first.length > 0) store(sensorId, first);
          const nowMs = T0 + rolledAfter;
          rollup.rollUpSensor(sensorId, nowMs);
          // Late and out-of-order readings, some into rolled-up buckets, some already stored.
          if (late.length > 0) store(sensorId, late);
          const laterMs = nowMs + HOUR;
          if (rollAgain) rollup.rollUpSensor(sensorId, laterMs);
          const stored = firstStands(first, late);
          const from = T0 + Math.min(a, b);
          const to = T0 + Math.max(a, b);
          const got = thinnedWindow(sensorId, from, to, count, laterMs);
          expect(got).toEqual(bruteThin(stored, from, to, count));
          // And what the chart route then does with it changes nothing.
          expect(thinSeries(got, 4 * count, from, to)).toEqual(got);
          // Whatever the rollup holds before its marks matches the readings, either span.
          const marks = rollup.rollupMarks(sensorId);
          if (marks.quarterMs !== null)
            expect(rollupRowsOf(client.getSqlite(), sensorId, marks.quarterMs)).toEqual(
              bruteRollupRows(stored, marks.quarterMs),
            );
          if (marks.hourMs !== null) {
            expect(marks.hourMs % HOUR).toBe(0);
            expect(marks.hourMs).toBeLessThanOrEqual(marks.quarterMs!);
            expect(
              rollupRowsOf(client.getSqlite(), sensorId, marks.hourMs, "readings_rollup_hours"),
            ).toEqual(bruteRollupRows(stored, marks.hourMs, HOUR));
          }
        },
      ),
      { numRuns: 80 },
    );
  });

  it("shows a late hot reading in a bucket already rolled up, before and after the next roll-up", () => {
    const sensorId = newSensorId();
    const days = Array.from({ length: 2 * 24 * 60 }, (_, i) => ({
      tsMs: T0 + i * MIN,
      tempC: 20,
      rhPct: 95,
    }));
    store(sensorId, days);
    const nowMs = T0 + 3 * DAY;
    rollup.rollUpSensor(sensorId, nowMs);
    // Complete up to the bucket of the newest reading, which may still fill.
    const lastBucket = Math.floor((T0 + 2 * DAY - MIN) / QUARTER) * QUARTER;
    expect(rollup.rolledThrough(sensorId)).toBe(lastBucket);

    expect(rollup.rollupMarks(sensorId).hourMs).toBe(T0 + 47 * HOUR);

    const spikeMs = T0 + 30 * HOUR + 22 * MIN + 30_000; // between two minute readings
    store(sensorId, [{ tsMs: spikeMs, tempC: 61.5, rhPct: 40 }]);
    // Both spans are complete only before the spike's bucket now.
    expect(rollup.rollupMarks(sensorId)).toEqual({
      quarterMs: T0 + 30 * HOUR + QUARTER,
      hourMs: T0 + 30 * HOUR,
    });

    const window = () => thinnedWindow(sensorId, T0, T0 + 2 * DAY - 1, 50, nowMs);
    const spike = { tsMs: spikeMs, tempC: 61.5, rhPct: 40 };
    expect(window()).toContainEqual(spike);
    rollup.rollUpSensor(sensorId, nowMs);
    expect(rollup.rolledThrough(sensorId)).toBe(lastBucket);
    expect(window()).toContainEqual(spike);
    expect(window()).toEqual(bruteThin(firstStands(days, [spike]), T0, T0 + 2 * DAY - 1, 50));
    // The hour holding it is rolled up again, spike and all; a week's chart (hours) shows it.
    expect(rollup.rollupMarks(sensorId).hourMs).toBe(T0 + 47 * HOUR);
    expect(
      rollupRowsOf(client.getSqlite(), sensorId, T0 + 47 * HOUR, "readings_rollup_hours"),
    ).toEqual(bruteRollupRows(firstStands(days, [spike]), T0 + 47 * HOUR, HOUR));
    const week = thinnedWindow(sensorId, T0 - 5 * DAY, T0 + 2 * DAY - 1, 50, nowMs);
    expect(week).toContainEqual(spike);
    expect(week).toEqual(bruteThin(firstStands(days, [spike]), T0 - 5 * DAY, T0 + 2 * DAY - 1, 50));
    // The roll-up keeps the recent chart rows in SQLite's cache by reading them: the hours
    // (47) and quarter hours (191) rolled up so far, and the readings of the last two hours.
    expect(rollup.warmSensor(sensorId)).toBe(47 + 191 + 121);
  });

  it("takes a logger file's backfill into rolled-up buckets", () => {
    const sensorId = newSensorId();
    // A gateway's live minutes, with a cold dip in the middle lost on the way.
    const live = Array.from({ length: 3 * 24 * 60 }, (_, i) => ({
      tsMs: T0 + i * MIN,
      tempC: 24 + Math.sin(i / 90),
      rhPct: 96,
    })).filter((r) => r.tsMs < T0 + 40 * HOUR || r.tsMs >= T0 + 44 * HOUR);
    store(sensorId, live);
    const nowMs = T0 + 4 * DAY;
    rollup.rollUpSensor(sensorId, nowMs);
    const before = rollup.rolledThrough(sensorId)!;
    // The logger's own file covers the gap, and repeats readings already stored.
    const file = Array.from({ length: 8 * 60 }, (_, i) => ({
      sensorId,
      tsMs: T0 + 38 * HOUR + i * MIN,
      tempC: i === 200 ? 1.5 : 22,
      rhPct: 97,
      batteryPct: null,
    }));
    const { store: result } = importLoggerUpload(
      file,
      {
        fileName: "logger.csv",
        fileSha256: "0".repeat(64),
        sensorId,
        timeZone: "UTC",
        mapping: {},
        rowsIn: file.length,
        rowsRejected: 0,
        errors: [],
        uploadedBy: null,
        uploadedVia: null,
      },
      { label: "test" },
      nowMs,
    );
    expect(result.accepted).toBe(4 * 60);
    expect(rollup.rolledThrough(sensorId)).toBe(T0 + 40 * HOUR);
    const stored = firstStands(
      live,
      file.map(({ tsMs, tempC, rhPct }) => ({ tsMs, tempC, rhPct })),
    );
    const to = T0 + 3 * DAY - 1;
    const got = thinnedWindow(sensorId, T0, to, 100, nowMs);
    expect(got).toContainEqual({ tsMs: T0 + 38 * HOUR + 200 * MIN, tempC: 1.5, rhPct: 97 });
    expect(got).toEqual(bruteThin(stored, T0, to, 100));
    rollup.rollUpSensor(sensorId, nowMs);
    expect(rollup.rolledThrough(sensorId)).toBe(before);
    expect(rollupRowsOf(client.getSqlite(), sensorId, before)).toEqual(
      bruteRollupRows(stored, before),
    );
  });

  it("rolls a sensor far behind up at the chart query, and leaves a short tail raw", () => {
    const sensorId = newSensorId();
    const rows = Array.from({ length: 2 * 24 * 60 }, (_, i) => ({
      tsMs: T0 + i * MIN,
      tempC: 15 + (i % 97) / 10,
      rhPct: null,
    }));
    store(sensorId, rows);
    expect(rollup.rolledThrough(sensorId)).toBeNull();
    const nowMs = T0 + 2 * DAY + 10 * MIN;
    const to = T0 + 2 * DAY - 1;
    const got = thinnedWindow(sensorId, T0, to, 40, nowMs);
    expect(rollup.rolledThrough(sensorId)).toBe(T0 + 2 * DAY - QUARTER);
    expect(got).toEqual(bruteThin(rows, T0, to, 40));
    // A short window past the mark is read raw; nothing is rolled up for it.
    const tail = thinnedWindow(sensorId, T0 + 47 * HOUR, to, 2, nowMs);
    expect(tail).toEqual(bruteThin(rows, T0 + 47 * HOUR, to, 2));
  });
});

describe("migrations 0005 and 0006", () => {
  it("rolls up the readings a plant already holds, as the roll-up at run time does", () => {
    // The migrations up to 0004 in a folder of their own, then the readings of a plant
    // stored before 0005 existed (straight into the table), then every migration.
    const real = client.migrationsFolder();
    const older = fs.mkdtempSync(path.join(os.tmpdir(), "plinth-migr-"));
    const journal = JSON.parse(
      fs.readFileSync(path.join(real, "meta", "_journal.json"), "utf8"),
    ) as {
      entries: { tag: string }[];
    };
    const upTo = journal.entries.findIndex((e) => e.tag.startsWith("0005_"));
    expect(upTo).toBeGreaterThan(0);
    fs.mkdirSync(path.join(older, "meta"));
    for (const e of journal.entries.slice(0, upTo))
      fs.copyFileSync(path.join(real, `${e.tag}.sql`), path.join(older, `${e.tag}.sql`));
    fs.writeFileSync(
      path.join(older, "meta", "_journal.json"),
      JSON.stringify({ ...journal, entries: journal.entries.slice(0, upTo) }),
    );
    const file = path.join(older, "plant.db");
    const { db, sqlite } = client.openDatabase(file);
    try {
      process.env.PLINTH_MIGRATIONS_DIR = older;
      client.migrateDatabase(db);
      expect(
        sqlite.prepare("select name from sqlite_master where name = 'readings_rollup'").get(),
      ).toBeUndefined();

      const plant: Record<string, Reading[]> = {
        "OLD-1": Array.from({ length: 3 * 24 * 60 }, (_, i) => ({
          tsMs: T0 + i * MIN + (i % 3) * 1_000,
          tempC: Math.round(20 + 8 * Math.sin(i / 200)),
          rhPct: i % 5 === 0 ? null : 90 + (i % 7),
        })),
        "OLD-2": Array.from({ length: 500 }, (_, i) => ({
          tsMs: T0 + i * 7 * MIN,
          tempC: 30 - (i % 11),
          rhPct: null,
        })),
      };
      const insert = sqlite.prepare(
        "insert into readings (sensor_id, ts, temp_c, rh_pct, source, received_at) values (?, ?, ?, ?, 'http', ?)",
      );
      sqlite.transaction(() => {
        for (const id of [...Object.keys(plant), "OLD-3"])
          sqlite
            .prepare("insert into sensors (id, status, created_at) values (?, 'active', 0)")
            .run(id);
        for (const [id, rows] of Object.entries(plant))
          for (const r of rows) insert.run(id, r.tsMs, r.tempC, r.rhPct, r.tsMs);
      })();

      process.env.PLINTH_MIGRATIONS_DIR = real;
      client.migrateDatabase(db);
      // A sensor without readings gets no mark; the others are complete up to the bucket of
      // their newest reading.
      expect(rollup.rolledThrough("OLD-3", sqlite)).toBeNull();
      for (const [id, rows] of Object.entries(plant)) {
        const newest = Math.max(...rows.map((r) => r.tsMs));
        const mark = Math.floor(newest / QUARTER) * QUARTER;
        expect(rollup.rolledThrough(id, sqlite)).toBe(mark);
        expect(rollupRowsOf(sqlite, id, mark + QUARTER)).toEqual(bruteRollupRows(rows, mark));
        // Migration 0006 leaves the hours to the roll-up at run time, which then finds
        // nothing else to do.
        expect(rollup.rollupMarks(id, sqlite).hourMs).toBeNull();
        rollup.rollUpSensor(id, Date.now(), sqlite);
        expect(rollup.rolledThrough(id, sqlite)).toBe(mark);
        const hourMark = Math.floor(mark / HOUR) * HOUR;
        expect(rollup.rollupMarks(id, sqlite).hourMs).toBe(hourMark);
        expect(rollupRowsOf(sqlite, id, hourMark + HOUR, "readings_rollup_hours")).toEqual(
          bruteRollupRows(rows, hourMark, HOUR),
        );
        expect(rollup.rollUpBehindMs(id, Date.now(), sqlite)).toBe(0);
      }
    } finally {
      delete process.env.PLINTH_MIGRATIONS_DIR;
      sqlite.close();
      fs.rmSync(older, { recursive: true, force: true });
    }
  });
});
