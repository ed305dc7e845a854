/**
 * Pours: the record of each casting, its products, the sensors that watch it and when.
 * Routes call these; none holds business rules beyond what one write needs to stay whole
 * (each change is one transaction).
 */
import { and, asc, desc, eq, inArray, isNull, or, sql, type SQL } from "drizzle-orm";
import type { ExistingAssignment, KnownSensor } from "@/domain/assignments";
import { isOpenStatus, type PourStatus } from "@/domain/pourLifecycle";
import { getDb } from "../client";
import {
  areas,
  auditLog,
  mixes,
  pourProducts,
  pourSensors,
  pours,
  releases,
  sensors,
  users,
} from "../schema";

export type PourRow = typeof pours.$inferSelect;
export type MixRow = typeof mixes.$inferSelect;
export type ProductRow = typeof pourProducts.$inferSelect;

export interface ProductInput {
  product: string;
  pieceCount: number;
  marks: string | null;
}

export interface FreshTests {
  dischargeTempC: number | null;
  slumpMm: number | null;
  spreadMm: number | null;
  airPct: number | null;
  unitWeightKgM3: number | null;
  /** Stored as one text, ids joined by ", " (ids never hold a comma). */
  cylinderIds: string | null;
}

/** Cylinder ids as a list, from the stored text. */
export function splitCylinderIds(text: string | null): string[] {
  if (!text) return [];
  return text
    .split(",")
    .map((s) => s.trim())
    .filter((s) => s.length > 0);
}

export const joinCylinderIds = (ids: readonly string[] | null): string | null =>
  ids && ids.length > 0 ? ids.join(", ") : null;

export function getMix(id: number): MixRow | undefined {
  return getDb().select().from(mixes).where(eq(mixes.id, id)).get();
}

export function getPour(id: number): PourRow | undefined {
  return getDb().select().from(pours).where(eq(pours.id, id)).get();
}

export function findPourByCode(code: string): PourRow | undefined {
  return getDb()
    .select()
    .from(pours)
    .where(sql`${pours.code} = ${code} collate nocase`)
    .get();
}

/** The named sensors Plinth knows, with what the assignment rules need. */
export function knownSensors(ids: readonly string[]): Map<string, KnownSensor> {
  const out = new Map<string, KnownSensor>();
  if (ids.length === 0) return out;
  const rows = getDb()
    .select({ id: sensors.id, kind: sensors.kind, status: sensors.status })
    .from(sensors)
    .where(inArray(sensors.id, [...ids]))
    .all();
  for (const r of rows) out.set(r.id, r);
  return out;
}

/** Every assignment, on any pour, of these sensors (and every one of `pourId`, when given). */
export function assignmentsOf(ids: readonly string[], pourId?: number): ExistingAssignment[] {
  const where: SQL[] = [];
  if (ids.length > 0) where.push(inArray(pourSensors.sensorId, [...ids]));
  if (pourId !== undefined) where.push(eq(pourSensors.pourId, pourId));
  if (where.length === 0) return [];
  return getDb()
    .select({
      assignmentId: pourSensors.id,
      sensorId: pourSensors.sensorId,
      pourId: pourSensors.pourId,
      pourCode: pours.code,
      status: pours.status,
      fromMs: pourSensors.fromAt,
      toMs: pourSensors.toAt,
    })
    .from(pourSensors)
    .innerJoin(pours, eq(pours.id, pourSensors.pourId))
    .where(or(...where))
    .all()
    .map(({ status, ...a }) => ({ ...a, pourOpen: isOpenStatus(status) }));
}

export interface AssignmentInput {
  sensorId: string;
  fromMs: number;
  location: string | null;
}

export interface PourCreateInput extends FreshTests {
  code: string;
  mixId: number;
  castAtMs: number;
  bed: string | null;
  notes: string | null;
  products: ProductInput[];
  assignments: AssignmentInput[];
  /** Assignments on other pours that end, and where. */
  moves: { assignmentId: number; endMs: number }[];
  createdBy: number | null;
}

