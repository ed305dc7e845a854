/**
 * The one auth module. Everything else asks it for a principal and never touches the
 * session library directly, so the library can be swapped without touching routes.
 */
import { DrizzleSQLiteAdapter } from "@lucia-auth/adapter-drizzle";
import { Lucia, TimeSpan, type Cookie, type Session } from "lucia";
import { createHash, randomBytes } from "node:crypto";
import { and, eq, isNull } from "drizzle-orm";
import type { Role } from "@/lib/access";
import { getDb } from "../db/client";
import { apiTokens, gateways, sessions, users } from "../db/schema";
import { env } from "../env";
import { LoginThrottle } from "./throttle";

export {
  hashPassword,
  verifyPassword,
  verifyAgainstNothing,
  temporaryPassword,
  MIN_PASSWORD_LENGTH,
} from "./passwords";

export const SESSION_COOKIE = "plinth_session";

/** The signed-in person as pages and routes see them. */
export interface SessionUser {
  id: number;
  email: string;
  name: string;
  role: Role;
  units: "us" | "si";
  theme: "system" | "light" | "dark";
  phone: string | null;
  mustChangePassword: boolean;
}

export type Principal =
  | { kind: "user"; user: SessionUser; role: Role }
  | { kind: "token"; tokenId: number; name: string; role: Role }
  | { kind: "gateway"; gatewayId: number; name: string };

declare module "lucia" {
  interface Register {
    Lucia: ReturnType<typeof makeLucia>;
    UserId: number;
    DatabaseUserAttributes: typeof users.$inferSelect;
  }
}

function makeLucia() {
  const adapter = new DrizzleSQLiteAdapter(getDb(), sessions, users);
  return new Lucia(adapter, {
    sessionExpiresIn: new TimeSpan(Math.max(1, Math.round(env().SESSION_DAYS * 86_400)), "s"),
    sessionCookie: {
      name: SESSION_COOKIE,
      expires: true,
      attributes: { sameSite: "lax", secure: false },
    },
    getUserAttributes: (u): Omit<SessionUser, "id"> & { active: boolean } => ({
      email: u.email,
      name: u.name,
      role: u.role,
      units: u.units,
      theme: u.theme,
      phone: u.phone,
      mustChangePassword: u.mustChangePassword,
      active: u.active,
    }),
  });
}

const KEY = Symbol.for("plinth.auth");
const g = globalThis as unknown as {
  [KEY]?: { lucia: ReturnType<typeof makeLucia>; byEmail: LoginThrottle; byAddress: LoginThrottle };
};

/** Failures from one address may be more than from one account (a shared plant PC), to a point. */
const ADDRESS_FAILURE_FACTOR = 5;

function state() {
  if (!g[KEY]) {
    const e = env();
    g[KEY] = {
      lucia: makeLucia(),
      byEmail: new LoginThrottle({
        maxFailures: e.LOGIN_MAX_FAILURES,
        windowMs: e.LOGIN_WINDOW_MINUTES * 60_000,
      }),
      byAddress: new LoginThrottle({
        maxFailures: e.LOGIN_MAX_FAILURES * ADDRESS_FAILURE_FACTOR,
        windowMs: e.LOGIN_WINDOW_MINUTES * 60_000,
      }),
    };
  }
  return g[KEY];
}

/** Sign-in throttling, by account and by client address. */
export const loginThrottle = {
  /** Milliseconds before this account may try again from this address (0: now). */
  wait(email: string, address: string, nowMs: number): number {
    const s = state();
    return Math.max(s.byEmail.wait([email], nowMs), s.byAddress.wait([address], nowMs));
  },
  fail(email: string, address: string, nowMs: number): void {
    const s = state();
    s.byEmail.fail([email], nowMs);
    s.byAddress.fail([address], nowMs);
  },
  succeed(email: string): void {
    state().byEmail.succeed(email);
  },
};

export interface CookieToSet {
  name: string;
  value: string;
  attributes: {
    httpOnly: boolean;
    sameSite: "lax";
    secure: boolean;
    path: string;
    maxAge?: number;
    expires?: Date;
  };
}

