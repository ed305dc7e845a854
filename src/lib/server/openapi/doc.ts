import type { z } from "zod";

/** One route's entry in the OpenAPI document, keyed "METHOD /path" (OpenAPI path syntax). */
export interface Doc {
  summary: string;
  body?: z.ZodType;
  response?: z.ZodType;
  query?: Record<string, string>;
}
