import type { APIRoute } from "astro";
import { deletePoint, getMix, getPoint } from "@/lib/server/db/queries/mixes";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseId } from "@/lib/server/http/parse";
import { noContent, notFound } from "@/lib/server/http/responses";

/**
 * QC removes a calibration point (a break entered wrongly). Fits already made keep the points
 * they rested on; the next fit of the stored points leaves it out. The audit keeps what it was.
 */
export const DELETE: APIRoute = endpoint(async (ctx) => {
  requireAction(ctx.locals, "quality.manage");
  const id = parseId(ctx.params.id);
  const pointId = parseId(ctx.params.pointId);
  const mix = id === null ? undefined : getMix(id);
  if (!mix) return notFound("mix");
  const point = pointId === null ? undefined : getPoint(mix.id, pointId);
  if (!point) return notFound("calibration point");
  deletePoint(point, auditActor(ctx), mix.name);
  return noContent();
});
