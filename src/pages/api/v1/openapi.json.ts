import type { APIRoute } from "astro";
import { json } from "@/lib/server/http/responses";
import { openApiDocument } from "@/lib/server/openapi";

let cached: Record<string, unknown> | undefined;

/** The OpenAPI 3.1 description of every /api/v1 route. */
export const GET: APIRoute = () =>
  json((cached ??= openApiDocument()), 200, { "cache-control": "public, max-age=300" });