/** Records a pour, its products and its sensors, ending moved sensors' other assignments; one transaction. */
export function insertPour(input: PourCreateInput, nowMs = Date.now()): PourRow {
  return getDb().transaction((tx) => {
    for (const m of input.moves)
      tx.update(pourSensors).set({ toAt: m.endMs }).where(eq(pourSensors.id, m.assignmentId)).run();
    const pour = tx
      .insert(pours)
      .values({
        code: input.code,
        mixId: input.mixId,
        castAt: input.castAtMs,
        status: "curing",
        bed: input.bed,
        notes: input.notes,
        dischargeTempC: input.dischargeTempC,
        slumpMm: input.slumpMm,
        spreadMm: input.spreadMm,
        airPct: input.airPct,
        unitWeightKgM3: input.unitWeightKgM3,
        cylinderIds: input.cylinderIds,
        createdBy: input.createdBy,
        createdAt: nowMs,
        updatedAt: nowMs,
      })
      .returning()
      .get();
    for (const p of input.products)
      tx.insert(pourProducts)
        .values({ pourId: pour.id, product: p.product, pieceCount: p.pieceCount, marks: p.marks })
        .run();
    for (const a of input.assignments)
      tx.insert(pourSensors)
        .values({
          pourId: pour.id,
          sensorId: a.sensorId,
          fromAt: a.fromMs,
          location: a.location,
          createdBy: input.createdBy,
          createdAt: nowMs,
        })
        .run();
    return pour;
  });
}

export type PourFieldsPatch = Partial<
  Pick<
    PourRow,
    | "bed"
    | "notes"
    | "dischargeTempC"
    | "slumpMm"
    | "spreadMm"
    | "airPct"
    | "unitWeightKgM3"
    | "cylinderIds"
    | "status"
    | "strippedAt"
    | "shippedAt"
  >
>;

/**
 * Changes a pour's fields, replaces its products when given, and ends its open assignments at
 * `endAssignmentsAtMs` when given (a pour that ships or is voided lets its sensors go); one
 * transaction.
 */
export function updatePour(
  id: number,
  patch: PourFieldsPatch,
  products: ProductInput[] | undefined,
  endAssignmentsAtMs: number | null,
  nowMs = Date.now(),
): PourRow {
  return getDb().transaction((tx) => {
    const row = tx
      .update(pours)
      .set({ ...patch, updatedAt: nowMs })
      .where(eq(pours.id, id))
      .returning()
      .get();
    if (products) {
      tx.delete(pourProducts).where(eq(pourProducts.pourId, id)).run();
      for (const p of products)
        tx.insert(pourProducts)
          .values({ pourId: id, product: p.product, pieceCount: p.pieceCount, marks: p.marks })
          .run();
    }
    if (endAssignmentsAtMs !== null) {
      // An assignment that began after the end time ends where it began (an empty window).
      tx.update(pourSensors)
        .set({ toAt: sql`max(${pourSensors.fromAt}, ${endAssignmentsAtMs})` })
        .where(and(eq(pourSensors.pourId, id), isNull(pourSensors.toAt)))
        .run();
    }
    return row;
  });
}

/** Ends and adds assignments of one pour, and ends moved sensors' other assignments; one transaction. */
export function changeAssignments(
  pourId: number,
  change: {
    ends: { assignmentId: number; endMs: number }[];
    adds: AssignmentInput[];
    moves: { assignmentId: number; endMs: number }[];
    byUserId: number | null;
  },
  nowMs = Date.now(),
): void {
  getDb().transaction((tx) => {
    for (const e of [...change.ends, ...change.moves])
      tx.update(pourSensors).set({ toAt: e.endMs }).where(eq(pourSensors.id, e.assignmentId)).run();
    for (const a of change.adds)
      tx.insert(pourSensors)
        .values({
          pourId,
          sensorId: a.sensorId,
          fromAt: a.fromMs,
          location: a.location,
          createdBy: change.byUserId,
          createdAt: nowMs,
        })
        .run();
    tx.update(pours).set({ updatedAt: nowMs }).where(eq(pours.id, pourId)).run();
  });
}

export function listProducts(pourId: number): ProductRow[] {
  return getDb()
    .select()
    .from(pourProducts)
    .where(eq(pourProducts.pourId, pourId))
    .orderBy(asc(pourProducts.id))
    .all();
}

