/**
 * The database for benchmark 3: a month of one-minute readings from many sensors (200
 * sensors: 8,640,000 rows), built once into bench-results/ and reused while it is complete.
 *
 * Rows are inserted through Plinth's schema in time order, every sensor's reading for one
 * minute before the next minute's, as gateways deliver them, so the file's pages are laid out
 * as in a plant's database; then rolled up, as Plinth's background roll-up keeps it. The file is built under a ".partial" name and renamed when
 * finished; a sidecar JSON records what it holds, so a half-built file is never reused.
 * Migrations added later are applied to it before it is used (migrateChartDb).
 */
import Database from "better-sqlite3";
import fs from "node:fs";
import path from "node:path";
import { migrationsFolder } from "@/lib/server/db/client";
import { rollUpSensor } from "@/lib/server/db/queries/rollup";
import { INSERT_READING_SQL, insertSensors, openMigrated } from "./db";
import { benchManager, createManager, migrate, root } from "./plinth";
import { progressReporter, say } from "./progress";

const MINUTE_MS = 60_000;
const DAY_MS = 86_400_000;
const ROWS_PER_TRANSACTION = 200_000;
/** A fixed month in the past, so the same file serves every run. */
const WINDOW_START_MS = Date.UTC(2026, 0, 1);

export interface ChartDb {
  file: string;
  sensors: string[];
  days: number;
  fromMs: number;
  /** The last reading's time (inclusive). */
  toMs: number;
  rows: number;
  manager: { email: string; password: string };
}

export const resultsDir = path.join(root, "bench-results");

/** What a chart database of `sensorCount` sensors holds (nothing is built). */
export function chartDbSpec(sensorCount: number, days = 30): ChartDb {
  const minutes = (days * DAY_MS) / MINUTE_MS;
  return {
    file: path.join(resultsDir, `chart-${days}d-${sensorCount}s.db`),
    sensors: Array.from({ length: sensorCount }, (_, i) => `CH-${String(i).padStart(3, "0")}`),
    days,
    fromMs: WINDOW_START_MS,
    toMs: WINDOW_START_MS + (minutes - 1) * MINUTE_MS,
    rows: sensorCount * minutes,
    manager: benchManager,
  };
}

const metaFile = (spec: ChartDb) => spec.file.replace(/\.db$/, ".json");

/** True when the file exists and its sidecar says it was finished with exactly this content. */
export function chartDbReady(spec: ChartDb): boolean {
  if (!fs.existsSync(spec.file) || !fs.existsSync(metaFile(spec))) return false;
  try {
    const meta = JSON.parse(fs.readFileSync(metaFile(spec), "utf8")) as Partial<ChartDb> & {
      complete?: boolean;
    };
    return (
      meta.complete === true &&
      meta.rows === spec.rows &&
      meta.fromMs === spec.fromMs &&
      meta.toMs === spec.toMs &&
      meta.sensors?.length === spec.sensors.length &&
      meta.manager?.email === spec.manager.email
    );
  } catch {
    return false;
  }
}

/** A plausible cure record: a daily swing, a heat-of-hydration bump every third day, noise. */
function readingMaker(sensorIndex: number): (minute: number, noise: number) => [number, number] {
  const phase = (sensorIndex * 0.37) % (2 * Math.PI);
  const pourOffsetH = (sensorIndex * 7) % 72;
  return (minute, noise) => {
    const hours = minute / 60;
    const daily = 6 * Math.sin((2 * Math.PI * hours) / 24 + phase);
    const sincePour = (hours + pourOffsetH) % 72;
    const hydration = 28 * Math.exp(-(((sincePour - 14) / 7) ** 2));
    const tempC = Math.round((18 + daily + hydration + (noise - 0.5) * 0.6) * 100) / 100;
    const rh = Math.min(
      100,
      Math.max(
        0,
        Math.round(
          (88 + 8 * Math.sin((2 * Math.PI * hours) / 24 + phase + 1) + (noise - 0.5) * 4) * 10,
        ) / 10,
      ),
    );
    return [tempC, rh];
  };
}

/** Inserts every row, a transaction at a time, letting signals (Ctrl-C) in between. */
async function insertRows(sqlite: Database.Database, spec: ChartDb): Promise<void> {
  const stmt = sqlite.prepare(INSERT_READING_SQL);
  const makers = spec.sensors.map((_, i) => readingMaker(i));
  const minutes = spec.rows / spec.sensors.length;
  const minutesPerTx = Math.max(1, Math.floor(ROWS_PER_TRANSACTION / spec.sensors.length));
  let noiseState = 12345;
  const noise = () => ((noiseState = (noiseState * 1103515245 + 12345) >>> 0) & 0xffff) / 0xffff;
  const insertMinutes = sqlite.transaction((first: number, last: number) => {
    for (let m = first; m < last; m++) {
      const ts = spec.fromMs + m * MINUTE_MS;
      for (let s = 0; s < spec.sensors.length; s++) {
        const [tempC, rh] = makers[s]!(m, noise());
        stmt.run(spec.sensors[s]!, ts, tempC, rh, "http", ts + 2_000);
      }
    }
  });
  const report = progressReporter("inserted", spec.rows, "rows", 5_000);
  for (let m = 0; m < minutes; m += minutesPerTx) {
    insertMinutes(m, Math.min(minutes, m + minutesPerTx));
    report(Math.min(minutes, m + minutesPerTx) * spec.sensors.length);
    await new Promise((resolve) => setImmediate(resolve));
  }
}

