import type { APIRoute } from "astro";
import { tokenCreateBody } from "@/lib/schemas/keys";
import { hashKey, newKey } from "@/lib/server/auth";
import { writeAudit } from "@/lib/server/db/queries/audit";
import {
  findActiveApiTokenByName,
  insertApiToken,
  keyPrefixOf,
  listApiTokens,
  publicApiToken,
} from "@/lib/server/db/queries/credentials";
import { auditActor, endpoint, requireAction, requireUser } from "@/lib/server/http/guard";
import { parseBody } from "@/lib/server/http/parse";
import { conflict, json } from "@/lib/server/http/responses";

/** Every API token, revoked ones too, with its key's prefix (never the key). */
export const GET: APIRoute = endpoint(async ({ locals }) => {
  requireAction(locals, "plant.admin");
  return json({ tokens: listApiTokens().map(publicApiToken) });
});

/**
 * A manager makes a key for a script: {"name", "role"} -> 201 {"id", "name", "role", "key"},
 * the key answered only this once. Only a signed-in person may make one, so a token that
 * leaks cannot mint itself successors.
 */
export const POST: APIRoute = endpoint(async (ctx) => {
  const user = requireUser(ctx.locals, "plant.admin");
  const parsed = await parseBody(ctx.request, tokenCreateBody);
  if (!parsed.ok) return parsed.response;
  const { name, role } = parsed.data;
  if (findActiveApiTokenByName(name)) {
    return conflict(
      `A token named "${name}" is already in use; choose another name or revoke it first.`,
    );
  }
  const key = newKey("plk");
  const token = insertApiToken({
    name,
    role,
    keyHash: hashKey(key),
    keyPrefix: keyPrefixOf(key),
    createdBy: user.id,
  });
  writeAudit(auditActor(ctx), {
    action: "api_token.created",
    entityType: "api_token",
    entityId: token.id,
    detail: { name, role, key_prefix: token.keyPrefix },
  });
  return json({ id: token.id, name: token.name, role: token.role, key }, 201);
});
