import type { APIContext, APIRoute } from "astro";
import { can, type Action } from "@/lib/access";
import type { Principal } from "../auth";
import { log } from "../log";
import { forbidden, serverError, unauthorized } from "./responses";

/** Thrown inside a route to answer at once with a prepared response. */
export class HttpError extends Error {
  constructor(readonly response: Response) {
    super(`HTTP ${response.status}`);
  }
}

type HumanOrScript = Extract<Principal, { kind: "user" | "token" }>;

/**
 * The caller, if their role may take the action (the same table the middleware reads);
 * otherwise throws 401 (nobody) or 403 (a role, or a gateway, that may not).
 */
export function requireAction(locals: App.Locals, action: Action): HumanOrScript {
  const p = locals.principal;
  if (!p) throw new HttpError(unauthorized());
  if (p.kind === "gateway") throw new HttpError(forbidden("Gateway keys may only send readings."));
  if (!can(p.role, action)) throw new HttpError(forbidden());
  return p;
}

/** Like requireAction, for routes only a signed-in person (not a script) may use. */
export function requireUser(locals: App.Locals, action: Action) {
  const p = requireAction(locals, action);
  if (p.kind !== "user") throw new HttpError(forbidden("Sign in as a person to do this."));
  return p.user;
}

/** The calling gateway, or 401/403 for anyone else. */
export function requireGateway(locals: App.Locals): Extract<Principal, { kind: "gateway" }> {
  const p = locals.principal;
  if (!p) throw new HttpError(unauthorized("Send the gateway's key as a bearer token."));
  if (p.kind !== "gateway")
    throw new HttpError(forbidden("Only a gateway's key may send readings here."));
  return p;
}

/** The actor to write in the audit log for this caller. */
export function auditActor(ctx: Pick<APIContext, "locals" | "clientAddress">) {
  const p = ctx.locals.principal;
  let ip: string | null = null;
  try {
    ip = ctx.clientAddress;
  } catch {
    ip = null;
  }
  if (!p) return { userId: null, label: "anonymous", ip };
  if (p.kind === "user") return { userId: p.user.id, label: p.user.email, ip };
  if (p.kind === "token") return { userId: null, label: `token:${p.name}`, ip };
  return { userId: null, label: `gateway:${p.name}`, ip };
}

/**
 * Wraps an endpoint: an HttpError becomes its response; anything else is logged with
 * the request id and answered 500 without the exception's text.
 */
export function endpoint(handler: APIRoute): APIRoute {
  return async (ctx) => {
    try {
      return await handler(ctx);
    } catch (err) {
      if (err instanceof HttpError) return err.response;
      log.error("route failed", { requestId: ctx.locals.requestId, path: ctx.url.pathname, err });
      return serverError(ctx.locals.requestId);
    }
  };
}
