import type { APIRoute } from "astro";
import { endpoint, requireAction } from "@/lib/server/http/guard";
import { parseId } from "@/lib/server/http/parse";
import { json, notFound } from "@/lib/server/http/responses";
import { pourStrength } from "@/lib/server/strength/pourStrength";

/**
 * A pour's in-place strength by the maturity method (contract: GET /api/v1/pours/{id}/strength):
 * each sensor's temperature-time factor, equivalent age and strength, the governing sensor,
 * whether the record is complete, and strip and ship thresholds with reached_at / forecast_at.
 */
export const GET: APIRoute = endpoint(async ({ locals, params }) => {
  requireAction(locals, "plant.read");
  const id = parseId(params.id);
  const view = id === null ? undefined : pourStrength(id);
  return view ? json(view) : notFound("pour");
});
