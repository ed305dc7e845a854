import type { APIRoute } from "astro";
import { z } from "zod";
import { listAudit } from "@/lib/server/db/queries/audit";
import { endpoint, requireAction } from "@/lib/server/http/guard";
import { fieldErrors } from "@/lib/server/http/parse";
import { badRequest, json } from "@/lib/server/http/responses";

const auditQuery = z.object({
  action: z.string().max(64).optional(),
  q: z.string().max(200).optional(),
  before_id: z.coerce.number().int().positive().optional(),
  limit: z.coerce.number().int().min(1).max(500).default(100),
});

/** The audit log, newest first, paged with before_id. */
export const GET: APIRoute = endpoint(async ({ locals, url }) => {
  requireAction(locals, "audit.read");
  const parsed = auditQuery.safeParse(Object.fromEntries(url.searchParams));
  if (!parsed.success) return badRequest("Bad query.", fieldErrors(parsed.error));
  const { before_id, ...rest } = parsed.data;
  const rows = listAudit({ ...rest, ...(before_id && { beforeId: before_id }) });
  return json({
    entries: rows.map((r) => ({
      id: r.id,
      at: new Date(r.at).toISOString(),
      actor: r.actorLabel,
      actor_user_id: r.actorUserId,
      action: r.action,
      entity_type: r.entityType,
      entity_id: r.entityId,
      pour_id: r.pourId,
      detail: r.detailJson ? JSON.parse(r.detailJson) : null,
      ip: r.ip,
    })),
    next_before_id: rows.length ? rows[rows.length - 1]!.id : null,
  });
});
