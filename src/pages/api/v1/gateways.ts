import type { APIRoute } from "astro";
import { gatewayCreateBody } from "@/lib/schemas/keys";
import { hashKey, newKey } from "@/lib/server/auth";
import { writeAudit } from "@/lib/server/db/queries/audit";
import { keyPrefixOf, publicGateway } from "@/lib/server/db/queries/credentials";
import { findGatewayByName, insertGateway, listGateways } from "@/lib/server/db/queries/gateways";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseBody } from "@/lib/server/http/parse";
import { conflict, json } from "@/lib/server/http/responses";

/** Every gateway, revoked ones too, with its key's prefix (never the key). */
export const GET: APIRoute = endpoint(async ({ locals }) => {
  requireAction(locals, "plant.admin");
  return json({ gateways: listGateways().map(publicGateway) });
});

/**
 * A manager adds a gateway: {"name"} -> 201 {"id", "name", "key"}. The key is answered only
 * this once; Plinth keeps its hash and a prefix. The name is also the gateway's MQTT user name.
 */
export const POST: APIRoute = endpoint(async (ctx) => {
  const caller = requireAction(ctx.locals, "plant.admin");
  const parsed = await parseBody(ctx.request, gatewayCreateBody);
  if (!parsed.ok) return parsed.response;
  const { name } = parsed.data;
  if (findGatewayByName(name)) {
    return conflict(`A gateway named "${name}" already exists (a revoked gateway keeps its name).`);
  }
  const key = newKey("plg");
  const gateway = insertGateway({
    name,
    keyHash: hashKey(key),
    keyPrefix: keyPrefixOf(key),
    createdBy: caller.kind === "user" ? caller.user.id : null,
  });
  writeAudit(auditActor(ctx), {
    action: "gateway.created",
    entityType: "gateway",
    entityId: gateway.id,
    detail: { name, key_prefix: gateway.keyPrefix },
  });
  return json({ id: gateway.id, name: gateway.name, key }, 201);
});
