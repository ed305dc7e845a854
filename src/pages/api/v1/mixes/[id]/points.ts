import type { APIRoute } from "astro";
import {
  equivalentAgeAtConstantTempH,
  recordAgeMismatch,
  recordMaturity,
  ttfAtConstantTempCH,
} from "@/domain/calibrationPoints";
import { psiToMpa } from "@/domain/units";
import { pointCreateBody } from "@/lib/schemas/mixes";
import { getMix, insertPoint, listPoints } from "@/lib/server/db/queries/mixes";
import { auditActor, endpoint, requireAction } from "@/lib/server/http/guard";
import { parseBody, parseId } from "@/lib/server/http/parse";
import { badRequest, json, notFound } from "@/lib/server/http/responses";
import { presentPoint } from "@/lib/server/present/mixes";

/** A mix's calibration points (one age's cylinder breaks each), in order of maturity. */
export const GET: APIRoute = endpoint(async ({ locals, params }) => {
  requireAction(locals, "plant.read");
  const id = parseId(params.id);
  const mix = id === null ? undefined : getMix(id);
  if (!mix) return notFound("mix");
  return json({ mix_id: mix.id, points: listPoints(mix.id).map(presentPoint) });
});

/** Room for a specimen's record of up to 50,000 readings in one body. */
const BODY_LIMIT_BYTES = 4 * 1024 * 1024;

/**
 * QC adds one age's breaks: the cylinders' mean strength and their maturity, given as a
 * temperature-time factor, or from a constant curing temperature (maturity = age × (T − datum),
 * ASTM C1074 Eq. 1; lab-cured at 23 °C is the usual case), or from the specimens' own temperature
 * record (the same Nurse-Saul sum as a pour's sensors).
 */
export const POST: APIRoute = endpoint(async (ctx) => {
  const caller = requireAction(ctx.locals, "quality.manage");
  const id = parseId(ctx.params.id);
  const mix = id === null ? undefined : getMix(id);
  if (!mix) return notFound("mix");
  const parsed = await parseBody(ctx.request, pointCreateBody, { limitBytes: BODY_LIMIT_BYTES });
  if (!parsed.ok) return parsed.response;
  const b = parsed.data;
  const strengthMpa = b.strength_mpa ?? psiToMpa(b.strength_psi!);

  let ageH = b.age_h ?? null;
  let ttfCH: number;
  let equivalentAgeH: number | null = null;
  if (b.ttf_c_h !== undefined) {
    ttfCH = b.ttf_c_h;
  } else if (b.temp_c !== undefined) {
    if (!(b.temp_c > mix.datumTempC)) {
      return badRequest("The curing temperature adds no maturity.", [
        {
          field: "temp_c",
          error: `At or below the mix's datum temperature (${mix.datumTempC} °C) nothing is added; check the temperature`,
        },
      ]);
    }
    ttfCH = ttfAtConstantTempCH(ageH!, b.temp_c, mix.datumTempC);
    equivalentAgeH = equivalentAgeAtConstantTempH(ageH!, b.temp_c, mix.activationEnergyJMol);
  } else {
    const readings = b.temps!.map((r) => ({ tsMs: r.ts, tempC: r.temp_c }));
    let m: ReturnType<typeof recordMaturity>;
    try {
      m = recordMaturity(readings, mix.datumTempC, mix.activationEnergyJMol);
    } catch {
      return badRequest("The temperature record cannot be read.", [
        { field: "temps", error: "A record needs readings at two or more different times" },
      ]);
    }
    if (!m.complete) {
      return badRequest("The temperature record has a gap.", [
        {
          field: "temps",
          error:
            "Two readings are more than 2 h apart; the gap would add nothing and understate the maturity, which overstates every estimate read from the curve. Send the full record",
        },
      ]);
    }
    ageH ??= m.spanH;
    const mismatch = recordAgeMismatch(m.spanH, ageH);
    if (mismatch)
      return badRequest("The record does not match the age.", [
        { field: "age_h", error: mismatch },
      ]);
    if (!(m.ttfCH > 0)) {
      return badRequest("The temperature record adds no maturity.", [
        {
          field: "temps",
          error: `It never rose above the mix's datum temperature (${mix.datumTempC} °C)`,
        },
      ]);
    }
    ttfCH = m.ttfCH;
    equivalentAgeH = m.equivalentAgeH;
  }

  const row = insertPoint(
    {
      mixId: mix.id,
      ageH,
      ttfCH,
      equivalentAgeH,
      strengthMpa,
      specimens: b.specimens ?? null,
      brokenAt: b.broken_at ?? null,
      createdBy: caller.kind === "user" ? caller.user.id : null,
    },
    auditActor(ctx),
    mix.name,
  );
  return json(presentPoint(row), 201);
});
