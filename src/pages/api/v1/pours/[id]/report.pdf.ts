import type { APIRoute } from "astro";
import { z } from "zod";
import { exportFileName } from "@/domain/history";
import { pourHistoryData } from "@/lib/server/history/data";
import { renderCureReport } from "@/lib/server/history/pdf";
import { endpoint, requireAction } from "@/lib/server/http/guard";
import { fieldErrors, parseId } from "@/lib/server/http/parse";
import { badRequest, notFound } from "@/lib/server/http/responses";

const reportQuery = z.object({ units: z.enum(["us", "si"]).optional() });

/**
 * The printable cure report of a pour (PDF): plant, pour, mix and calibration, temperature and
 * strength charts, the sensors' maturity, breaks, releases with their sign-offs, alerts and the
 * caution. Units are the signed-in person's (°F and psi, or °C and MPa); `?units=si|us` overrides,
 * and a script's token gets US units unless it asks.
 */
export const GET: APIRoute = endpoint(async ({ locals, params, url }) => {
  const caller = requireAction(locals, "plant.read");
  const query = reportQuery.safeParse(Object.fromEntries(url.searchParams));
  if (!query.success) return badRequest("Bad query.", fieldErrors(query.error));
  const id = parseId(params.id);
  const data = id === null ? undefined : pourHistoryData(id);
  if (!data) return notFound("pour");
  const units = query.data.units ?? (caller.kind === "user" ? caller.user.units : "us");
  const pdf = await renderCureReport(data, units);
  return new Response(new Uint8Array(pdf), {
    status: 200,
    headers: {
      "content-type": "application/pdf",
      "content-disposition": `inline; filename="${exportFileName(data.pour.code, "cure-report.pdf")}"`,
      "content-length": String(pdf.byteLength),
      "cache-control": "no-store",
    },
  });
});
