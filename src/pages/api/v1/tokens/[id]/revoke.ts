import type { APIRoute } from "astro";
import { writeAudit } from "@/lib/server/db/queries/audit";
import { getApiToken, publicApiToken, revokeApiToken } from "@/lib/server/db/queries/credentials";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseId } from "@/lib/server/http/parse";
import { conflict, json, notFound } from "@/lib/server/http/responses";

/** A manager revokes an API token: its key is refused from the next request on. */
export const POST: APIRoute = endpoint(async (ctx) => {
  requireAction(ctx.locals, "plant.admin");
  const id = parseId(ctx.params.id);
  const token = id === null ? undefined : getApiToken(id);
  if (!token) return notFound("API token");
  const revoked = revokeApiToken(token.id);
  if (!revoked) return conflict(`The token "${token.name}" is already revoked.`);
  writeAudit(auditActor(ctx), {
    action: "api_token.revoked",
    entityType: "api_token",
    entityId: revoked.id,
    detail: { name: revoked.name, role: revoked.role, key_prefix: revoked.keyPrefix },
  });
  return json(publicApiToken(revoked));
});
