import type { APIRoute } from "astro";
import { lbYd3ToKgM3, psiToMpa } from "@/domain/units";
import { mixCreateBody } from "@/lib/schemas/mixes";
import { findMixByName, getMixItem, insertMix, listMixes } from "@/lib/server/db/queries/mixes";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseBody } from "@/lib/server/http/parse";
import { conflict, json } from "@/lib/server/http/responses";
import { presentMix } from "@/lib/server/present/mixes";

/** Every mix, by name, with its current calibration's summary. */
export const GET: APIRoute = endpoint(async ({ locals }) => {
  requireAction(locals, "plant.read");
  return json({ mixes: listMixes().map(presentMix) });
});

const kg = (lb: number | null | undefined) =>
  lb === null || lb === undefined ? null : lbYd3ToKgM3(lb);

/** QC adds a mix (contract: POST /api/v1/mixes). It has no calibration until QC fits one. */
export const POST: APIRoute = endpoint(async (ctx) => {
  const caller = requireAction(ctx.locals, "quality.manage");
  const parsed = await parseBody(ctx.request, mixCreateBody);
  if (!parsed.ok) return parsed.response;
  const b = parsed.data;
  if (findMixByName(b.name)) return conflict(`A mix named "${b.name}" already exists.`);
  const now = Date.now();
  const row = insertMix(
    {
      name: b.name,
      description: b.description ?? null,
      designStrengthMpa: psiToMpa(b.design_strength_psi),
      stripStrengthMpa: psiToMpa(b.strip_strength_psi),
      shipStrengthMpa: psiToMpa(b.ship_strength_psi),
      datumTempC: b.datum_temp_c,
      activationEnergyJMol: b.activation_energy_j_mol,
      placingTempMinC: b.placing_temp_min_c ?? null,
      placingTempMaxC: b.placing_temp_max_c ?? null,
      cementKgM3: kg(b.cement_lb_yd3),
      scmKgM3: kg(b.scm_lb_yd3),
      waterKgM3: kg(b.water_lb_yd3),
      fineAggKgM3: kg(b.fine_agg_lb_yd3),
      coarseAggKgM3: kg(b.coarse_agg_lb_yd3),
      fineAggMoisturePct: b.fine_agg_moisture_pct ?? null,
      coarseAggMoisturePct: b.coarse_agg_moisture_pct ?? null,
      createdBy: caller.kind === "user" ? caller.user.id : null,
      createdAt: now,
      updatedAt: now,
    },
    auditActor(ctx),
    { ...b },
  );
  return json(presentMix(getMixItem(row.id)!), 201, { location: `/api/v1/mixes/${row.id}` });
});
