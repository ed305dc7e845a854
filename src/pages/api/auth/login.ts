import type { APIRoute } from "astro";
import { z } from "zod";
import { findUserByEmail, normaliseEmail, updateUser } from "@/lib/server/db/queries/users";
import { writeAudit } from "@/lib/server/db/queries/audit";
import {
  loginThrottle,
  startSession,
  verifyAgainstNothing,
  verifyPassword,
} from "@/lib/server/auth";
import { endpoint, auditActor } from "@/lib/server/http/guard";
import { isFormPost, parseBody } from "@/lib/server/http/parse";
import { json, problem, tooManyRequests } from "@/lib/server/http/responses";

const loginBody = z.object({
  email: z.string().trim().min(1).max(254),
  password: z.string().min(1).max(1024),
  next: z.string().max(2048).optional(),
});

/** Only a path on this site may be the destination after sign-in. */
const safeNext = (next: string | undefined) =>
  next && next.startsWith("/") && !next.startsWith("//") ? next : "/";

export const POST: APIRoute = endpoint(async (ctx) => {
  const { request, url, cookies } = ctx;
  const form = isFormPost(request);
  const back = (params: Record<string, string>) =>
    new Response(null, {
      status: 303,
      headers: { location: `/login?${new URLSearchParams(params)}` },
    });

  const parsed = await parseBody(request, loginBody, { limitBytes: 16 * 1024 });
  if (!parsed.ok) return form ? back({ error: "missing" }) : parsed.response;
  const { email, password, next } = parsed.data;
  const normalised = normaliseEmail(email);
  const actor = auditActor(ctx);
  const address = actor.ip ?? "unknown";
  const now = Date.now();

  const waitMs = loginThrottle.wait(normalised, address, now);
  if (waitMs > 0) {
    writeAudit(
      { ...actor, label: normalised },
      { action: "auth.throttled", entityType: "user", entityId: normalised },
    );
    const retryS = Math.ceil(waitMs / 1000);
    if (form) {
      const res = back({ error: "throttled", retry: String(retryS), email: normalised });
      res.headers.set("retry-after", String(retryS));
      return res;
    }
    return tooManyRequests(retryS, `Too many failed sign-ins. Try again in ${retryS} s.`);
  }

  const user = findUserByEmail(normalised);
  const ok =
    user && user.active
      ? await verifyPassword(user.passwordHash, password)
      : await verifyAgainstNothing(password);
  if (!user || !ok) {
    loginThrottle.fail(normalised, address, now);
    writeAudit(
      { ...actor, label: normalised },
      {
        action: "auth.sign_in_failed",
        entityType: "user",
        entityId: user?.id ?? normalised,
        detail: { reason: !user ? "unknown" : !user.active ? "inactive" : "password" },
      },
    );
    if (form) return back({ error: "invalid", email: normalised, next: safeNext(next) });
    return problem(
      401,
      "invalid-credentials",
      "Sign-in failed",
      "That e-mail and password do not match an active account.",
    );
  }

  loginThrottle.succeed(normalised);
  const cookie = await startSession(user.id, url);
  cookies.set(cookie.name, cookie.value, cookie.attributes);
  updateUser(user.id, { lastSignInAt: now });
  writeAudit(
    { userId: user.id, label: user.email, ip: actor.ip },
    { action: "auth.signed_in", entityType: "user", entityId: user.id },
  );

  const destination = user.mustChangePassword ? "/account?must=1" : safeNext(next);
  if (form) return new Response(null, { status: 303, headers: { location: destination } });
  return json({
    user: { id: user.id, email: user.email, name: user.name, role: user.role },
    must_change_password: user.mustChangePassword,
  });
});
