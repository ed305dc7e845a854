import type { APIRoute } from "astro";
import { onCallPatchBody } from "@/lib/schemas/onCall";
import {
  deleteShift,
  getRotaShift,
  personWarnings,
  presentShift,
  rotaPersonProblem,
  updateShift,
} from "@/lib/server/db/queries/onCall";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseBody, parseId } from "@/lib/server/http/parse";
import { badRequest, json, noContent, notFound } from "@/lib/server/http/responses";

/** A manager changes any part of a shift; a new person must be active and may acknowledge alerts. */
export const PATCH: APIRoute = endpoint(async (ctx) => {
  requireAction(ctx.locals, "users.manage");
  const id = parseId(ctx.params.id);
  const shift = id === null ? undefined : getRotaShift(id);
  if (!shift) return notFound("on-call shift");
  const parsed = await parseBody(ctx.request, onCallPatchBody);
  if (!parsed.ok) return parsed.response;
  if (parsed.data.user_id !== undefined && parsed.data.user_id !== shift.userId) {
    const problem = rotaPersonProblem(parsed.data.user_id);
    if (problem) return badRequest(problem, [{ field: "user_id", error: problem }]);
  }
  const updated = updateShift(shift, parsed.data, auditActor(ctx));
  return json({ ...presentShift(updated), warnings: personWarnings(updated.user) });
});

/** A manager removes a shift. */
export const DELETE: APIRoute = endpoint(async (ctx) => {
  requireAction(ctx.locals, "users.manage");
  const id = parseId(ctx.params.id);
  const shift = id === null ? undefined : getRotaShift(id);
  if (!shift) return notFound("on-call shift");
  deleteShift(shift, auditActor(ctx));
  return noContent();
});
