/**
 * Keys that reach the API: API tokens for scripts, and gateways looked up by id. Only a
 * SHA-256 of a key is stored, with a short prefix to tell keys apart in a list.
 */
import { and, asc, eq, isNull } from "drizzle-orm";
import type { Role } from "@/lib/access";
import { getDb } from "../client";
import { apiTokens, gateways } from "../schema";

export type ApiTokenRow = typeof apiTokens.$inferSelect;
export type GatewayRow = typeof gateways.$inferSelect;

/** Characters of a key kept for display: the kind ("plg_" or "plk_") and eight more. */
export const KEY_PREFIX_LENGTH = 12;

export function keyPrefixOf(key: string): string {
  return key.slice(0, KEY_PREFIX_LENGTH);
}

export function getGateway(id: number): GatewayRow | undefined {
  return getDb().select().from(gateways).where(eq(gateways.id, id)).get();
}

/** Every API token, revoked ones too, oldest first. */
export function listApiTokens(): ApiTokenRow[] {
  return getDb()
    .select()
    .from(apiTokens)
    .orderBy(asc(apiTokens.createdAt), asc(apiTokens.id))
    .all();
}

export function getApiToken(id: number): ApiTokenRow | undefined {
  return getDb().select().from(apiTokens).where(eq(apiTokens.id, id)).get();
}

/** A token in use (not revoked) with this name, if any: names tell tokens apart in the audit log. */
export function findActiveApiTokenByName(name: string): ApiTokenRow | undefined {
  return getDb()
    .select()
    .from(apiTokens)
    .where(and(eq(apiTokens.name, name), isNull(apiTokens.revokedAt)))
    .get();
}

export function insertApiToken(input: {
  name: string;
  role: Role;
  keyHash: string;
  keyPrefix: string;
  createdBy: number | null;
}): ApiTokenRow {
  return getDb().insert(apiTokens).values(input).returning().get();
}

/** Revokes a token that is still in use; undefined when it was already revoked or never existed. */
export function revokeApiToken(id: number, atMs = Date.now()): ApiTokenRow | undefined {
  return getDb()
    .update(apiTokens)
    .set({ revokedAt: atMs })
    .where(and(eq(apiTokens.id, id), isNull(apiTokens.revokedAt)))
    .returning()
    .get();
}

/** Revokes a gateway that is still in use; undefined when it was already revoked or never existed. */
export function revokeGatewayOnce(id: number, atMs = Date.now()): GatewayRow | undefined {
  return getDb()
    .update(gateways)
    .set({ revokedAt: atMs })
    .where(and(eq(gateways.id, id), isNull(gateways.revokedAt)))
    .returning()
    .get();
}

const iso = (ms: number | null) => (ms === null ? null : new Date(ms).toISOString());

/** What any answer may show of a gateway: its key's prefix, never the key or its hash. */
export function publicGateway(g: GatewayRow) {
  return {
    id: g.id,
    name: g.name,
    key_prefix: g.keyPrefix,
    created_at: iso(g.createdAt)!,
    last_used_at: iso(g.lastUsedAt),
    revoked_at: iso(g.revokedAt),
  };
}

/** What any answer may show of an API token: its key's prefix, never the key or its hash. */
export function publicApiToken(t: ApiTokenRow) {
  return {
    id: t.id,
    name: t.name,
    role: t.role,
    key_prefix: t.keyPrefix,
    created_at: iso(t.createdAt)!,
    last_used_at: iso(t.lastUsedAt),
    revoked_at: iso(t.revokedAt),
  };
}

export type PublicGateway = ReturnType<typeof publicGateway>;
export type PublicApiToken = ReturnType<typeof publicApiToken>;