/**
 * Rolls every sensor's readings up (the readings rollup, as Plinth's background roll-up
 * keeps a plant's database; migration 0005 does the same for a file built before it).
 */
async function rollUp(sqlite: Database.Database, spec: ChartDb): Promise<void> {
  const report = progressReporter("rolled up", spec.sensors.length, "sensors", 5_000);
  const nowMs = Date.now();
  for (const [i, id] of spec.sensors.entries()) {
    rollUpSensor(id, nowMs, sqlite);
    report(i + 1);
    await new Promise((resolve) => setImmediate(resolve));
  }
}

/** How many of Plinth's migrations the file has not had yet (all of them for a file without any). */
function pendingMigrations(file: string): number {
  const journal = JSON.parse(
    fs.readFileSync(path.join(migrationsFolder(), "meta", "_journal.json"), "utf8"),
  ) as {
    entries: unknown[];
  };
  const sqlite = new Database(file, { readonly: true });
  try {
    const row = sqlite
      .prepare<[], { n: number }>("select count(*) as n from __drizzle_migrations")
      .get();
    return journal.entries.length - (row?.n ?? 0);
  } catch {
    return journal.entries.length;
  } finally {
    sqlite.close();
  }
}

/**
 * Applies migrations added since the file was built, before Plinth is started on it: a
 * migration that rewrites the readings table takes a while on millions of rows, and Plinth
 * would otherwise do it inside its start (and the bench's wait for it).
 */
export async function migrateChartDb(spec: ChartDb): Promise<void> {
  const pending = pendingMigrations(spec.file);
  if (pending <= 0) return;
  say(
    `  applying ${pending} migration(s) added since it was built (once; a table rewrite takes a while)…`,
  );
  const t0 = Date.now();
  await migrate(spec.file);
  say(`  migrated in ${((Date.now() - t0) / 1000).toFixed(0)} s`);
  // A later migration may leave rolling up to the server (the hourly rollup of 0006 does):
  // done here once, as a plant's server would have done it long since.
  const sqlite = new Database(spec.file, { fileMustExist: true });
  try {
    await rollUp(sqlite, spec);
    sqlite.pragma("wal_checkpoint(TRUNCATE)");
  } finally {
    sqlite.close();
  }
}

function removeWithSidecars(file: string): void {
  for (const suffix of ["", "-wal", "-shm", "-journal"]) fs.rmSync(file + suffix, { force: true });
}

/** Builds the file (replacing any half-built one), adds the bench manager, and marks it complete. */
export async function buildChartDb(spec: ChartDb): Promise<void> {
  fs.mkdirSync(path.dirname(spec.file), { recursive: true });
  const partial = `${spec.file}.partial`;
  removeWithSidecars(partial);
  removeWithSidecars(spec.file);
  fs.rmSync(metaFile(spec), { force: true });
  say(
    `building ${path.relative(root, spec.file)}: ${spec.rows.toLocaleString("en-US")} rows (${spec.sensors.length} sensors x ${spec.days} days of minutes); once only`,
  );
  const sqlite = openMigrated(partial);
  try {
    sqlite.pragma("synchronous = OFF");
    sqlite.pragma("cache_size = -262144");
    insertSensors(sqlite, spec.sensors, spec.fromMs);
    await insertRows(sqlite, spec);
    await rollUp(sqlite, spec);
    // No ANALYZE: Plinth never runs one, so the planner sees what it sees in a plant.
    say("  checkpointing");
    sqlite.pragma("wal_checkpoint(TRUNCATE)");
  } finally {
    sqlite.close();
  }
  say("  adding the bench manager with scripts/user-create.ts");
  await createManager(partial, spec.manager);
  for (const suffix of ["-wal", "-shm"]) {
    if (fs.existsSync(partial + suffix)) fs.renameSync(partial + suffix, spec.file + suffix);
  }
  fs.renameSync(partial, spec.file);
  fs.writeFileSync(
    metaFile(spec),
    `${JSON.stringify({ ...spec, file: path.basename(spec.file), complete: true, built_at: new Date().toISOString() }, null, 2)}\n`,
  );
  say(`  done: ${(fs.statSync(spec.file).size / 2 ** 20).toFixed(0)} MiB`);
}
