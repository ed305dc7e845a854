import type { APIRoute } from "astro";
import { lbYd3ToKgM3, psiToMpa } from "@/domain/units";
import { mixConsistencyErrors, mixPatchBody, type MixPatchBody } from "@/lib/schemas/mixes";
import { findMixByName, getMixItem, updateMix, type MixPatch } from "@/lib/server/db/queries/mixes";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseBody, parseId } from "@/lib/server/http/parse";
import { badRequest, conflict, json, notFound } from "@/lib/server/http/responses";
import { presentMix } from "@/lib/server/present/mixes";
import { forgetAssignments } from "@/lib/server/strength/maturity";

export const GET: APIRoute = endpoint(async ({ locals, params }) => {
  requireAction(locals, "plant.read");
  const id = parseId(params.id);
  const item = id === null ? undefined : getMixItem(id);
  return item ? json(presentMix(item)) : notFound("mix");
});

const kg = (lb: number | null) => (lb === null ? null : lbYd3ToKgM3(lb));

/** How each field of the body is stored. */
const toStored: {
  [K in keyof Required<MixPatchBody>]: (v: NonNullable<MixPatchBody[K]> | null) => MixPatch;
} = {
  name: (v) => ({ name: v! }),
  description: (v) => ({ description: v }),
  design_strength_psi: (v) => ({ designStrengthMpa: psiToMpa(v!) }),
  strip_strength_psi: (v) => ({ stripStrengthMpa: psiToMpa(v!) }),
  ship_strength_psi: (v) => ({ shipStrengthMpa: psiToMpa(v!) }),
  datum_temp_c: (v) => ({ datumTempC: v! }),
  activation_energy_j_mol: (v) => ({ activationEnergyJMol: v! }),
  placing_temp_min_c: (v) => ({ placingTempMinC: v }),
  placing_temp_max_c: (v) => ({ placingTempMaxC: v }),
  cement_lb_yd3: (v) => ({ cementKgM3: kg(v) }),
  scm_lb_yd3: (v) => ({ scmKgM3: kg(v) }),
  water_lb_yd3: (v) => ({ waterKgM3: kg(v) }),
  fine_agg_lb_yd3: (v) => ({ fineAggKgM3: kg(v) }),
  coarse_agg_lb_yd3: (v) => ({ coarseAggKgM3: kg(v) }),
  fine_agg_moisture_pct: (v) => ({ fineAggMoisturePct: v }),
  coarse_agg_moisture_pct: (v) => ({ coarseAggMoisturePct: v }),
};

/**
 * QC changes any subset of a mix's fields. Every change is audited with before and after. A new
 * datum temperature or activation energy moves the stored breaks' maturity to it and makes the
 * open pours of the mix rebuild theirs from the readings.
 */
export const PATCH: APIRoute = endpoint(async (ctx) => {
  requireAction(ctx.locals, "quality.manage");
  const id = parseId(ctx.params.id);
  const item = id === null ? undefined : getMixItem(id);
  if (!item) return notFound("mix");
  const parsed = await parseBody(ctx.request, mixPatchBody);
  if (!parsed.ok) return parsed.response;
  const body = parsed.data;

  const before = presentMix(item);
  const changed = (Object.keys(body) as (keyof MixPatchBody)[]).filter(
    (k) => body[k] !== undefined && body[k] !== before[k],
  );
  if (changed.length === 0) return json(before);
  // Only a disagreement this change brings is refused (an older one is left for QC to mend).
  const already = new Set(mixConsistencyErrors(before).map((e) => e.field));
  const errors = mixConsistencyErrors({ ...before, ...body }).filter((e) => !already.has(e.field));
  if (errors.length > 0) return badRequest("Some fields do not agree with one another.", errors);
  if (body.name !== undefined && body.name !== item.mix.name) {
    const other = findMixByName(body.name);
    if (other && other.id !== item.mix.id)
      return conflict(`A mix named "${body.name}" already exists.`);
  }

  const patch: MixPatch = {};
  for (const k of changed) {
    const store = toStored[k] as (v: unknown) => MixPatch;
    Object.assign(patch, store(body[k] ?? null));
  }
  const detailOf = (o: Record<string, unknown>) =>
    Object.fromEntries(changed.map((k) => [k, o[k]]));
  const { mix, rebased, kept } = updateMix(item.mix, patch, auditActor(ctx), (moved) => ({
    action: "mix.updated",
    entityType: "mix",
    entityId: item.mix.id,
    detail: {
      mix: item.mix.name,
      before: detailOf(before),
      after: detailOf(body),
      ...(moved.rebased + moved.kept > 0 && {
        points_rebased: moved.rebased,
        points_kept: moved.kept,
      }),
    },
  }));
  const maturityChanged =
    mix.datumTempC !== item.mix.datumTempC ||
    mix.activationEnergyJMol !== item.mix.activationEnergyJMol;
  if (maturityChanged) forgetAssignments();
  return json({
    ...presentMix(getMixItem(mix.id)!),
    ...(maturityChanged && { points_rebased: rebased, points_kept: kept }),
  });
});
