import type { APIRoute } from "astro";
import { ingestReadings, MAX_BATCH_READINGS } from "@/lib/server/ingest/ingest";
import { endpoint, requireGateway } from "@/lib/server/http/guard";
import { readBodyLimited } from "@/lib/server/http/parse";
import {
  badRequest,
  json,
  payloadTooLarge,
  unsupportedMediaType,
} from "@/lib/server/http/responses";

const MAX_BODY_BYTES = 1024 * 1024;

/**
 * Readings from a gateway: {"readings": [{sensor, ts, temp_c | temp_f, rh}]}. Each reading
 * is checked on its own; the answer (accepted, duplicates, rejected) is sent only after the
 * good ones are committed.
 */
export const POST: APIRoute = endpoint(async ({ request, locals }) => {
  const gateway = requireGateway(locals);
  const type = (request.headers.get("content-type") ?? "application/json").toLowerCase();
  if (!type.includes("json")) return unsupportedMediaType("Send application/json.");
  const bytes = await readBodyLimited(request, MAX_BODY_BYTES);
  if (bytes === null) return payloadTooLarge("A request may carry at most 1 MiB.");
  let body: unknown;
  try {
    body = JSON.parse(new TextDecoder("utf-8", { fatal: true }).decode(bytes));
  } catch {
    return badRequest("The body is not valid UTF-8 JSON.");
  }
  if (
    typeof body !== "object" ||
    body === null ||
    Array.isArray(body) ||
    !Array.isArray((body as { readings?: unknown }).readings)
  ) {
    return badRequest('Send {"readings": [...]}: an object with an array of readings.', [
      { field: "readings", error: "must be an array" },
    ]);
  }
  const readings = (body as { readings: unknown[] }).readings;
  if (readings.length > MAX_BATCH_READINGS) {
    return payloadTooLarge(
      `A request may carry at most ${MAX_BATCH_READINGS} readings; this one has ${readings.length}.`,
    );
  }
  const answer = ingestReadings(readings, "http", { gatewayId: gateway.gatewayId });
  return json(answer);
});
