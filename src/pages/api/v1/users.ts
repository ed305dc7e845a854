import type { APIRoute } from "astro";
import { userCreateBody } from "@/lib/schemas/users";
import { hashPassword, temporaryPassword } from "@/lib/server/auth";
import { writeAudit } from "@/lib/server/db/queries/audit";
import { findUserByEmail, insertUser, listUsers, publicUser } from "@/lib/server/db/queries/users";
import { auditActor, endpoint, requireUser } from "@/lib/server/http/guard";
import { parseBody } from "@/lib/server/http/parse";
import { conflict, json } from "@/lib/server/http/responses";

export const GET: APIRoute = endpoint(async ({ locals }) => {
  requireUser(locals, "users.manage");
  return json({ users: listUsers().map(publicUser) });
});

/** Adds a person. Without a password, a one-time password is made, answered once, and must be changed at first sign-in. */
export const POST: APIRoute = endpoint(async (ctx) => {
  requireUser(ctx.locals, "users.manage");
  const parsed = await parseBody(ctx.request, userCreateBody);
  if (!parsed.ok) return parsed.response;
  const body = parsed.data;
  if (findUserByEmail(body.email)) return conflict("An account with that e-mail already exists.");
  const oneTime = body.password ? null : temporaryPassword();
  const user = insertUser({
    email: body.email,
    name: body.name,
    role: body.role,
    phone: body.phone ?? null,
    passwordHash: await hashPassword(body.password ?? oneTime!),
    mustChangePassword: oneTime !== null,
  });
  writeAudit(auditActor(ctx), {
    action: "user.created",
    entityType: "user",
    entityId: user.id,
    detail: { email: user.email, role: user.role },
  });
  return json({ ...publicUser(user), ...(oneTime && { temporary_password: oneTime }) }, 201);
});
