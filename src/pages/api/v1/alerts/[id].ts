import type { APIRoute } from "astro";
import { episodeAudit, episodeNotices, getEpisode } from "@/lib/server/db/queries/alerts";
import { endpoint, requireAction } from "@/lib/server/http/guard";
import { parseId } from "@/lib/server/http/parse";
import { json, notFound } from "@/lib/server/http/responses";
import { presentEpisode } from "@/lib/server/present/alerts";
import { can } from "@/lib/access";

const iso = (ms: number | null) => (ms === null ? null : new Date(ms).toISOString());

/**
 * One episode with its story: every notice sent about it (who, how, when, and whether the
 * provider took it) and every audit entry. Addresses are shown to those who manage people.
 */
export const GET: APIRoute = endpoint(async ({ locals, params }) => {
  const who = requireAction(locals, "plant.read");
  const id = parseId(params.id);
  const ep = id === null ? undefined : getEpisode(id);
  if (!ep) return notFound("alert");
  const showAddresses = can(who.role, "users.manage");
  return json({
    ...presentEpisode(ep),
    notices: episodeNotices(ep.id).map((n) => ({
      id: n.id,
      channel: n.channel,
      to: showAddresses ? n.toAddress : null,
      user: n.userName,
      reason: n.reason,
      status: n.status,
      attempts: n.attempts,
      // A provider's refusal may quote the address: for those who manage people only.
      last_error: showAddresses ? n.lastError : n.lastError ? "not accepted by the provider" : null,
      queued_at: new Date(n.createdAt).toISOString(),
      sent_at: iso(n.sentAt),
    })),
    audit: episodeAudit(ep.id).map((a) => ({
      at: new Date(a.at).toISOString(),
      actor: a.actorLabel,
      action: a.action,
      detail: a.detailJson ? JSON.parse(a.detailJson) : null,
    })),
  });
});
