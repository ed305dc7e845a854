/**
 * What a pour's cure history reads: its pieces, its sensors' windows, the readings in them,
 * the mix's calibration in force, cylinder breaks, releases, alert episodes and every audit
 * entry that touches the pour.
 */
import { and, asc, eq, inArray, isNull, lte, or, sql, type SQL } from "drizzle-orm";
import { alias } from "drizzle-orm/sqlite-core";
import type { ReadingRow } from "@/domain/history";
import { getDb, getSqlite } from "../client";
import {
  alertEpisodes,
  alertRules,
  auditLog,
  cylinderBreaks,
  mixCalibrations,
  pourProducts,
  pourSensors,
  releases,
  sensors,
  users,
} from "../schema";
import type { MixRow } from "./strength";

export type ProductRow = typeof pourProducts.$inferSelect;

export function listPourProducts(pourId: number): ProductRow[] {
  return getDb()
    .select()
    .from(pourProducts)
    .where(eq(pourProducts.pourId, pourId))
    .orderBy(asc(pourProducts.id))
    .all();
}

/** One sensor's time on the pour, with what the sensor is. */
export interface HistoryAssignment {
  id: number;
  sensorId: string;
  label: string | null;
  kind: "bag" | "embedded" | "bin" | "ambient" | null;
  location: string | null;
  fromAt: number;
  toAt: number | null;
}

/** The pour's sensor assignments, by sensor then start. */
export function listHistoryAssignments(pourId: number): HistoryAssignment[] {
  return getDb()
    .select({
      id: pourSensors.id,
      sensorId: pourSensors.sensorId,
      label: sensors.label,
      kind: sensors.kind,
      location: pourSensors.location,
      fromAt: pourSensors.fromAt,
      toAt: pourSensors.toAt,
    })
    .from(pourSensors)
    .innerJoin(sensors, eq(sensors.id, pourSensors.sensorId))
    .where(eq(pourSensors.pourId, pourId))
    .orderBy(asc(pourSensors.sensorId), asc(pourSensors.fromAt))
    .all();
}

/**
 * One sensor's readings in [fromMs, toMs] as rows [ts, temp_c, rh_pct], oldest first, read
 * straight off the (sensor_id, ts) primary key with no object made per reading.
 */
export function readingRows(sensorId: string, fromMs: number, toMs: number): ReadingRow[] {
  return getSqlite()
    .prepare<[string, number, number], [number, number, number | null]>(
      "select ts, temp_c, rh_pct from readings where sensor_id = ? and ts between ? and ? order by ts",
    )
    .raw()
    .all(sensorId, fromMs, toMs);
}

/** The mix's calibration in force, with its record (model, R², points, when), or null. */
export function currentCalibrationRecord(mix: MixRow) {
  if (mix.currentCalibrationId === null) return null;
  return (
    getDb()
      .select({
        id: mixCalibrations.id,
        model: mixCalibrations.model,
        r2: mixCalibrations.r2,
        pointCount: mixCalibrations.pointCount,
        createdAt: mixCalibrations.createdAt,
      })
      .from(mixCalibrations)
      .where(eq(mixCalibrations.id, mix.currentCalibrationId))
      .get() ?? null
  );
}

export function listPourBreaks(pourId: number) {
  return getDb()
    .select({
      id: cylinderBreaks.id,
      specimenId: cylinderBreaks.specimenId,
      brokenAt: cylinderBreaks.brokenAt,
      ageH: cylinderBreaks.ageH,
      strengthMpa: cylinderBreaks.strengthMpa,
      estimateMpa: cylinderBreaks.estimateMpa,
      lab: cylinderBreaks.lab,
      note: cylinderBreaks.note,
      enteredBy: users.name,
    })
    .from(cylinderBreaks)
    .leftJoin(users, eq(users.id, cylinderBreaks.enteredBy))
    .where(eq(cylinderBreaks.pourId, pourId))
    .orderBy(asc(cylinderBreaks.brokenAt), asc(cylinderBreaks.id))
    .all();
}
export type BreakRecord = ReturnType<typeof listPourBreaks>[number];

export function listPourReleases(pourId: number) {
  return getDb()
    .select({
      id: releases.id,
      kind: releases.kind,
      releasedAt: releases.releasedAt,
      releasedBy: users.name,
      releasedByEmail: users.email,
      thresholdMpa: releases.thresholdMpa,
      estimateMpa: releases.estimateMpa,
      governingSensorId: releases.governingSensorId,
      ttfCH: releases.ttfCH,
      equivalentAgeH: releases.equivalentAgeH,
      completeRecord: releases.completeRecord,
      overrideReason: releases.overrideReason,
      note: releases.note,
      caution: releases.caution,
    })
    .from(releases)
    .innerJoin(users, eq(users.id, releases.releasedBy))
    .where(eq(releases.pourId, pourId))
    .orderBy(asc(releases.releasedAt), asc(releases.id))
    .all();
}
export type ReleaseRecord = ReturnType<typeof listPourReleases>[number];

