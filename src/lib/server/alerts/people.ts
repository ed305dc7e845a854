/** The plant's people as the alert engine sees them: how each wants to be told, and who is on call. */
import { eq } from "drizzle-orm";
import type { Person } from "@/domain/alerts/recipients";
import { readNotifyChoices } from "@/lib/notifyChoices";
import { getDb } from "../db/client";
import { onCallNow } from "../db/queries/onCall";
import { users } from "../db/schema";

/** Every active person with their channels and units. */
export function staff(): Person[] {
  return getDb()
    .select()
    .from(users)
    .where(eq(users.active, true))
    .all()
    .map((u) => {
      const notify = readNotifyChoices(u.notifyJson, u.role);
      return {
        id: u.id,
        name: u.name,
        role: u.role,
        email: u.email,
        phone: u.phone?.trim() ? u.phone.trim() : null,
        wantsSms: notify.sms,
        wantsEmail: notify.email,
        wantsDigest: notify.digest,
        units: u.units,
      };
    });
}

/** Who is on call at `nowMs`, in telling order, as people from `everyone`. */
export function onCallPeople(nowMs: number, everyone: readonly Person[]): Person[] {
  const byId = new Map(everyone.map((p) => [p.id, p]));
  return onCallNow(nowMs)
    .onCall.map((s) => byId.get(s.userId))
    .filter((p): p is Person => p !== undefined);
}
