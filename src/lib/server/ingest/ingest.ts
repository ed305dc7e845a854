import { checkReading, type CleanReading } from "@/domain/readings";
import { storeReadings, type ReadingSource } from "../db/queries/ingest";
import { bus } from "../live/bus";

export const MAX_BATCH_READINGS = 5_000;

export interface IngestAnswer {
  accepted: number;
  duplicates: number;
  rejected: { index: number; error: string }[];
}

/**
 * Checks each reading on its own (one bad reading does not sink the batch), stores the good
 * ones in one transaction, and after the commit tells the live floor. Throws only when the
 * database itself fails, in which case nothing of the batch was stored.
 */
export function ingestReadings(
  raw: readonly unknown[],
  source: ReadingSource,
  opts: { gatewayId?: number | null; sensorFromTopic?: string; nowMs?: number } = {},
): IngestAnswer {
  const nowMs = opts.nowMs ?? Date.now();
  const good: CleanReading[] = [];
  const rejected: IngestAnswer["rejected"] = [];
  raw.forEach((r, index) => {
    const c = checkReading(r, nowMs, opts.sensorFromTopic);
    if (c.ok) good.push(c.reading);
    else rejected.push({ index, error: c.error });
  });
  if (good.length === 0) return { accepted: 0, duplicates: 0, rejected };
  const result = storeReadings(good, source, { gatewayId: opts.gatewayId ?? null, nowMs });
  const committedAtMs = Date.now();
  if (result.stored.length > 0) {
    bus().emit(
      "readings",
      result.stored.map((r) => ({
        sensorId: r.sensorId,
        tsMs: r.tsMs,
        tempC: r.tempC,
        rhPct: r.rhPct,
        latest: r.latest,
        committedAtMs,
      })),
    );
  }
  for (const id of result.newSensors) bus().emit("sensor", { sensorId: id, change: "registered" });
  return { accepted: result.accepted, duplicates: result.duplicates, rejected };
}
