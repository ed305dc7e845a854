import type { APIRoute } from "astro";
import { passwordChangeBody } from "@/lib/schemas/users";
import { endSessionsOfUser, hashPassword, startSession, verifyPassword } from "@/lib/server/auth";
import { writeAudit } from "@/lib/server/db/queries/audit";
import { getUser, updateUser } from "@/lib/server/db/queries/users";
import { auditActor, endpoint, requireUser } from "@/lib/server/http/guard";
import { parseBody } from "@/lib/server/http/parse";
import { badRequest, noContent } from "@/lib/server/http/responses";

/** Changes one's own password; other sessions end, this one is renewed. */
export const POST: APIRoute = endpoint(async (ctx) => {
  const me = requireUser(ctx.locals, "self.manage");
  const parsed = await parseBody(ctx.request, passwordChangeBody);
  if (!parsed.ok) return parsed.response;
  const user = getUser(me.id)!;
  if (!(await verifyPassword(user.passwordHash, parsed.data.current_password))) {
    return badRequest("The current password is not right.", [
      { field: "current_password", error: "Not your current password" },
    ]);
  }
  if (parsed.data.new_password === parsed.data.current_password) {
    return badRequest("Choose a new password.", [
      { field: "new_password", error: "Same as the current password" },
    ]);
  }
  updateUser(me.id, {
    passwordHash: await hashPassword(parsed.data.new_password),
    mustChangePassword: false,
  });
  await endSessionsOfUser(me.id);
  const cookie = await startSession(me.id, ctx.url);
  ctx.cookies.set(cookie.name, cookie.value, cookie.attributes);
  writeAudit(auditActor(ctx), {
    action: "user.password_changed",
    entityType: "user",
    entityId: me.id,
  });
  return noContent();
});