/** One assignment with the sensor's identity, place and last reading. */
export interface AssignmentDetail {
  id: number;
  sensorId: string;
  fromAt: number;
  toAt: number | null;
  location: string | null;
  label: string | null;
  kind: "bag" | "embedded" | "bin" | "ambient" | null;
  areaName: string | null;
  lastSeenAt: number | null;
  lastTempC: number | null;
  lastRhPct: number | null;
  createdByName: string | null;
}

/** A pour's assignments, those still on first, then by start. */
export function listAssignments(pourId: number): AssignmentDetail[] {
  return getDb()
    .select({
      id: pourSensors.id,
      sensorId: pourSensors.sensorId,
      fromAt: pourSensors.fromAt,
      toAt: pourSensors.toAt,
      location: pourSensors.location,
      label: sensors.label,
      kind: sensors.kind,
      areaName: areas.name,
      lastSeenAt: sensors.lastSeenAt,
      lastTempC: sensors.lastTempC,
      lastRhPct: sensors.lastRhPct,
      createdByName: users.name,
    })
    .from(pourSensors)
    .innerJoin(sensors, eq(sensors.id, pourSensors.sensorId))
    .leftJoin(areas, eq(areas.id, sensors.areaId))
    .leftJoin(users, eq(users.id, pourSensors.createdBy))
    .where(eq(pourSensors.pourId, pourId))
    .orderBy(
      sql`${pourSensors.toAt} is not null`,
      asc(pourSensors.fromAt),
      asc(pourSensors.sensorId),
    )
    .all();
}

/** Which releases QC has signed for a pour. */
export function releaseFlags(pourId: number): {
  hasStripRelease: boolean;
  hasShipRelease: boolean;
} {
  const kinds = new Set(
    getDb()
      .select({ kind: releases.kind })
      .from(releases)
      .where(eq(releases.pourId, pourId))
      .all()
      .map((r) => r.kind),
  );
  return { hasStripRelease: kinds.has("strip"), hasShipRelease: kinds.has("ship") };
}

export interface PourListFilter {
  status?: PourStatus | "open";
  mixId?: number;
  q?: string;
  limit?: number;
}

export interface PourListItem {
  pour: PourRow;
  mixName: string;
  products: { product: string; pieceCount: number }[];
  sensorIds: string[];
}

/** Pours newest cast first, with their mix's name, products and the sensors now on them. */
export function listPours(filter: PourListFilter = {}): PourListItem[] {
  const db = getDb();
  const where: SQL[] = [];
  if (filter.status === "open")
    where.push(inArray(pours.status, ["curing", "stripped", "ready_to_ship"]));
  else if (filter.status) where.push(eq(pours.status, filter.status));
  if (filter.mixId) where.push(eq(pours.mixId, filter.mixId));
  if (filter.q) {
    const q = `%${filter.q.replace(/[%_\\]/g, (c) => `\\${c}`)}%`;
    const productMatch = db
      .select({ id: pourProducts.pourId })
      .from(pourProducts)
      .where(sql`${pourProducts.product} like ${q} escape '\\'`);
    const sensorMatch = db
      .select({ id: pourSensors.pourId })
      .from(pourSensors)
      .where(sql`${pourSensors.sensorId} like ${q} escape '\\'`);
    where.push(
      or(
        sql`${pours.code} like ${q} escape '\\'`,
        sql`${pours.bed} like ${q} escape '\\'`,
        sql`${mixes.name} like ${q} escape '\\'`,
        inArray(pours.id, productMatch),
        inArray(pours.id, sensorMatch),
      )!,
    );
  }
  const rows = db
    .select({ pour: pours, mixName: mixes.name })
    .from(pours)
    .innerJoin(mixes, eq(mixes.id, pours.mixId))
    .where(where.length ? and(...where) : undefined)
    .orderBy(desc(pours.castAt), desc(pours.id))
    .limit(Math.min(filter.limit ?? 200, 500))
    .all();
  if (rows.length === 0) return [];
  const ids = rows.map((r) => r.pour.id);
  const products = db.select().from(pourProducts).where(inArray(pourProducts.pourId, ids)).all();
  const on = db
    .select({ pourId: pourSensors.pourId, sensorId: pourSensors.sensorId })
    .from(pourSensors)
    .where(and(inArray(pourSensors.pourId, ids), isNull(pourSensors.toAt)))
    .orderBy(asc(pourSensors.sensorId))
    .all();
  return rows.map((r) => ({
    pour: r.pour,
    mixName: r.mixName,
    products: products
      .filter((p) => p.pourId === r.pour.id)
      .map(({ product, pieceCount }) => ({ product, pieceCount })),
    sensorIds: on.filter((s) => s.pourId === r.pour.id).map((s) => s.sensorId),
  }));
}