/**
 * Alert episodes of the pour: those raised against it, and those of its sensors that overlap
 * the time each sensor was on it (unless raised against another pour).
 */
export function listPourAlertEpisodes(
  pourId: number,
  windows: readonly { sensorId: string; fromMs: number; toMs: number | null }[],
) {
  const ackUser = alias(users, "ack_user");
  const clauses: SQL[] = [eq(alertEpisodes.pourId, pourId)];
  for (const w of windows) {
    const parts: SQL[] = [
      eq(alertEpisodes.sensorId, w.sensorId),
      or(isNull(alertEpisodes.pourId), eq(alertEpisodes.pourId, pourId))!,
      or(isNull(alertEpisodes.clearedAt), sql`${alertEpisodes.clearedAt} >= ${w.fromMs}`)!,
    ];
    if (w.toMs !== null) parts.push(lte(alertEpisodes.startedAt, w.toMs));
    clauses.push(and(...parts)!);
  }
  return getDb()
    .select({
      id: alertEpisodes.id,
      rule: alertRules.name,
      ruleKind: alertRules.kind,
      sensorId: alertEpisodes.sensorId,
      state: alertEpisodes.state,
      severity: alertEpisodes.severity,
      startedAt: alertEpisodes.startedAt,
      openedAt: alertEpisodes.openedAt,
      triggerValue: alertEpisodes.triggerValue,
      worstValue: alertEpisodes.worstValue,
      acknowledgedAt: alertEpisodes.acknowledgedAt,
      acknowledgedBy: ackUser.name,
      ackNote: alertEpisodes.ackNote,
      clearedAt: alertEpisodes.clearedAt,
      escalationLevel: alertEpisodes.escalationLevel,
    })
    .from(alertEpisodes)
    .innerJoin(alertRules, eq(alertRules.id, alertEpisodes.ruleId))
    .leftJoin(ackUser, eq(ackUser.id, alertEpisodes.acknowledgedBy))
    .where(or(...clauses))
    .orderBy(asc(alertEpisodes.openedAt), asc(alertEpisodes.id))
    .all();
}
export type EpisodeRecord = ReturnType<typeof listPourAlertEpisodes>[number];

/** Records that belong to a pour, each under the entity types an audit entry may name it by. */
export interface PourEntityRefs {
  pourId: number;
  assignmentIds: readonly number[];
  releaseIds: readonly number[];
  breakIds: readonly number[];
  episodeIds: readonly number[];
  /** The pour's mix: its changes while the pour cured touch the pour's estimate. */
  mixId: number;
  /** While the pour cured: from cast to shipping (or now). */
  cureFromMs: number;
  cureToMs: number;
}

const entityTypes = {
  pour: ["pour"],
  assignment: ["pour_sensor", "pour_sensors", "assignment"],
  release: ["release", "releases"],
  break: ["cylinder_break", "cylinder_breaks", "break"],
  episode: ["alert_episode", "alert_episodes", "alert"],
} as const;

/** The ids of every calibration a mix has had. */
export function listMixCalibrationIds(mixId: number): number[] {
  return getDb()
    .select({ id: mixCalibrations.id })
    .from(mixCalibrations)
    .where(eq(mixCalibrations.mixId, mixId))
    .all()
    .map((r) => r.id);
}

/**
 * Every audit entry touching the pour, oldest first: those written with its pour_id; those
 * naming the pour, one of its sensor assignments, releases, breaks or alert episodes as their
 * record; and changes to its mix or the mix's calibration made while the pour cured (they
 * change the pour's estimate).
 */
export function listPourAudit(refs: PourEntityRefs) {
  const about = (types: readonly string[], ids: readonly number[]): SQL | undefined =>
    ids.length === 0
      ? undefined
      : and(
          inArray(auditLog.entityType, [...types]),
          inArray(
            auditLog.entityId,
            ids.map((i) => String(i)),
          ),
        );
  const clauses = [
    eq(auditLog.pourId, refs.pourId),
    about(entityTypes.pour, [refs.pourId]),
    about(entityTypes.assignment, refs.assignmentIds),
    about(entityTypes.release, refs.releaseIds),
    about(entityTypes.break, refs.breakIds),
    about(entityTypes.episode, refs.episodeIds),
    and(
      or(
        about(["mix"], [refs.mixId]),
        about(["mix_calibration"], listMixCalibrationIds(refs.mixId)),
      ),
      sql`${auditLog.at} between ${refs.cureFromMs} and ${refs.cureToMs}`,
    ),
  ].filter((c): c is SQL => c !== undefined);
  return getDb()
    .select({
      id: auditLog.id,
      at: auditLog.at,
      actorLabel: auditLog.actorLabel,
      action: auditLog.action,
      entityType: auditLog.entityType,
      entityId: auditLog.entityId,
      detailJson: auditLog.detailJson,
    })
    .from(auditLog)
    .where(or(...clauses))
    .orderBy(asc(auditLog.at), asc(auditLog.id))
    .all();
}
export type AuditRecord = ReturnType<typeof listPourAudit>[number];
