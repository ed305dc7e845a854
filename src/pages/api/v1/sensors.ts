import type { APIRoute } from "astro";
import { listSensorsWithArea } from "@/lib/server/db/queries/sensors";
import { endpoint, requireAction } from "@/lib/server/http/guard";
import { json } from "@/lib/server/http/responses";
import { presentSensor } from "@/lib/server/present/sensors";

/** Every sensor with its last reading and status. */
export const GET: APIRoute = endpoint(async ({ locals }) => {
  requireAction(locals, "plant.read");
  const now = Date.now();
  return json(listSensorsWithArea().map((s) => presentSensor(s, now)));
});
