import { defineMiddleware } from "astro:middleware";
import { can, findRouteAccess, requirementFor } from "@/lib/access";
import {
  SESSION_COOKIE,
  checkSession,
  principalFromBearer,
  type CookieToSet,
} from "@/lib/server/auth";
import { forbidden, unauthorized } from "@/lib/server/http/responses";

const UNSAFE = new Set(["POST", "PUT", "PATCH", "DELETE"]);

/**
 * A state-changing request carried by a session cookie must come from Plinth's own pages.
 * Browsers send Origin on every such request (and Sec-Fetch-Site where supported); a
 * script without either, using its cookie on purpose, is let through.
 */
function crossSite(request: Request, url: URL): boolean {
  const origin = request.headers.get("origin");
  if (origin && origin !== "null") return origin !== url.origin;
  if (origin === "null") return true;
  const site = request.headers.get("sec-fetch-site");
  return site === "cross-site" || site === "same-site";
}

/** Content types a plain HTML form can send (and so a hostile page, without asking). */
function isFormLike(request: Request): boolean {
  const type = (request.headers.get("content-type") ?? "").toLowerCase();
  return (
    type === "" ||
    type.startsWith("application/x-www-form-urlencoded") ||
    type.startsWith("multipart/form-data") ||
    type.startsWith("text/plain")
  );
}

function withSecurityHeaders(res: Response): Response {
  try {
    res.headers.set("x-content-type-options", "nosniff");
    res.headers.set("referrer-policy", "same-origin");
    res.headers.set("x-frame-options", "DENY");
  } catch {
    // Some responses (redirects made by Astro) have immutable headers; leave them be.
  }
  return res;
}

export const onRequest = defineMiddleware(async (ctx, next) => {
  const { request, url, locals, cookies } = ctx;
  locals.requestId ??= crypto.randomUUID().slice(0, 8);
  locals.principal = null;
  locals.user = null;
  locals.sessionId = null;

  const access = findRouteAccess(url.pathname);
  const isApi = url.pathname.startsWith("/api/");
  const setCookie = (c: CookieToSet) => cookies.set(c.name, c.value, c.attributes);

  // Who is calling: a bearer key (scripts, gateways) or a session cookie (people).
  const authz = request.headers.get("authorization");
  let viaCookie = false;
  if (authz) {
    const m = /^Bearer\s+(\S{8,512})$/i.exec(authz);
    locals.principal = m ? principalFromBearer(m[1]!) : null;
    if (
      !locals.principal &&
      isApi &&
      access &&
      requirementFor(access, request.method) !== "public"
    ) {
      return withSecurityHeaders(unauthorized("The key is not valid, or has been revoked."));
    }
  } else {
    const check = await checkSession(cookies.get(SESSION_COOKIE)?.value, url);
    if (check.cookie) setCookie(check.cookie);
    if (check.user && check.session) {
      locals.user = check.user;
      locals.sessionId = check.session.id;
      locals.principal = { kind: "user", user: check.user, role: check.user.role };
      viaCookie = true;
    }
  }

  if (UNSAFE.has(request.method) && !access?.webhook) {
    // A form post (what a hostile page can make a browser send) must come from Plinth's own
    // origin; so must any change carried by a session cookie. A request with a bearer key
    // cannot be forged by a page (browsers never add one by themselves).
    const originOk = request.headers.get("origin") === url.origin;
    const withSession = viaCookie || cookies.has(SESSION_COOKIE);
    const formForgeable = !authz && isFormLike(request) && !originOk;
    if (formForgeable || (withSession && crossSite(request, url))) {
      return withSecurityHeaders(forbidden("Cross-site requests are refused."));
    }
  }

  if (!access) return withSecurityHeaders(await next());
  const need = requirementFor(access, request.method);
  if (!need || need === "public") {
    if (access.route === "/login" && locals.user) return ctx.redirect("/", 302);
    return withSecurityHeaders(await next());
  }

  const p = locals.principal;
  const isPage = access.kind === "page";
  if (!p || (isPage && p.kind !== "user")) {
    if (isPage) {
      const back = url.pathname + url.search;
      return ctx.redirect(back === "/" ? "/login" : `/login?next=${encodeURIComponent(back)}`, 302);
    }
    return withSecurityHeaders(unauthorized());
  }
  if (need === "gateway") {
    if (p.kind !== "gateway")
      return withSecurityHeaders(forbidden("Only a gateway's key may send readings here."));
    return withSecurityHeaders(await next());
  }
  if (p.kind === "gateway") {
    return withSecurityHeaders(forbidden("Gateway keys may only send readings."));
  }
  if (need !== "session" && !can(p.role, need)) {
    if (isPage) return ctx.rewrite("/forbidden");
    return withSecurityHeaders(forbidden());
  }
  // A password set by a manager must be replaced before anything else.
  if (isPage && locals.user?.mustChangePassword && access.route !== "/account") {
    return ctx.redirect("/account?must=1", 302);
  }
  return withSecurityHeaders(await next());
});
