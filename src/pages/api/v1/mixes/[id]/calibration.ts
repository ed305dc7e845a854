import type { APIRoute } from "astro";
import { curveIncreases, fitStrengthCurve, type StrengthPoint } from "@/domain/strength/curves";
import { psiToMpa } from "@/domain/units";
import { calibrationFitBody } from "@/lib/schemas/mixes";
import { getMix, insertFit, listPoints } from "@/lib/server/db/queries/mixes";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseBody, parseId } from "@/lib/server/http/parse";
import { json, notFound, problem } from "@/lib/server/http/responses";
import { calibrationView, fitView } from "@/lib/server/present/mixes";

/** The mix's current fit in full (points, curve, band, thresholds) and every fit, newest first. */
export const GET: APIRoute = endpoint(async ({ locals, params }) => {
  requireAction(locals, "plant.read");
  const id = parseId(params.id);
  const mix = id === null ? undefined : getMix(id);
  return mix ? json(calibrationView(mix)) : notFound("mix");
});

const cannotFit = (detail: string) =>
  problem(422, "calibration-not-fitted", "The calibration cannot be fitted", detail, {
    errors: [{ field: "points", error: detail }],
  });

/**
 * QC fits a strength-maturity curve (contract: POST /api/v1/mixes/{id}/calibration) to the given
 * points, or to the mix's stored breaks when none are given. The fit is stored and becomes the
 * mix's current one, so every strength estimate of the mix's pours follows it from now on;
 * earlier fits stay for the record. A fit that cannot be used is refused (422) with the reason.
 */
export const POST: APIRoute = endpoint(async (ctx) => {
  const caller = requireAction(ctx.locals, "quality.manage");
  const id = parseId(ctx.params.id);
  const mix = id === null ? undefined : getMix(id);
  if (!mix) return notFound("mix");
  const parsed = await parseBody(ctx.request, calibrationFitBody);
  if (!parsed.ok) return parsed.response;
  const { model } = parsed.data;

  const given = parsed.data.points;
  const points: StrengthPoint[] = given
    ? given.map((p) => ({ ttfCH: p.ttf_c_h, strengthMpa: psiToMpa(p.strength_psi) }))
    : listPoints(mix.id).map((p) => ({ ttfCH: p.ttfCH, strengthMpa: p.strengthMpa }));
  if (points.length < 2) {
    return cannotFit(
      given
        ? `A fit needs at least 2 points; ${points.length} ${points.length === 1 ? "was" : "were"} given.`
        : `A fit needs at least 2 cylinder breaks; ${mix.name} has ${points.length}. Add the breaks first.`,
    );
  }
  let fit: ReturnType<typeof fitStrengthCurve>;
  try {
    fit = fitStrengthCurve(model, points);
  } catch (err) {
    if (!(err instanceof RangeError)) throw err;
    const distinct = new Set(points.map((p) => p.ttfCH)).size;
    return cannotFit(
      model === "log"
        ? `The points must lie at two or more different maturities (above 0 °C·h); they lie at ${distinct}.`
        : `The ${model} form has three parameters and needs breaks at three or more different maturities; these lie at ${distinct}.`,
    );
  }
  const { model: _m, ...params } = fit.curve;
  if (!Object.values(params).every(Number.isFinite) || !Number.isFinite(fit.r2)) {
    return cannotFit(
      `The ${model} form cannot be fitted to these points. Check the breaks, or try the log form.`,
    );
  }
  if (!curveIncreases(fit.curve)) {
    return cannotFit(
      "The fitted strength does not rise with maturity, so it cannot estimate strength. Check the breaks' strengths and maturities.",
    );
  }
  const row = insertFit(
    {
      mixId: mix.id,
      mixName: mix.name,
      model,
      params,
      r2: fit.r2,
      rmseMpa: fit.rmseMpa,
      warnings: fit.warnings,
      points,
      source: given ? "request" : "stored_points",
      datumC: mix.datumTempC,
      previousCalibrationId: mix.currentCalibrationId,
      createdBy: caller.kind === "user" ? caller.user.id : null,
    },
    auditActor(ctx),
  );
  const now = getMix(mix.id)!;
  const author = caller.kind === "user" ? caller.user.name : null;
  return json(fitView(now, { ...row, createdByName: author }, true), 201);
});
