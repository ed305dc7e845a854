import type { APIRoute } from "astro";
import { alertListQuery } from "@/lib/schemas/alerts";
import { listEpisodes } from "@/lib/server/db/queries/alerts";
import { endpoint, requireAction } from "@/lib/server/http/guard";
import { fieldErrors } from "@/lib/server/http/parse";
import { badRequest, json } from "@/lib/server/http/responses";
import { presentEpisode } from "@/lib/server/present/alerts";

/** Alert episodes, newest first: `?state=open` for what still needs someone, and other filters. */
export const GET: APIRoute = endpoint(async ({ locals, url }) => {
  requireAction(locals, "plant.read");
  const parsed = alertListQuery.safeParse(Object.fromEntries(url.searchParams));
  if (!parsed.success) return badRequest("Bad query.", fieldErrors(parsed.error));
  const q = parsed.data;
  const rows = listEpisodes({
    ...(q.state && { state: q.state }),
    ...(q.sensor && { sensorId: q.sensor }),
    ...(q.pour_id !== undefined && { pourId: q.pour_id }),
    ...(q.rule_id !== undefined && { ruleId: q.rule_id }),
    ...(q.severity && { severity: q.severity }),
    ...(q.since !== undefined && { sinceMs: q.since }),
    ...(q.before_id !== undefined && { beforeId: q.before_id }),
    ...(q.limit !== undefined && { limit: q.limit }),
  });
  return json(rows.map(presentEpisode));
});
