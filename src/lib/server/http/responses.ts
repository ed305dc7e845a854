/**
 * Every answer an API route gives, errors as RFC 9457 problem details
 * (application/problem+json with type, title, status, detail and, where it helps, errors).
 */

export interface FieldError {
  /** The offending field ("email", "readings.3.ts") or item index. */
  field?: string;
  index?: number;
  error: string;
}

const PROBLEM_BASE = "https://plinth.invalid/problems/";

export function json(body: unknown, status = 200, headers: HeadersInit = {}): Response {
  return new Response(JSON.stringify(body), {
    status,
    headers: { "content-type": "application/json; charset=utf-8", ...headers },
  });
}

export function noContent(headers: HeadersInit = {}): Response {
  return new Response(null, { status: 204, headers });
}

export function problem(
  status: number,
  slug: string,
  title: string,
  detail?: string,
  extra: { errors?: FieldError[]; headers?: HeadersInit } = {},
): Response {
  const body: Record<string, unknown> = { type: PROBLEM_BASE + slug, title, status };
  if (detail) body.detail = detail;
  if (extra.errors) body.errors = extra.errors;
  return new Response(JSON.stringify(body), {
    status,
    headers: { "content-type": "application/problem+json; charset=utf-8", ...extra.headers },
  });
}

export const badRequest = (detail: string, errors?: FieldError[]) =>
  problem(400, "bad-request", "The request is not valid", detail, errors ? { errors } : {});

export const unauthorized = (detail = "Sign in, or send a valid key, to use this.") =>
  problem(401, "unauthorized", "Not signed in", detail);

export const forbidden = (detail = "Your role may not do this.") =>
  problem(403, "forbidden", "Not allowed", detail);

export const notFound = (what: string) =>
  problem(404, "not-found", "Not found", `No such ${what}.`);

export const conflict = (detail: string) => problem(409, "conflict", "Conflict", detail);

export const payloadTooLarge = (detail: string) =>
  problem(413, "payload-too-large", "Request too large", detail);

export const unsupportedMediaType = (detail: string) =>
  problem(415, "unsupported-media-type", "Unsupported content type", detail);

export const tooManyRequests = (retryAfterS: number, detail: string) =>
  problem(429, "too-many-requests", "Too many attempts", detail, {
    headers: { "retry-after": String(Math.max(1, Math.ceil(retryAfterS))) },
  });

export const serverError = (requestId: string) =>
  problem(
    500,
    "server-error",
    "Something went wrong on the server",
    `It has been logged with request id ${requestId}.`,
  );

export const serviceUnavailable = (detail: string) =>
  problem(503, "unavailable", "Service unavailable", detail);
