import type { z } from "zod";
import { badRequest, payloadTooLarge, unsupportedMediaType, type FieldError } from "./responses";

/** zod issues as one entry per offending field. */
export function fieldErrors(error: z.ZodError): FieldError[] {
  return error.issues.map((i) => ({
    field: i.path.length ? i.path.join(".") : "(body)",
    error: i.message,
  }));
}

/**
 * Reads a request body, stopping as soon as it passes `limitBytes` (null then), so an
 * oversized body without a content-length is never held in memory whole.
 */
export async function readBodyLimited(
  request: Request,
  limitBytes: number,
): Promise<Uint8Array | null> {
  if (Number(request.headers.get("content-length") ?? 0) > limitBytes) return null;
  if (!request.body) return new Uint8Array(0);
  const reader = request.body.getReader();
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (;;) {
    const { value, done } = await reader.read();
    if (done) break;
    total += value.byteLength;
    if (total > limitBytes) {
      await reader.cancel();
      return null;
    }
    chunks.push(value);
  }
  const out = new Uint8Array(total);
  let at = 0;
  for (const c of chunks) {
    out.set(c, at);
    at += c.byteLength;
  }
  return out;
}

export type Parsed<T> = { ok: true; data: T } | { ok: false; response: Response };

const DEFAULT_LIMIT_BYTES = 1024 * 1024;

/**
 * Reads a JSON body (or, for browser forms, a urlencoded one) and checks it with a zod
 * schema. Bad input becomes a 400 with one error per field; nothing is thrown.
 */
export async function parseBody<S extends z.ZodType>(
  request: Request,
  schema: S,
  { limitBytes = DEFAULT_LIMIT_BYTES }: { limitBytes?: number } = {},
): Promise<Parsed<z.infer<S>>> {
  const type = (request.headers.get("content-type") ?? "").toLowerCase();
  const bytes = await readBodyLimited(request, limitBytes);
  if (bytes === null) {
    return { ok: false, response: payloadTooLarge(`The body is over ${limitBytes} bytes.`) };
  }
  let raw: unknown;
  try {
    const text = new TextDecoder("utf-8", { fatal: true }).decode(bytes);
    if (type.startsWith("application/x-www-form-urlencoded")) {
      raw = Object.fromEntries(new URLSearchParams(text));
    } else if (type === "" || type.includes("json")) {
      raw = text.trim() === "" ? {} : JSON.parse(text);
    } else {
      return {
        ok: false,
        response: unsupportedMediaType("Send application/json."),
      };
    }
  } catch {
    return { ok: false, response: badRequest("The body is not valid JSON.") };
  }
  const result = schema.safeParse(raw);
  if (!result.success) {
    return {
      ok: false,
      response: badRequest("Some fields are missing or not valid.", fieldErrors(result.error)),
    };
  }
  return { ok: true, data: result.data };
}

/** Checks a path parameter that must be a positive integer id. */
export function parseId(value: string | undefined): number | null {
  if (!value || !/^[1-9][0-9]{0,15}$/.test(value)) return null;
  const n = Number(value);
  return Number.isSafeInteger(n) ? n : null;
}

/** True when the request came from a browser form rather than a script. */
export function isFormPost(request: Request): boolean {
  const type = (request.headers.get("content-type") ?? "").toLowerCase();
  return type.startsWith("application/x-www-form-urlencoded") || type.startsWith("multipart/");
}
