import type { APIRoute } from "astro";
import { compareBreak } from "@/domain/breakCheck";
import { MAX_FUTURE_MS } from "@/domain/readings";
import { psiToMpa } from "@/domain/units";
import { breakCreateBody } from "@/lib/schemas/pours";
import { writeAudit } from "@/lib/server/db/queries/audit";
import {
  findBreakBySpecimen,
  insertBreak,
  listBreaksForPour,
} from "@/lib/server/db/queries/breaks";
import { getPour } from "@/lib/server/db/queries/pours";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseBody, parseId } from "@/lib/server/http/parse";
import { badRequest, conflict, json, notFound } from "@/lib/server/http/responses";
import { estimateAtBreak } from "@/lib/server/pours/estimate";
import { breaksSummary, presentBreak } from "@/lib/server/pours/present";

const round = (v: number, digits: number) => Math.round(v * 10 ** digits) / 10 ** digits;

/** The pour's cylinder breaks, each with the estimate it was held against, and a summary. */
export const GET: APIRoute = endpoint(async ({ locals, params }) => {
  requireAction(locals, "plant.read");
  const id = parseId(params.id);
  const pour = id === null ? undefined : getPour(id);
  if (!pour) return notFound("pour");
  const breaks = listBreaksForPour(pour.id).map(presentBreak);
  return json({ pour_id: pour.id, breaks, summary: breaksSummary(breaks) });
});

/**
 * QC enters a cylinder break. It is held against the pour's in-place estimate at the moment of
 * the break (the governing sensor's maturity from its readings up to then, on the mix's curve
 * now in force); a break below 90 % of the estimate warns QC to recalibrate the mix.
 */
export const POST: APIRoute = endpoint(async (ctx) => {
  const who = requireAction(ctx.locals, "quality.manage");
  const id = parseId(ctx.params.id);
  const pour = id === null ? undefined : getPour(id);
  if (!pour) return notFound("pour");
  const parsed = await parseBody(ctx.request, breakCreateBody);
  if (!parsed.ok) return parsed.response;
  const b = parsed.data;
  const now = Date.now();
  if (b.broken_at > now + MAX_FUTURE_MS)
    return badRequest("The break time is in the future.", [
      { field: "broken_at", error: "At most 10 minutes from now" },
    ]);
  if (b.broken_at < pour.castAt)
    return badRequest("The break time is before the pour was cast.", [
      { field: "broken_at", error: "A cylinder is broken after casting" },
    ]);
  if (findBreakBySpecimen(pour.id, b.specimen_id))
    return conflict(`A break of ${b.specimen_id} is already recorded for ${pour.code}.`);

  const strengthMpa = b.strength_mpa ?? psiToMpa(b.strength_psi!);
  const est = estimateAtBreak(pour.id, b.broken_at);
  const estimateMpa = est?.estimateMpa ?? null;
  const row = insertBreak(
    {
      pourId: pour.id,
      mixId: pour.mixId,
      specimenId: b.specimen_id,
      brokenAtMs: b.broken_at,
      ageH: (b.broken_at - pour.castAt) / 3_600_000,
      strengthMpa,
      estimateMpa,
      lab: b.lab || null,
      note: b.note || null,
      enteredBy: who.kind === "user" ? who.user.id : null,
    },
    now,
  );
  const shown = presentBreak({
    ...row,
    enteredByName: who.kind === "user" ? who.user.name : `token:${who.name}`,
  });
  const cmp = compareBreak(strengthMpa, estimateMpa);
  writeAudit(
    auditActor(ctx),
    {
      action: "break.recorded",
      entityType: "cylinder_break",
      entityId: row.id,
      pourId: pour.id,
      detail: {
        code: pour.code,
        specimen_id: row.specimenId,
        broken_at: shown.broken_at,
        strength_psi: shown.strength_psi,
        estimate_psi: shown.estimate_psi,
        ratio: shown.ratio,
        governing_sensor: est?.governingSensor ?? null,
        ...(cmp.warning && { warning: cmp.warning }),
      },
    },
    now,
  );
  return json(
    {
      ...shown,
      governing_sensor: est?.governingSensor ?? null,
      ttf_c_h: est ? round(est.ttfCH, 1) : null,
      complete_record: est?.completeRecord ?? false,
      ...(estimateMpa === null && {
        estimate_note: est
          ? "The mix has no strength-maturity curve yet: there is no estimate to compare with."
          : "No sensor was on the pour by the break time: there is no estimate to compare with.",
      }),
    },
    201,
  );
});
