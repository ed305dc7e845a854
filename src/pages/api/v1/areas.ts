import type { APIRoute } from "astro";
import { areaCreateBody } from "@/lib/schemas/plant";
import { insertArea } from "@/lib/server/db/queries/areas";
import { writeAudit } from "@/lib/server/db/queries/audit";
import { findAreaByName, listAreas } from "@/lib/server/db/queries/sensors";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseBody } from "@/lib/server/http/parse";
import { conflict, json } from "@/lib/server/http/responses";

export const GET: APIRoute = endpoint(async ({ locals }) => {
  requireAction(locals, "plant.read");
  return json(
    listAreas().map((a) => ({ id: a.id, name: a.name, kind: a.kind, description: a.description })),
  );
});

/** A manager adds a place: a cure room, the yard, a bin area. */
export const POST: APIRoute = endpoint(async (ctx) => {
  requireAction(ctx.locals, "plant.admin");
  const parsed = await parseBody(ctx.request, areaCreateBody);
  if (!parsed.ok) return parsed.response;
  if (findAreaByName(parsed.data.name)) return conflict("An area with that name exists.");
  const row = insertArea({
    name: parsed.data.name,
    kind: parsed.data.kind,
    description: parsed.data.description ?? null,
    sortOrder: listAreas().length,
  });
  writeAudit(auditActor(ctx), {
    action: "area.created",
    entityType: "area",
    entityId: row.id,
    detail: { name: row.name },
  });
  return json({ id: row.id, name: row.name, kind: row.kind, description: row.description }, 201);
});
