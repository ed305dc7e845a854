/**
 * Pours for the in-process benchmarks (strength, history): a calibrated mix, sensors, pours
 * cast at staggered times with their sensors assigned from the cast, and one-minute readings
 * from each cast to a common end. Runs inside a bench worker whose DATABASE_PATH names a
 * fresh file, through Plinth's own handle (getDb, getSqlite) after Plinth's migrations.
 *
 * Readings are inserted minute by minute across every sensor, as gateways deliver them, so the
 * clustered readings table is laid out as in a plant's database.
 */
import { eq } from "drizzle-orm";
import { fitStrengthCurve } from "@/domain/strength/curves";
import { psiToMpa } from "@/domain/units";
import { getDb, getSqlite } from "@/lib/server/db/client";
import { mixCalibrations, mixes, pourSensors, pours, sensors } from "@/lib/server/db/schema";
import { INSERT_READING_SQL } from "./db";

export const MINUTE_MS = 60_000;
export const HOUR_MS = 3_600_000;
const ROWS_PER_TRANSACTION = 200_000;

export interface PourSpec {
  /** Prefix of the pour codes and sensor ids, so two sets never clash. */
  prefix: string;
  pours: number;
  sensorsPerPour: number;
  /** Pour ages at `endMs`, spread evenly from the youngest to the oldest, hours. */
  minAgeH: number;
  maxAgeH: number;
  /** The last reading's time (inclusive), epoch ms on a whole minute. */
  endMs: number;
  status: "curing" | "shipped";
}

export interface BuiltPours {
  mixId: number;
  pourIds: number[];
  /** Each pour's sensor ids, in pour order. */
  sensorsByPour: string[][];
  castAtMs: number[];
  readings: number;
}

/**
 * A mix calibrated as the demo's high-strength mix is (lab breaks at 23 °C fitted on the log
 * curve): strip at 3,500 psi, ship at 7,500 psi, datum −10 °C, 41.57 kJ/mol.
 */
function insertCalibratedMix(name: string): number {
  const db = getDb();
  const datumC = -10;
  const breaks: [days: number, psi: number][] = [
    [1, 4_150],
    [3, 6_900],
    [7, 8_650],
    [14, 9_700],
    [28, 10_850],
  ];
  const mix = db
    .insert(mixes)
    .values({
      name,
      designStrengthMpa: psiToMpa(10_000),
      stripStrengthMpa: psiToMpa(3_500),
      shipStrengthMpa: psiToMpa(7_500),
      datumTempC: datumC,
      activationEnergyJMol: 41_570,
    })
    .returning({ id: mixes.id })
    .get();
  const fit = fitStrengthCurve(
    "log",
    breaks.map(([days, psi]) => ({
      ttfCH: days * 24 * (23 - datumC),
      strengthMpa: psiToMpa(psi),
    })),
  );
  const { model, ...params } = fit.curve;
  const cal = db
    .insert(mixCalibrations)
    .values({
      mixId: mix.id,
      model,
      paramsJson: JSON.stringify(params),
      r2: fit.r2,
      pointCount: breaks.length,
    })
    .returning({ id: mixCalibrations.id })
    .get();
  db.update(mixes).set({ currentCalibrationId: cal.id }).where(eq(mixes.id, mix.id)).run();
  return mix.id;
}

/**
 * A cure-bag temperature record: room temperature with a daily swing, the heat of hydration
 * peaking about 13 h after the cast, and a little noise. °C, one decimal.
 */
export function bagTempC(sensorIndex: number, ageH: number, clockH: number, noise: number): number {
  const phase = (sensorIndex * 0.37) % (2 * Math.PI);
  const daily = 5 * Math.sin((2 * Math.PI * clockH) / 24 + phase);
  const hydration = 24 * Math.exp(-(((ageH - 13) / 8) ** 2));
  return Math.round((19 + daily + hydration + (noise - 0.5) * 0.6) * 10) / 10;
}

/** A repeatable noise source in [0, 1). */
function noiseSource(seed: number): () => number {
  let state = seed >>> 0;
  return () => ((state = (state * 1103515245 + 12345) >>> 0) & 0xffff) / 0x10000;
}

/**
 * Builds the pours; reports progress by readings inserted. Yields to the event loop between
 * transactions so a signal can stop the worker.
 */
