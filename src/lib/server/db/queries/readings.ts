import { getSqlite } from "../client";

export interface ReadingRow {
  sensorId: string;
  ts: number;
  tempC: number;
  rhPct: number | null;
  source: "http" | "mqtt" | "upload" | "demo";
  receivedAt: number;
}

/**
 * Inserts readings in one transaction with a prepared statement. A reading whose sensor
 * and time are already stored is skipped (the first value stands). Returns how many were
 * new. The sensors must exist.
 */
export function insertReadings(rows: readonly ReadingRow[]): number {
  const sqlite = getSqlite();
  const stmt = sqlite.prepare(
    "insert into readings (sensor_id, ts, temp_c, rh_pct, source, received_at) values (?, ?, ?, ?, ?, ?) on conflict do nothing",
  );
  const run = sqlite.transaction((batch: readonly ReadingRow[]) => {
    let added = 0;
    for (const r of batch) {
      added += stmt.run(r.sensorId, r.ts, r.tempC, r.rhPct, r.source, r.receivedAt).changes;
    }
    return added;
  });
  return run(rows);
}
