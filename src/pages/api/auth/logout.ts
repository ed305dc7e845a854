import type { APIRoute } from "astro";
import { clearedSessionCookie, endSession } from "@/lib/server/auth";
import { writeAudit } from "@/lib/server/db/queries/audit";
import { auditActor, endpoint } from "@/lib/server/http/guard";
import { isFormPost } from "@/lib/server/http/parse";
import { noContent } from "@/lib/server/http/responses";

export const POST: APIRoute = endpoint(async (ctx) => {
  const { locals, cookies, url, request } = ctx;
  if (locals.sessionId) {
    await endSession(locals.sessionId);
    writeAudit(auditActor(ctx), {
      action: "auth.signed_out",
      entityType: "user",
      entityId: locals.user?.id,
    });
  }
  const blank = clearedSessionCookie(url);
  cookies.set(blank.name, blank.value, blank.attributes);
  if (isFormPost(request)) {
    return new Response(null, { status: 303, headers: { location: "/login?signed_out=1" } });
  }
  return noContent();
});
