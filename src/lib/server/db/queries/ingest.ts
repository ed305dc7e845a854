import type { CleanReading } from "@/domain/readings";
import { applyOffsets } from "@/domain/readings";
import { bucketStart, ROLLUP_HOUR_MS, rollupBucketStart } from "@/domain/thinning";
import { getSqlite } from "../client";

export interface StoreResult {
  accepted: number;
  duplicates: number;
  /** Sensors seen for the first time, registered as new and unassigned. */
  newSensors: string[];
  /** The readings stored, with calibration offsets applied, and whether each is its sensor's newest. */
  stored: (CleanReading & { latest: boolean })[];
}

export type ReadingSource = "http" | "mqtt" | "upload" | "demo";

type Statements = ReturnType<typeof prepare>;
const KEY = Symbol.for("plinth.ingest.statements");
const g = globalThis as unknown as { [KEY]?: { db: object; s: Statements } };

function prepare() {
  const db = getSqlite();
  return {
    sensor: db.prepare<
      [string],
      {
        temp_offset_c: number;
        rh_offset_pct: number;
        last_seen_at: number | null;
        rolled_ms: number | null;
      }
    >(
      `select s.temp_offset_c, s.rh_offset_pct, s.last_seen_at, m.rolled_ms
       from sensors s left join readings_rollup_marks m on m.sensor_id = s.id where s.id = ?`,
    ),
    register: db.prepare<[string, number, number | null]>(
      "insert into sensors (id, status, created_at, last_gateway_id) values (?, 'new', ?, ?) on conflict do nothing",
    ),
    insert: db.prepare<[string, number, number, number | null, string, number]>(
      "insert into readings (sensor_id, ts, temp_c, rh_pct, source, received_at) values (?, ?, ?, ?, ?, ?) on conflict do nothing",
    ),
    touch: db.prepare<
      [number, number, number | null, number | null, number | null, string, number]
    >(
      `update sensors set last_seen_at = ?, last_temp_c = ?, last_rh_pct = ?,
         battery_pct = coalesce(?, battery_pct), last_gateway_id = coalesce(?, last_gateway_id)
       where id = ? and (last_seen_at is null or last_seen_at < ?)`,
    ),
    // A reading stored into a rolled-up bucket: the rollup is complete only before it now,
    // and the hourly rollup only before its hour (min() keeps a null hours mark null).
    unroll: db.prepare<[number, number, string, number]>(
      `update readings_rollup_marks set rolled_ms = ?, hours_rolled_ms = min(hours_rolled_ms, ?)
       where sensor_id = ? and rolled_ms > ?`,
    ),
    gatewayUsed: db.prepare<[number, number]>("update gateways set last_used_at = ? where id = ?"),
  };
}

function statements(): Statements {
  const db = getSqlite();
  const cached = g[KEY];
  if (cached && cached.db === db) return cached.s;
  const s = prepare();
  g[KEY] = { db, s };
  return s;
}

/**
 * Stores a batch of checked readings in one transaction: registers unknown sensors as new,
 * applies each sensor's calibration offsets, skips a reading already stored for the same
 * sensor and time (the first value stands), and moves each sensor's last-seen values forward
 * only for readings newer than what it had. A reading stored into a bucket the readings
 * rollup already holds lowers the sensor's rollup mark to that bucket (queries/rollup.ts), so
 * the next roll-up rewrites it: one lookup per sensor and batch, no work per reading.
 * Returns when the transaction has committed.
 */
export function storeReadings(
  readings: readonly CleanReading[],
  source: ReadingSource,
  opts: { gatewayId?: number | null; nowMs?: number } = {},
): StoreResult {
  const s = statements();
  const nowMs = opts.nowMs ?? Date.now();
  const gatewayId = opts.gatewayId ?? null;
  const run = getSqlite().transaction((batch: readonly CleanReading[]) => {
    const sensors = new Map<
      string,
      {
        tempOffset: number;
        rhOffset: number;
        lastSeen: number | null;
        rolledMs: number | null;
        oldestTs: number;
        newest: (CleanReading & { latest: boolean }) | null;
      }
    >();
    const newSensors: string[] = [];
    const stored: (CleanReading & { latest: boolean })[] = [];
    let duplicates = 0;
    for (const raw of batch) {
      let info = sensors.get(raw.sensorId);
      if (!info) {
        let row = s.sensor.get(raw.sensorId);
        if (!row) {
          s.register.run(raw.sensorId, nowMs, gatewayId);
          newSensors.push(raw.sensorId);
          row = { temp_offset_c: 0, rh_offset_pct: 0, last_seen_at: null, rolled_ms: null };
        }
        info = {
          tempOffset: row.temp_offset_c,
          rhOffset: row.rh_offset_pct,
          lastSeen: row.last_seen_at,
          rolledMs: row.rolled_ms,
          oldestTs: Infinity,
          newest: null,
        };
        sensors.set(raw.sensorId, info);
      }
      const r = applyOffsets(raw, info.tempOffset, info.rhOffset);
      const added = s.insert.run(r.sensorId, r.tsMs, r.tempC, r.rhPct, source, nowMs).changes;
      if (added === 0) {
        duplicates++;
        continue;
      }
      const kept = {
        sensorId: r.sensorId,
        tsMs: r.tsMs,
        tempC: r.tempC,
        rhPct: r.rhPct,
        batteryPct: r.batteryPct,
        latest: false,
      };
      stored.push(kept);
      if (!info.newest || r.tsMs > info.newest.tsMs) info.newest = kept;
      if (r.tsMs < info.oldestTs) info.oldestTs = r.tsMs;
    }
    for (const [id, info] of sensors) {
      if (info.rolledMs !== null && info.oldestTs < info.rolledMs) {
        const bucketMs = rollupBucketStart(info.oldestTs);
        s.unroll.run(bucketMs, bucketStart(bucketMs, ROLLUP_HOUR_MS), id, bucketMs);
      }
      const n = info.newest;
      if (!n || (info.lastSeen !== null && n.tsMs <= info.lastSeen)) continue;
      s.touch.run(n.tsMs, n.tempC, n.rhPct, n.batteryPct, gatewayId, id, n.tsMs);
      n.latest = true;
    }
    if (gatewayId !== null) s.gatewayUsed.run(nowMs, gatewayId);
    return { accepted: stored.length, duplicates, newSensors, stored };
  });
  return run(readings);
}
