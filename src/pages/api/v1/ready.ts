import type { APIRoute } from "astro";
import { endpoint, requireAction } from "@/lib/server/http/guard";
import { json } from "@/lib/server/http/responses";
import { readyView } from "@/lib/server/strength/ready";

/**
 * What the floor can strip and ship: open pours with their governing strength and strip and ship
 * reached_at / forecast_at, on four lists (ready to strip now, ready to ship now, coming up, and
 * pours whose mix is not calibrated), soonest first.
 */
export const GET: APIRoute = endpoint(async ({ locals }) => {
  requireAction(locals, "plant.read");
  return json(readyView(Date.now()));
});