export async function buildPours(
  spec: PourSpec,
  report: (done: number, total: number) => void = () => {},
): Promise<BuiltPours> {
  const db = getDb();
  const sqlite = getSqlite();
  const mixId = insertCalibratedMix(`${spec.prefix}MIX`);
  const pad = (n: number, width: number) => String(n).padStart(width, "0");
  const spread = spec.pours > 1 ? (spec.maxAgeH - spec.minAgeH) / (spec.pours - 1) : 0;
  const castAtMs: number[] = [];
  const pourIds: number[] = [];
  const sensorsByPour: string[][] = [];
  db.transaction((tx) => {
    for (let p = 0; p < spec.pours; p++) {
      const ageH = spec.minAgeH + p * spread;
      const castAt = Math.floor((spec.endMs - ageH * HOUR_MS) / MINUTE_MS) * MINUTE_MS;
      const shipped = spec.status === "shipped";
      const pour = tx
        .insert(pours)
        .values({
          code: `${spec.prefix}${pad(p + 1, 4)}`,
          mixId,
          castAt,
          status: spec.status,
          bed: `Bed ${(p % 12) + 1}`,
          strippedAt: shipped ? castAt + 16 * HOUR_MS : null,
          shippedAt: shipped ? spec.endMs : null,
          updatedAt: castAt,
        })
        .returning({ id: pours.id })
        .get();
      const ids: string[] = [];
      for (let s = 0; s < spec.sensorsPerPour; s++) {
        const id = `${spec.prefix}S${pad(p + 1, 4)}-${s + 1}`;
        tx.insert(sensors)
          .values({ id, label: `Bag ${s + 1}`, kind: "bag", status: "active", createdAt: castAt })
          .run();
        tx.insert(pourSensors)
          .values({ pourId: pour.id, sensorId: id, fromAt: castAt, location: `Bag ${s + 1}` })
          .run();
        ids.push(id);
      }
      castAtMs.push(castAt);
      pourIds.push(pour.id);
      sensorsByPour.push(ids);
    }
  });

  // Built fast (as the chart bench builds its file), then back to Plinth's own settings.
  sqlite.pragma("synchronous = OFF");
  const cacheSize = sqlite.pragma("cache_size", { simple: true }) as number;
  sqlite.pragma("cache_size = -262144");
  const insert = sqlite.prepare(INSERT_READING_SQL);
  const firstMs = Math.min(...castAtMs);
  const minutes = Math.round((spec.endMs - firstMs) / MINUTE_MS) + 1;
  const all = sensorsByPour.flatMap((ids, p) =>
    ids.map((id, s) => ({ id, castAt: castAtMs[p]!, index: p * spec.sensorsPerPour + s })),
  );
  const total = all.reduce((n, x) => n + Math.round((spec.endMs - x.castAt) / MINUTE_MS) + 1, 0);
  const noise = noiseSource(12345);
  let done = 0;
  const insertMinutes = sqlite.transaction((first: number, last: number) => {
    for (let m = first; m < last; m++) {
      const ts = firstMs + m * MINUTE_MS;
      const clockH = (ts % 86_400_000) / HOUR_MS;
      for (const x of all) {
        if (ts < x.castAt) continue;
        const tempC = bagTempC(x.index, (ts - x.castAt) / HOUR_MS, clockH, noise());
        insert.run(x.id, ts, tempC, 95, "http", ts + 2_000);
        done++;
      }
    }
  });
  const minutesPerTx = Math.max(1, Math.floor(ROWS_PER_TRANSACTION / all.length));
  for (let m = 0; m < minutes; m += minutesPerTx) {
    insertMinutes(m, Math.min(minutes, m + minutesPerTx));
    report(done, total);
    await new Promise((resolve) => setImmediate(resolve));
  }
  // Each sensor's last-seen values, as ingest leaves them.
  const touch = sqlite.prepare(
    "update sensors set last_seen_at = ?, last_temp_c = (select temp_c from readings where sensor_id = ? and ts = ?) where id = ?",
  );
  sqlite.transaction(() => {
    for (const x of all) touch.run(spec.endMs, x.id, spec.endMs, x.id);
  })();
  sqlite.pragma("wal_checkpoint(TRUNCATE)");
  sqlite.pragma(`cache_size = ${cacheSize}`);
  sqlite.pragma("synchronous = NORMAL");
  return { mixId, pourIds, sensorsByPour, castAtMs, readings: done };
}
