import type { APIRoute } from "astro";
import { endSessionsOfUser, hashPassword, temporaryPassword } from "@/lib/server/auth";
import { writeAudit } from "@/lib/server/db/queries/audit";
import { getUser, updateUser } from "@/lib/server/db/queries/users";
import { auditActor, endpoint, requireUser } from "@/lib/server/http/guard";
import { parseId } from "@/lib/server/http/parse";
import { json, notFound } from "@/lib/server/http/responses";

/** Sets a one-time password (answered once), ends the person's sessions, and asks for a new one at sign-in. */
export const POST: APIRoute = endpoint(async (ctx) => {
  requireUser(ctx.locals, "users.manage");
  const id = parseId(ctx.params.id);
  const target = id === null ? undefined : getUser(id);
  if (!target) return notFound("user");
  const oneTime = temporaryPassword();
  updateUser(target.id, { passwordHash: await hashPassword(oneTime), mustChangePassword: true });
  await endSessionsOfUser(target.id);
  writeAudit(auditActor(ctx), {
    action: "user.password_reset",
    entityType: "user",
    entityId: target.id,
    detail: { email: target.email },
  });
  return json({ id: target.id, temporary_password: oneTime });
});
