/** Cylinder breaks entered against a pour, with the in-place estimate they were compared with. */
import { and, asc, eq, sql } from "drizzle-orm";
import { getDb } from "../client";
import { cylinderBreaks, users } from "../schema";

export type BreakRow = typeof cylinderBreaks.$inferSelect;
export type BreakWithEnterer = BreakRow & { enteredByName: string | null };

export interface BreakInput {
  pourId: number;
  mixId: number;
  specimenId: string;
  brokenAtMs: number;
  ageH: number;
  strengthMpa: number;
  estimateMpa: number | null;
  lab: string | null;
  note: string | null;
  enteredBy: number | null;
}

export function insertBreak(input: BreakInput, nowMs = Date.now()): BreakRow {
  return getDb()
    .insert(cylinderBreaks)
    .values({
      pourId: input.pourId,
      mixId: input.mixId,
      specimenId: input.specimenId,
      brokenAt: input.brokenAtMs,
      ageH: input.ageH,
      strengthMpa: input.strengthMpa,
      estimateMpa: input.estimateMpa,
      lab: input.lab,
      note: input.note,
      enteredBy: input.enteredBy,
      createdAt: nowMs,
    })
    .returning()
    .get();
}

/** A pour's breaks in the order they were broken, with who entered each. */
export function listBreaksForPour(pourId: number): BreakWithEnterer[] {
  return getDb()
    .select({ b: cylinderBreaks, enteredByName: users.name })
    .from(cylinderBreaks)
    .leftJoin(users, eq(users.id, cylinderBreaks.enteredBy))
    .where(eq(cylinderBreaks.pourId, pourId))
    .orderBy(asc(cylinderBreaks.brokenAt), asc(cylinderBreaks.id))
    .all()
    .map((r) => ({ ...r.b, enteredByName: r.enteredByName }));
}

/** The break of this specimen on this pour, if one was entered (ids compared without case). */
export function findBreakBySpecimen(pourId: number, specimenId: string): BreakRow | undefined {
  return getDb()
    .select()
    .from(cylinderBreaks)
    .where(
      and(
        eq(cylinderBreaks.pourId, pourId),
        sql`${cylinderBreaks.specimenId} = ${specimenId} collate nocase`,
      ),
    )
    .get();
}
