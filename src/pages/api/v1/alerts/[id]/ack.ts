import type { APIRoute } from "astro";
import { alertAckBody } from "@/lib/schemas/alerts";
import { acknowledgeEpisode } from "@/lib/server/db/queries/alerts";
import { auditActor, endpoint, requireUser } from "@/lib/server/http/guard";
import { parseBody, parseId } from "@/lib/server/http/parse";
import { conflict, json, notFound } from "@/lib/server/http/responses";
import { bus } from "@/lib/server/live/bus";
import { presentEpisode } from "@/lib/server/present/alerts";

/**
 * An operator (or QC, or a manager) acknowledges an episode with a note of what was done.
 * An open episode becomes acknowledged and stops escalating; one that already cleared keeps
 * its state and gains the note; a second acknowledgement is refused (409).
 */
export const POST: APIRoute = endpoint(async (ctx) => {
  const user = requireUser(ctx.locals, "floor.operate");
  const id = parseId(ctx.params.id);
  if (id === null) return notFound("alert");
  const parsed = await parseBody(ctx.request, alertAckBody);
  if (!parsed.ok) return parsed.response;
  const actor = auditActor(ctx);
  const result = acknowledgeEpisode({
    episodeId: id,
    userId: user.id,
    actorLabel: actor.label,
    note: parsed.data.note,
    via: "web",
    atMs: Date.now(),
    ip: actor.ip,
  });
  if (!result.ok) {
    if (result.reason === "not_found") return notFound("alert");
    const by = result.episode?.acknowledgedByName ?? "someone";
    return conflict(`This alert was already acknowledged by ${by}.`);
  }
  const e = result.episode;
  bus().emit("alert", {
    episodeId: e.id,
    change: "acknowledged",
    state: e.state,
    ruleId: e.ruleId,
    sensorId: e.sensorId,
    pourId: e.pourId,
    severity: e.severity,
  });
  return json(presentEpisode(e));
});
