import type { APIRoute } from "astro";
import { writeAudit } from "@/lib/server/db/queries/audit";
import { bus } from "@/lib/server/live/bus";
import { getGateway, publicGateway, revokeGatewayOnce } from "@/lib/server/db/queries/credentials";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseId } from "@/lib/server/http/parse";
import { conflict, json, notFound } from "@/lib/server/http/responses";

/**
 * A manager revokes a gateway: its key stops working at once over HTTP, the broker drops
 * its open connections and refuses the next. The gateway stays in the list, marked revoked.
 */
export const POST: APIRoute = endpoint(async (ctx) => {
  requireAction(ctx.locals, "plant.admin");
  const id = parseId(ctx.params.id);
  const gateway = id === null ? undefined : getGateway(id);
  if (!gateway) return notFound("gateway");
  const revoked = revokeGatewayOnce(gateway.id);
  if (!revoked) return conflict(`The gateway "${gateway.name}" is already revoked.`);
  writeAudit(auditActor(ctx), {
    action: "gateway.revoked",
    entityType: "gateway",
    entityId: revoked.id,
    detail: { name: revoked.name, key_prefix: revoked.keyPrefix },
  });
  bus().emit("gateway", { gatewayId: revoked.id, change: "revoked" });
  return json(publicGateway(revoked));
});
