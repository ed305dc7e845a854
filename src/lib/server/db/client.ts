import Database from "better-sqlite3";
import { drizzle, type BetterSQLite3Database } from "drizzle-orm/better-sqlite3";
import { migrate } from "drizzle-orm/better-sqlite3/migrator";
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { env } from "../env";
import * as schema from "./schema";

export type Db = BetterSQLite3Database<typeof schema> & { $client: Database.Database };

interface DbHolder {
  db: Db;
  sqlite: Database.Database;
  path: string;
}

// One handle per process, kept on globalThis so that a module loaded twice (dev reloads,
// a script beside the bundle) still shares it.
const KEY = Symbol.for("plinth.db");
const holder = globalThis as unknown as { [KEY]?: DbHolder };

/**
 * Opens the database with Plinth's pragmas: WAL, foreign keys on, a busy timeout, and a page
 * cache of SQLITE_CACHE_MIB (the roll-up keeps each sensor's recent chart rows in it, so a
 * chart does not wait on the disk; rollup/service.ts).
 */
export function openDatabase(
  filePath: string,
  cacheMib: number = env().SQLITE_CACHE_MIB,
): DbHolder {
  if (filePath !== ":memory:")
    fs.mkdirSync(path.dirname(path.resolve(filePath)), { recursive: true });
  const sqlite = new Database(filePath);
  sqlite.pragma("journal_mode = WAL");
  sqlite.pragma("synchronous = NORMAL");
  sqlite.pragma("foreign_keys = ON");
  sqlite.pragma("busy_timeout = 5000");
  sqlite.pragma("temp_store = MEMORY");
  sqlite.pragma(`cache_size = ${-Math.round(cacheMib * 1024)}`);
  const db = drizzle({ client: sqlite, schema }) as Db;
  return { db, sqlite, path: filePath };
}

/** The process's database, opened on first use from DATABASE_PATH. */
export function getDb(): Db {
  return getHolder().db;
}

export function getSqlite(): Database.Database {
  return getHolder().sqlite;
}

function getHolder(): DbHolder {
  let h = holder[KEY];
  if (!h) {
    h = openDatabase(env().DATABASE_PATH);
    holder[KEY] = h;
  }
  return h;
}

/** Finds the drizzle/ folder of migrations by walking up from this module (src or dist). */
export function migrationsFolder(): string {
  if (process.env.PLINTH_MIGRATIONS_DIR) return process.env.PLINTH_MIGRATIONS_DIR;
  let dir = path.dirname(fileURLToPath(import.meta.url));
  for (let i = 0; i < 8; i++) {
    const candidate = path.join(dir, "drizzle");
    if (fs.existsSync(path.join(candidate, "meta", "_journal.json"))) return candidate;
    dir = path.dirname(dir);
  }
  const fromCwd = path.resolve("drizzle");
  if (fs.existsSync(path.join(fromCwd, "meta", "_journal.json"))) return fromCwd;
  throw new Error("Plinth: the drizzle/ migrations folder was not found");
}

/** Applies every migration not yet applied. Safe to call at each start. */
export function migrateDatabase(db: Db = getDb()): void {
  migrate(db, { migrationsFolder: migrationsFolder() });
}

/** Checkpoints the WAL and closes the handle (on shutdown). */
export function closeDatabase(): void {
  const h = holder[KEY];
  if (!h) return;
  try {
    h.sqlite.pragma("wal_checkpoint(TRUNCATE)");
  } finally {
    h.sqlite.close();
    delete holder[KEY];
  }
}

/** A quick liveness probe for /api/health. */
export function pingDatabase(): boolean {
  try {
    return getSqlite().prepare("select 1 as ok").get() !== undefined;
  } catch {
    return false;
  }
}
