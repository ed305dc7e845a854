import { asc, eq, sql } from "drizzle-orm";
import type { Role } from "@/lib/access";
import { getDb } from "../client";
import { sessions, users } from "../schema";

export type UserRow = typeof users.$inferSelect;
export type NewUser = typeof users.$inferInsert;

export const normaliseEmail = (email: string) => email.trim().toLowerCase();

export function findUserByEmail(email: string): UserRow | undefined {
  return getDb()
    .select()
    .from(users)
    .where(eq(sql`lower(${users.email})`, normaliseEmail(email)))
    .get();
}

export function getUser(id: number): UserRow | undefined {
  return getDb().select().from(users).where(eq(users.id, id)).get();
}

export function listUsers(): UserRow[] {
  return getDb().select().from(users).orderBy(asc(users.name)).all();
}

export function countUsers(): number {
  return (
    getDb()
      .select({ n: sql<number>`count(*)` })
      .from(users)
      .get()?.n ?? 0
  );
}

export function countActiveManagers(): number {
  return (
    getDb()
      .select({ n: sql<number>`count(*)` })
      .from(users)
      .where(sql`${users.role} = 'manager' and ${users.active} = 1`)
      .get()?.n ?? 0
  );
}

/** Inserts a user; throws on a duplicate e-mail (callers check first for a clear answer). */
export function insertUser(input: {
  email: string;
  name: string;
  role: Role;
  passwordHash: string;
  phone?: string | null;
  mustChangePassword?: boolean;
}): UserRow {
  return getDb()
    .insert(users)
    .values({
      email: normaliseEmail(input.email),
      name: input.name.trim(),
      role: input.role,
      passwordHash: input.passwordHash,
      phone: input.phone ?? null,
      mustChangePassword: input.mustChangePassword ?? false,
      updatedAt: Date.now(),
    })
    .returning()
    .get();
}

export type UserPatch = Partial<
  Pick<
    UserRow,
    | "name"
    | "email"
    | "role"
    | "active"
    | "phone"
    | "units"
    | "theme"
    | "passwordHash"
    | "mustChangePassword"
    | "notifyJson"
    | "lastSignInAt"
  >
>;

export function updateUser(id: number, patch: UserPatch): UserRow | undefined {
  const values = { ...patch, updatedAt: Date.now() };
  if (values.email) values.email = normaliseEmail(values.email);
  return getDb().update(users).set(values).where(eq(users.id, id)).returning().get();
}

/** Ends every session of a user (deactivation, password reset). */
export function deleteSessionsOfUser(userId: number): void {
  getDb().delete(sessions).where(eq(sessions.userId, userId)).run();
}

/** What any API answer may show of a user: never the hash. */
export function publicUser(u: UserRow) {
  return {
    id: u.id,
    email: u.email,
    name: u.name,
    role: u.role,
    active: u.active,
    phone: u.phone,
    units: u.units,
    theme: u.theme,
    must_change_password: u.mustChangePassword,
    created_at: new Date(u.createdAt).toISOString(),
    last_sign_in_at: u.lastSignInAt ? new Date(u.lastSignInAt).toISOString() : null,
  };
}
