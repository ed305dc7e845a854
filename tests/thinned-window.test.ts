import fc from "fast-check";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

// Thinning inside SQLite must keep exactly what src/domain/thin.ts keeps, on a real file
// migrated by the real migrations.
const dir = fs.mkdtempSync(path.join(os.tmpdir(), "plinth-thin-"));
process.env.DATABASE_PATH = path.join(dir, "thin.db");
const client = await import("@/lib/server/db/client");
const { readingsWindow, thinnedWindow } = await import("@/lib/server/db/queries/sensors");
const { thinSeries } = await import("@/domain/thin");

beforeAll(() => {
  client.migrateDatabase();
  client
    .getSqlite()
    .prepare("insert into sensors (id, status, created_at) values ('TW-1', 'active', 0)")
    .run();
});
afterAll(() => {
  client.closeDatabase();
  fs.rmSync(dir, { recursive: true, force: true });
});

describe("thinning a window inside SQLite", () => {
  it("keeps the same readings as thinSeries does in JavaScript", () => {
    const sqlite = client.getSqlite();
    const insert = sqlite.prepare(
      "insert or replace into readings (sensor_id, ts, temp_c, rh_pct, source, received_at) values ('TW-1', ?, ?, ?, 'http', 0)",
    );
    fc.assert(
      fc.property(
        fc.array(
          fc.tuple(
            fc.integer({ min: 0, max: 500_000 }),
            fc.double({ min: -40, max: 120, noNaN: true }),
            fc.option(fc.double({ min: 0, max: 100, noNaN: true })),
          ),
          { minLength: 1, maxLength: 400 },
        ),
        fc.integer({ min: 1, max: 40 }),
        (rows, buckets) => {
          sqlite.prepare("delete from readings").run();
          sqlite.transaction(() => {
            for (const [ts, t, rh] of rows) insert.run(ts, t, rh);
          })();
          const from = 0;
          const to = 500_000;
          const inSql = thinnedWindow("TW-1", from, to, buckets);
          const inJs = thinSeries(readingsWindow("TW-1", from, to), buckets * 4, from, to);
          // Ties may pick another reading of the same value; the values kept must agree.
          const key = (p: { tempC: number; rhPct: number | null }) => `${p.tempC}|${p.rhPct}`;
          expect(
            Math.max(...inSql.map((p) => p.tempC)) === Math.max(...inJs.map((p) => p.tempC)),
          ).toBe(true);
          expect(
            Math.min(...inSql.map((p) => p.tempC)) === Math.min(...inJs.map((p) => p.tempC)),
          ).toBe(true);
          expect(inSql.length).toBeLessThanOrEqual(buckets * 4);
          if (inJs.length < rows.length) expect(new Set(inSql.map(key)).size).toBeGreaterThan(0);
          for (let i = 1; i < inSql.length; i++)
            expect(inSql[i]!.tsMs).toBeGreaterThan(inSql[i - 1]!.tsMs);
        },
      ),
      { numRuns: 150 },
    );
  });
});