/**
 * Secure cookies: always in production, except a plain-http request to this machine's own
 * loopback (the demo); COOKIE_SECURE=true or false overrides.
 */
export function cookieSecure(url: URL): boolean {
  const setting = env().COOKIE_SECURE;
  if (setting !== "auto") return setting === "true";
  if (url.protocol === "https:") return true;
  const loopback = ["localhost", "127.0.0.1", "[::1]"].includes(url.hostname);
  return env().NODE_ENV === "production" && !loopback;
}

function toCookie(c: Cookie, url: URL): CookieToSet {
  return {
    name: c.name,
    value: c.value,
    attributes: {
      httpOnly: true,
      sameSite: "lax",
      secure: cookieSecure(url),
      path: "/",
      ...(c.attributes.maxAge !== undefined ? { maxAge: c.attributes.maxAge } : {}),
      ...(c.attributes.expires ? { expires: c.attributes.expires } : {}),
    },
  };
}

/** Starts a session for a user who has just proved who they are. */
export async function startSession(userId: number, url: URL): Promise<CookieToSet> {
  const lucia = state().lucia;
  const session = await lucia.createSession(userId, {});
  return toCookie(lucia.createSessionCookie(session.id), url);
}

/** A cookie that removes the session cookie. */
export function clearedSessionCookie(url: URL): CookieToSet {
  return toCookie(state().lucia.createBlankSessionCookie(), url);
}

export interface SessionCheck {
  user: SessionUser | null;
  session: Session | null;
  /** A cookie to set: renewed expiry, or a blank one for a dead session. */
  cookie: CookieToSet | null;
}

/**
 * Checks a session id from the cookie. Sessions slide: past half their life, a request
 * renews them. A deactivated user's session ends at once.
 */
export async function checkSession(sessionId: string | undefined, url: URL): Promise<SessionCheck> {
  if (!sessionId) return { user: null, session: null, cookie: null };
  const lucia = state().lucia;
  const { session, user } = await lucia.validateSession(sessionId);
  if (!session || !user) {
    return { user: null, session: null, cookie: clearedSessionCookie(url) };
  }
  if (!user.active) {
    await lucia.invalidateSession(session.id);
    return { user: null, session: null, cookie: clearedSessionCookie(url) };
  }
  const cookie = session.fresh ? toCookie(lucia.createSessionCookie(session.id), url) : null;
  const { active: _active, ...rest } = user;
  return { user: rest, session, cookie };
}

export async function endSession(sessionId: string): Promise<void> {
  await state().lucia.invalidateSession(sessionId);
}

export async function endSessionsOfUser(userId: number): Promise<void> {
  await state().lucia.invalidateUserSessions(userId);
}

/** SHA-256 of a key, hex. Keys are long and random, so a fast hash suffices to store them. */
export function hashKey(key: string): string {
  return createHash("sha256").update(key, "utf8").digest("hex");
}

/** A new random key with a readable prefix, e.g. "plk_3f9c…". */
export function newKey(prefix: "plk" | "plg"): string {
  return `${prefix}_${randomBytes(24).toString("base64url")}`;
}

/**
 * Resolves a bearer key: an API token (acts with its role) or a gateway key (may only send
 * readings). Revoked keys resolve to nothing.
 */
export function principalFromBearer(key: string): Principal | null {
  const h = hashKey(key);
  const db = getDb();
  const token = db
    .select()
    .from(apiTokens)
    .where(and(eq(apiTokens.keyHash, h), isNull(apiTokens.revokedAt)))
    .get();
  if (token) {
    db.update(apiTokens).set({ lastUsedAt: Date.now() }).where(eq(apiTokens.id, token.id)).run();
    return { kind: "token", tokenId: token.id, name: token.name, role: token.role };
  }
  const gateway = db
    .select()
    .from(gateways)
    .where(and(eq(gateways.keyHash, h), isNull(gateways.revokedAt)))
    .get();
  if (gateway) return { kind: "gateway", gatewayId: gateway.id, name: gateway.name };
  return null;
}
