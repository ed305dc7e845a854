import type { APIRoute } from "astro";
import { z } from "zod";
import { parseTimestamp } from "@/domain/readings";
import { thinSeries } from "@/domain/thin";
import { getSensorWithArea, readingsWindow, thinnedWindow } from "@/lib/server/db/queries/sensors";
import { endpoint, requireAction } from "@/lib/server/http/guard";
import { fieldErrors } from "@/lib/server/http/parse";
import { badRequest, json, notFound } from "@/lib/server/http/responses";

const DAY_MS = 86_400_000;
const instant = z.string().transform((v, ctx) => {
  const ms = parseTimestamp(/^\d+$/.test(v) ? Number(v) : v);
  if (ms === null) {
    ctx.addIssue({ code: "custom", message: "use ISO 8601 with an offset, or epoch milliseconds" });
    return z.NEVER;
  }
  return ms;
});
const readingsWindowQuery = z.object({
  from: instant.optional(),
  to: instant.optional(),
  max_points: z.coerce.number().int().min(10).max(20_000).default(1_000),
});

/**
 * One sensor's readings in a window (default: the last 24 hours), oldest first, thinned
 * to at most max_points by keeping each time bucket's extremes, so no peak or dip is hidden.
 */
export const GET: APIRoute = endpoint(async ({ locals, params, url }) => {
  requireAction(locals, "plant.read");
  const sensor = getSensorWithArea(params.id ?? "");
  if (!sensor) return notFound("sensor");
  const parsed = readingsWindowQuery.safeParse(Object.fromEntries(url.searchParams));
  if (!parsed.success) return badRequest("Bad query.", fieldErrors(parsed.error));
  const to = parsed.data.to ?? Date.now();
  const from = parsed.data.from ?? to - DAY_MS;
  if (from > to)
    return badRequest("from is after to.", [{ field: "from", error: "must not be after to" }]);
  if (to - from > 400 * DAY_MS)
    return badRequest("The window is over 400 days.", [
      { field: "from", error: "window too long" },
    ]);
  // A window far longer than the points wanted (at one reading a minute) is thinned from the
  // readings rollup (buckets on the hours or quarter hours, each keeping its extremes), so a
  // month of readings never has to be read row by row.
  const max = parsed.data.max_points;
  const long = (to - from) / 60_000 > 4 * max;
  const rows = long
    ? thinnedWindow(sensor.id, from, to, Math.floor(max / 4))
    : readingsWindow(sensor.id, from, to);
  const points = thinSeries(rows, max, from, to);
  return json({
    sensor: sensor.id,
    from: new Date(from).toISOString(),
    to: new Date(to).toISOString(),
    readings: points.map((p) => ({
      ts: new Date(p.tsMs).toISOString(),
      temp_c: p.tempC,
      rh: p.rhPct,
    })),
  });
});
