import { asc, eq, inArray } from "drizzle-orm";
import type { PourStatus, ReleaseKind } from "@/domain/release";
import { getDb } from "../client";
import { pours, releases, users } from "../schema";

export type ReleaseRow = typeof releases.$inferSelect;
export type NewRelease = Omit<typeof releases.$inferInsert, "id">;

/** A release with the name and e-mail of who signed it. */
export interface ReleaseWithPerson extends ReleaseRow {
  releasedByName: string;
  releasedByEmail: string;
}

const withPerson = {
  release: releases,
  name: users.name,
  email: users.email,
};

const flatten = (r: { release: ReleaseRow; name: string; email: string }): ReleaseWithPerson => ({
  ...r.release,
  releasedByName: r.name,
  releasedByEmail: r.email,
});

/** A pour's releases, oldest first. */
export function listReleases(pourId: number): ReleaseWithPerson[] {
  return getDb()
    .select(withPerson)
    .from(releases)
    .innerJoin(users, eq(users.id, releases.releasedBy))
    .where(eq(releases.pourId, pourId))
    .orderBy(asc(releases.releasedAt), asc(releases.id))
    .all()
    .map(flatten);
}

/** The releases of several pours, grouped by pour, oldest first. */
export function listReleasesOfPours(pourIds: readonly number[]): Map<number, ReleaseWithPerson[]> {
  const out = new Map<number, ReleaseWithPerson[]>();
  if (pourIds.length === 0) return out;
  const rows = getDb()
    .select(withPerson)
    .from(releases)
    .innerJoin(users, eq(users.id, releases.releasedBy))
    .where(inArray(releases.pourId, [...pourIds]))
    .orderBy(asc(releases.releasedAt), asc(releases.id))
    .all();
  for (const r of rows) {
    const list = out.get(r.release.pourId) ?? [];
    list.push(flatten(r));
    out.set(r.release.pourId, list);
  }
  return out;
}

/**
 * Records a release and moves the pour to `nextStatus` in one transaction. `stillAllowed` runs
 * inside the transaction with the pour's release kinds as they are then, so two sign-offs of the
 * same kind cannot both land; when it answers false nothing is written and null is returned.
 */
export function insertRelease(
  row: NewRelease,
  nextStatus: PourStatus,
  stillAllowed: (releasedKinds: ReleaseKind[]) => boolean,
): ReleaseWithPerson | null {
  const db = getDb();
  const id = db.transaction((tx) => {
    const kinds = tx
      .select({ kind: releases.kind })
      .from(releases)
      .where(eq(releases.pourId, row.pourId))
      .all()
      .map((r) => r.kind);
    if (!stillAllowed(kinds)) return null;
    const inserted = tx.insert(releases).values(row).returning({ id: releases.id }).get();
    const pour = tx
      .select({ status: pours.status })
      .from(pours)
      .where(eq(pours.id, row.pourId))
      .get();
    if (pour && pour.status !== nextStatus) {
      tx.update(pours)
        .set({
          status: nextStatus,
          updatedAt: row.releasedAt,
          ...(row.kind === "strip" && nextStatus === "stripped"
            ? { strippedAt: row.releasedAt }
            : {}),
        })
        .where(eq(pours.id, row.pourId))
        .run();
    }
    return inserted.id;
  });
  if (id === null) return null;
  return getRelease(id) ?? null;
}

export function getRelease(id: number): ReleaseWithPerson | undefined {
  const r = getDb()
    .select(withPerson)
    .from(releases)
    .innerJoin(users, eq(users.id, releases.releasedBy))
    .where(eq(releases.id, id))
    .get();
  return r ? flatten(r) : undefined;
}
