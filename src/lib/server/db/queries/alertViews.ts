/**
 * What the pages that show alert episodes read beside the episodes themselves: each rule's
 * limits (so a list shows them in the reader's units), the sensors and pours that have had
 * episodes (the history's filter choices), a pour's episodes, and how each was acknowledged.
 */
import { asc, desc, eq, inArray, isNotNull } from "drizzle-orm";
import { getDb } from "../client";
import { alertEpisodes, alertRules, pours, sensors } from "../schema";
import { getEpisode, type EpisodeView } from "./alerts";
import { listHistoryAssignments, listPourAlertEpisodes } from "./history";

export interface RuleLimitRow {
  id: number;
  name: string;
  kind: (typeof alertRules.$inferSelect)["kind"];
  threshold: number | null;
  thresholdHigh: number | null;
}

/** Every rule's limits, SI, by id. */
export function listRuleLimits(): RuleLimitRow[] {
  return getDb()
    .select({
      id: alertRules.id,
      name: alertRules.name,
      kind: alertRules.kind,
      threshold: alertRules.threshold,
      thresholdHigh: alertRules.thresholdHigh,
    })
    .from(alertRules)
    .orderBy(asc(alertRules.id))
    .all();
}

/** The sensors and pours that have had at least one episode: what the history can be filtered by. */
export function episodeFilterChoices(): {
  sensors: { id: string; label: string | null }[];
  pours: { id: number; code: string }[];
} {
  const db = getDb();
  const withSensor = db
    .selectDistinct({ id: alertEpisodes.sensorId })
    .from(alertEpisodes)
    .where(isNotNull(alertEpisodes.sensorId));
  const withPour = db
    .selectDistinct({ id: alertEpisodes.pourId })
    .from(alertEpisodes)
    .where(isNotNull(alertEpisodes.pourId));
  return {
    sensors: db
      .select({ id: sensors.id, label: sensors.label })
      .from(sensors)
      .where(inArray(sensors.id, withSensor))
      .orderBy(asc(sensors.id))
      .all(),
    pours: db
      .select({ id: pours.id, code: pours.code })
      .from(pours)
      .where(inArray(pours.id, withPour))
      .orderBy(desc(pours.castAt), desc(pours.id))
      .all(),
  };
}

/**
 * A pour's episodes, as its cure history counts them (raised against the pour, or on its
 * sensors while they were on it), with everything a page shows; newest first.
 */
export function listEpisodesOfPour(pourId: number): EpisodeView[] {
  const pour = getDb()
    .select({ castAt: pours.castAt })
    .from(pours)
    .where(eq(pours.id, pourId))
    .get();
  if (!pour) return [];
  const windows = listHistoryAssignments(pourId).map((a) => ({
    sensorId: a.sensorId,
    fromMs: Math.max(pour.castAt, a.fromAt),
    toMs: a.toAt,
  }));
  return listPourAlertEpisodes(pourId, windows)
    .map((e) => getEpisode(e.id))
    .filter((e): e is EpisodeView => e !== undefined)
    .reverse();
}

/** How each episode was acknowledged (in Plinth or by text reply), for the cure record. */
export function ackViaOf(ids: readonly number[]): Map<number, "web" | "sms" | null> {
  if (ids.length === 0) return new Map();
  const rows = getDb()
    .select({ id: alertEpisodes.id, ackVia: alertEpisodes.ackVia })
    .from(alertEpisodes)
    .where(inArray(alertEpisodes.id, [...ids]))
    .all();
  return new Map(rows.map((r) => [r.id, r.ackVia]));
}
