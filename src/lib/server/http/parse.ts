import type { z } from "zod";
import { badRequest, payloadTooLarge, unsupportedMediaType, type FieldError } from "./responses";

/** zod issues as one entry per offending field. */
export function fieldErrors(error: z.ZodError): FieldError[] {
  return error.issues.map((i) => ({
    field: i.path.length ? i.path.join(".") : "(body)",
    error: i.message,
  }));
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
  const declared = Number(request.headers.get("content-length") ?? "0");
  if (declared > limitBytes) {
    return { ok: false, response: payloadTooLarge(`The body is over ${limitBytes} bytes.`) };
  }
  let raw: unknown;
  try {
    const text = await request.text();
    if (Buffer.byteLength(text) > limitBytes) {
      return { ok: false, response: payloadTooLarge(`The body is over ${limitBytes} bytes.`) };
    }
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
