/** Database files for the benchmarks: migrated bare files, and fresh copies for Plinth to run on. */
import type Database from "better-sqlite3";
import fs from "node:fs";
import path from "node:path";
import { migrateDatabase, openDatabase } from "@/lib/server/db/client";
import { tempFolder } from "./cleanup";
import { createManager } from "./plinth";

/**
 * Opens (creating) a database file with Plinth's own pragmas (WAL, synchronous NORMAL,
 * foreign keys, busy timeout) and applies Plinth's migrations: the same tables and indexes.
 */
export function openMigrated(file: string): Database.Database {
  const { db, sqlite } = openDatabase(file);
  migrateDatabase(db);
  return sqlite;
}

/** Registers sensors as Plinth does for an id seen for the first time (readings need them). */
export function insertSensors(
  sqlite: Database.Database,
  ids: readonly string[],
  nowMs = Date.now(),
): void {
  const stmt = sqlite.prepare(
    "insert into sensors (id, status, created_at) values (?, 'new', ?) on conflict do nothing",
  );
  sqlite.transaction(() => {
    for (const id of ids) stmt.run(id, nowMs);
  })();
}

/** The SQL Plinth's ingest uses to store a reading. */
export const INSERT_READING_SQL =
  "insert into readings (sensor_id, ts, temp_c, rh_pct, source, received_at) values (?, ?, ?, ?, ?, ?) on conflict do nothing";

/** The SQL Plinth's chart endpoint uses to read one sensor's window. */
export const WINDOW_SQL =
  "select ts, temp_c, rh_pct from readings where sensor_id = ? and ts between ? and ? order by ts";

let template: string | undefined;

/**
 * A fresh Plinth database in its own temporary folder: migrated, with the bench manager.
 * The first call makes a template with scripts/user-create.ts; later calls copy it.
 */
export async function freshPlinthDb(label: string): Promise<string> {
  if (!template) {
    const file = path.join(tempFolder("template"), "plinth.db");
    await createManager(file);
    template = file;
  }
  const file = path.join(tempFolder(label), "plinth.db");
  fs.copyFileSync(template, file);
  return file;
}

/** Counts stored readings whose sensor id starts with `prefix` (Plinth stopped, or reading beside it). */
export function countReadings(file: string, prefix: string): number {
  const { sqlite } = openDatabase(file);
  try {
    const row = sqlite
      .prepare<[string], { n: number }>(
        "select count(*) as n from readings where sensor_id like ? || '%'",
      )
      .get(prefix);
    return row?.n ?? 0;
  } finally {
    sqlite.close();
  }
}
