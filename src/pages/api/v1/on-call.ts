import type { APIRoute } from "astro";
import { instantField } from "@/lib/schemas/calibrations";
import { onCallCreateBody } from "@/lib/schemas/onCall";
import {
  createShift,
  personWarnings,
  presentRota,
  presentShift,
  rotaPersonProblem,
} from "@/lib/server/db/queries/onCall";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseBody } from "@/lib/server/http/parse";
import { badRequest, json } from "@/lib/server/http/responses";

/**
 * The rota: who is on call now (told first, then each escalation) and until when, every
 * shift, and what a manager should fix. `?at=` (ISO 8601 or epoch ms) asks about another
 * moment. Phone numbers are never in the answer, only whether one is set.
 */
export const GET: APIRoute = endpoint(async ({ locals, url }) => {
  requireAction(locals, "plant.read");
  const atParam = url.searchParams.get("at");
  let atMs = Date.now();
  if (atParam !== null) {
    const at = instantField.safeParse(/^[0-9]+$/.test(atParam) ? Number(atParam) : atParam);
    if (!at.success)
      return badRequest("`at` is not a time.", [
        { field: "at", error: at.error.issues[0]!.message },
      ]);
    atMs = at.data;
  }
  return json(presentRota(atMs));
});

/** A manager adds a shift. The person must be active and allowed to acknowledge alerts. */
export const POST: APIRoute = endpoint(async (ctx) => {
  requireAction(ctx.locals, "users.manage");
  const parsed = await parseBody(ctx.request, onCallCreateBody);
  if (!parsed.ok) return parsed.response;
  const problem = rotaPersonProblem(parsed.data.user_id);
  if (problem) return badRequest(problem, [{ field: "user_id", error: problem }]);
  const shift = createShift(parsed.data, auditActor(ctx));
  return json({ ...presentShift(shift), warnings: personWarnings(shift.user) }, 201);
});