/** A sensor as the new-pour form offers it: where it is, what it reads, and which open pour holds it. */
export interface PickableSensor {
  id: string;
  label: string | null;
  kind: "bag" | "embedded" | "ambient" | null;
  areaName: string | null;
  areaOrder: number | null;
  lastTempC: number | null;
  lastSeenAt: number | null;
  pourCode: string | null;
}

/** Sensors that may watch a pour (not retired, not aggregate bins), each with the open pour now holding it. */
export function listPickableSensors(): PickableSensor[] {
  const db = getDb();
  const rows = db
    .select({
      id: sensors.id,
      label: sensors.label,
      kind: sensors.kind,
      areaName: areas.name,
      areaOrder: areas.sortOrder,
      lastTempC: sensors.lastTempC,
      lastSeenAt: sensors.lastSeenAt,
    })
    .from(sensors)
    .leftJoin(areas, eq(areas.id, sensors.areaId))
    .where(
      sql`${sensors.status} != 'retired' and (${sensors.kind} is null or ${sensors.kind} != 'bin')`,
    )
    .orderBy(asc(sensors.id))
    .all();
  const held = db
    .select({ sensorId: pourSensors.sensorId, code: pours.code })
    .from(pourSensors)
    .innerJoin(pours, eq(pours.id, pourSensors.pourId))
    .where(
      and(isNull(pourSensors.toAt), inArray(pours.status, ["curing", "stripped", "ready_to_ship"])),
    )
    .all();
  const holder = new Map(held.map((h) => [h.sensorId, h.code]));
  return rows.map((r) => ({
    ...r,
    kind: r.kind as PickableSensor["kind"],
    pourCode: holder.get(r.id) ?? null,
  }));
}

/** Active mixes, by name, for the pickers. */
export function listActiveMixes(): MixRow[] {
  return getDb().select().from(mixes).where(eq(mixes.active, true)).orderBy(asc(mixes.name)).all();
}

/** Every mix that has a pour, or is active (for the list's mix filter). */
export function listMixesForFilter(): { id: number; name: string }[] {
  return getDb()
    .select({ id: mixes.id, name: mixes.name })
    .from(mixes)
    .where(
      or(
        eq(mixes.active, true),
        inArray(mixes.id, getDb().select({ id: pours.mixId }).from(pours)),
      ),
    )
    .orderBy(asc(mixes.name))
    .all();
}

/** Who recorded the pour, by name. */
export function userName(id: number | null): string | null {
  if (id === null) return null;
  return (
    getDb().select({ name: users.name }).from(users).where(eq(users.id, id)).get()?.name ?? null
  );
}

/** Why a pour was voided, from its audit entry (the reason is kept there). */
export function voidReason(
  pourId: number,
): { reason: string | null; at: number; by: string } | null {
  const row = getDb()
    .select({ at: auditLog.at, by: auditLog.actorLabel, detail: auditLog.detailJson })
    .from(auditLog)
    .where(
      and(
        eq(auditLog.pourId, pourId),
        eq(auditLog.action, "pour.status_changed"),
        sql`json_extract(${auditLog.detailJson}, '$.to') = 'void'`,
      ),
    )
    .orderBy(desc(auditLog.id))
    .limit(1)
    .get();
  if (!row) return null;
  const detail = row.detail ? (JSON.parse(row.detail) as { reason?: string }) : {};
  return { reason: detail.reason ?? null, at: row.at, by: row.by };
}
