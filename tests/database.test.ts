import type Database from "better-sqlite3";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { migrateDatabase, openDatabase } from "@/lib/server/db/client";

// The real migrations on a real SQLite file.
let dir: string;
let sqlite: Database.Database;

beforeAll(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "plinth-db-"));
  const h = openDatabase(path.join(dir, "t.db"));
  migrateDatabase(h.db);
  sqlite = h.sqlite;
});
afterAll(() => {
  sqlite?.close();
  fs.rmSync(dir, { recursive: true, force: true });
});

describe("the database", () => {
  it("runs in WAL mode with foreign keys on and a busy timeout", () => {
    expect(sqlite.pragma("journal_mode", { simple: true })).toBe("wal");
    expect(sqlite.pragma("foreign_keys", { simple: true })).toBe(1);
    expect(sqlite.pragma("busy_timeout", { simple: true })).toBeGreaterThanOrEqual(1000);
  });

  it("has a table for every part of the product", () => {
    const tables = (
      sqlite.prepare("select name from sqlite_master where type = 'table'").all() as {
        name: string;
      }[]
    ).map((t) => t.name);
    for (const t of [
      "users",
      "sessions",
      "api_tokens",
      "gateways",
      "settings",
      "areas",
      "sensors",
      "sensor_calibrations",
      "readings",
      "uploads",
      "mixes",
      "mix_calibrations",
      "calibration_points",
      "pours",
      "pour_products",
      "pour_sensors",
      "cylinder_breaks",
      "releases",
      "alert_rules",
      "alert_episodes",
      "on_call_shifts",
      "notification_outbox",
      "audit_log",
    ]) {
      expect(tables, t).toContain(t);
    }
  });

  it("applies migrations once: a second run changes nothing", () => {
    const before = sqlite.prepare("select count(*) as n from __drizzle_migrations").get() as {
      n: number;
    };
    const h = openDatabase(path.join(dir, "t.db"));
    migrateDatabase(h.db);
    h.sqlite.close();
    const after = sqlite.prepare("select count(*) as n from __drizzle_migrations").get() as {
      n: number;
    };
    expect(after.n).toBe(before.n);
  });

  it("stores one reading per sensor and time, and refuses an unknown sensor", () => {
    sqlite.prepare("insert into sensors (id, status, created_at) values ('T-1', 'new', 0)").run();
    const ins = sqlite.prepare(
      "insert into readings (sensor_id, ts, temp_c, rh_pct, source, received_at) values (?, ?, ?, ?, 'http', 0) on conflict do nothing",
    );
    expect(ins.run("T-1", 1000, 20.5, 96).changes).toBe(1);
    expect(ins.run("T-1", 1000, 99, 10).changes).toBe(0);
    expect(
      sqlite.prepare("select temp_c from readings where sensor_id = 'T-1' and ts = 1000").get(),
    ).toEqual({ temp_c: 20.5 });
    expect(() => ins.run("NOPE", 1000, 20, null)).toThrow(/FOREIGN KEY/);
  });

  it("keeps readings clustered on (sensor_id, ts)", () => {
    const row = sqlite.prepare("select sql from sqlite_master where name = 'readings'").get() as {
      sql: string;
    };
    expect(row.sql).toMatch(/WITHOUT ROWID/i);
  });

  it("answers a time window of one sensor from the primary key", () => {
    const plan = sqlite
      .prepare(
        "explain query plan select ts, temp_c from readings where sensor_id = ? and ts between ? and ?",
      )
      .all("T-1", 0, 1) as { detail: string }[];
    expect(plan.map((p) => p.detail).join(" ")).toMatch(
      /USING (PRIMARY KEY|INDEX sqlite_autoindex_readings_1)/,
    );
  });

  it("keeps the audit log append-only", () => {
    sqlite
      .prepare("insert into audit_log (at, actor_label, action) values (1, 'test', 'x.y')")
      .run();
    expect(() => sqlite.prepare("update audit_log set action = 'changed'").run()).toThrow(
      /append-only/,
    );
    expect(() => sqlite.prepare("delete from audit_log").run()).toThrow(/append-only/);
    expect(sqlite.prepare("select count(*) as n from audit_log").get()).toEqual({ n: 1 });
  });

  it("finds e-mail addresses whatever their case, once", () => {
    const add = sqlite.prepare(
      "insert into users (email, name, role, password_hash, created_at) values (?, 'A', 'viewer', 'x', 0)",
    );
    add.run("a@example.com");
    expect(() => add.run("A@Example.com")).toThrow(/UNIQUE/);
  });
});
