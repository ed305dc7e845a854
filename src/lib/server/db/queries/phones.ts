import { and, eq, isNotNull } from "drizzle-orm";
import { getDb } from "../client";
import { users } from "../schema";

/**
 * A phone number reduced to its digits with a leading "+" kept, so "+1 (555) 010-0003" and
 * "+15550100003" compare equal. Numbers without a country code stay as typed (digits only).
 */
export function normalisePhone(phone: string): string {
  const trimmed = phone.trim();
  const digits = trimmed.replace(/[^0-9]/g, "");
  return trimmed.startsWith("+") ? `+${digits}` : digits;
}

/**
 * True when a number as the SMS service gives it (international, "+15550100003") is the
 * number a person entered: the same after normalising, or, where the person's number was
 * entered without a country code ("555-010-0003"), its last digits.
 */
export function samePhone(international: string, entered: string): boolean {
  const a = normalisePhone(international);
  const b = normalisePhone(entered);
  if (a === b) return true;
  return !b.startsWith("+") && b.length >= 7 && a.replace("+", "").endsWith(b);
}

/**
 * The active person whose phone number is this one, or undefined. When two people share a
 * number (a shared shift phone) nobody is matched: a reply must not be credited to the
 * wrong person.
 */
export function findActiveUserByPhone(
  phone: string,
): { id: number; email: string; name: string } | undefined {
  const wanted = normalisePhone(phone);
  if (wanted.replace("+", "").length < 5) return undefined;
  const matches = getDb()
    .select({ id: users.id, email: users.email, name: users.name, phone: users.phone })
    .from(users)
    .where(and(eq(users.active, true), isNotNull(users.phone)))
    .all()
    .filter((u) => samePhone(wanted, u.phone!));
  if (matches.length !== 1) return undefined;
  const { id, email, name } = matches[0]!;
  return { id, email, name };
}
