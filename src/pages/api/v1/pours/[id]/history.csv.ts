import type { APIRoute } from "astro";
import { pourHistoryCsv } from "@/lib/server/history/csv";
import { endpoint, requireAction } from "@/lib/server/http/guard";
import { parseId } from "@/lib/server/http/parse";
import { notFound } from "@/lib/server/http/responses";

/**
 * A pour's cure history as CSV: a "#" header block (plant, pour, mix, cast_at, generated_at),
 * then one row per reading in each sensor's window: ts, sensor, temp_c, rh_pct and the sensor's
 * running ttf_c_h and strength_psi at that reading. Sent as a download, streamed.
 */
export const GET: APIRoute = endpoint(async ({ locals, params }) => {
  requireAction(locals, "plant.read");
  const id = parseId(params.id);
  const csv = id === null ? undefined : pourHistoryCsv(id);
  if (!csv) return notFound("pour");
  return new Response(csv.stream, {
    status: 200,
    headers: {
      "content-type": "text/csv; charset=utf-8",
      "content-disposition": `attachment; filename="${csv.fileName}"`,
      "cache-control": "no-store",
    },
  });
});
