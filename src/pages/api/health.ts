import type { APIRoute } from "astro";
import { pingDatabase } from "@/lib/server/db/client";
import { servicesHealth } from "@/lib/server/services";
import { json } from "@/lib/server/http/responses";

/** Liveness of each part: 200 when all are up, 503 when one is down. No auth. */
export const GET: APIRoute = () => {
  const db = pingDatabase() ? "ok" : "down";
  const { mqtt } = servicesHealth();
  const ok = db === "ok" && mqtt === "ok";
  return json({ ok, db, mqtt }, ok ? 200 : 503, { "cache-control": "no-store" });
};
