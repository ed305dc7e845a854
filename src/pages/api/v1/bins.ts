import type { APIRoute } from "astro";
import { z } from "zod";
import {
  BATCH_CAUTION,
  DEFAULT_CEMENT_TEMP_C,
  DEFAULT_WATER_TEMP_C,
  adviceText,
  aggregateClassOf,
  aggregateTemps,
  binReporting,
  missingMixFields,
  noteText,
  planBatch,
  requiredMixFields,
  type AggregateClass,
  type BatchAdvice,
  type BinInput,
  type Formatters,
  type RequiredMixField,
} from "@/domain/batchTemperature";
import { sensorState } from "@/domain/sensorState";
import { getMixForBatch, listBinSensors, type MixForBatch } from "@/lib/server/db/queries/bins";
import { endpoint, requireAction } from "@/lib/server/http/guard";
import { fieldErrors } from "@/lib/server/http/parse";
import { badRequest, json, notFound } from "@/lib/server/http/responses";

const temp = (min: number, max: number) => z.coerce.number().min(min).max(max);

/** GET /api/v1/bins query: everything optional; temperatures in °C. */
export const binsQuery = z
  .object({
    mix_id: z.coerce.number().int().positive().optional(),
    water_temp_c: temp(0, 100)
      .default(DEFAULT_WATER_TEMP_C)
      .describe(`added mixing water, liquid, °C (default ${DEFAULT_WATER_TEMP_C})`),
    cement_temp_c: temp(-30, 90)
      .default(DEFAULT_CEMENT_TEMP_C)
      .describe(`cement and SCM, °C (default ${DEFAULT_CEMENT_TEMP_C})`),
    fine_temp_c: temp(-40, 80)
      .optional()
      .describe("fine aggregate measured by hand, over the bins"),
    coarse_temp_c: temp(-40, 80).optional().describe("coarse aggregate measured by hand"),
    bins: z
      .string()
      .transform((v) =>
        v
          .split(",")
          .map((s) => s.trim())
          .filter(Boolean),
      )
      .optional()
      .describe("comma-separated bin ids to average (default: every reporting bin)"),
  })
  .strict();

const si: Formatters = {
  temp: (c) => `${c.toFixed(1)} °C`,
  mass: (kg) => `${kg.toFixed(1)} kg/m³`,
};

const wireField: Record<RequiredMixField, string> = {
  cementKgM3: "cement_kg_m3",
  waterKgM3: "water_kg_m3",
  fineAggKgM3: "fine_agg_kg_m3",
  coarseAggKgM3: "coarse_agg_kg_m3",
  placingTempMinC: "placing_temp_min_c",
  placingTempMaxC: "placing_temp_max_c",
};

const iso = (ms: number | null) => (ms === null ? null : new Date(ms).toISOString());
const round = (v: number | null, digits = 2) =>
  v === null ? null : Math.round(v * 10 ** digits) / 10 ** digits;

function adviceOut(a: BatchAdvice) {
  switch (a.action) {
    case "water":
      return {
        water_temp_c: round(a.waterTempC),
        ice_kg_m3: null,
        ice_alternative_kg_m3: round(a.iceAlternativeKg),
        reaches_temp_c: round(a.reachesC),
        needed_water_temp_c: round(a.waterTempC),
        flag: null,
        remedy: null,
      };
    case "water_at_heating_limit":
      return {
        water_temp_c: round(a.waterTempC),
        ice_kg_m3: null,
        ice_alternative_kg_m3: null,
        reaches_temp_c: round(a.reachesC),
        needed_water_temp_c: round(a.neededWaterTempC),
        flag: "water_above_heating_limit",
        remedy: "heat_aggregates",
      };
    case "ice":
      return {
        water_temp_c: round(a.waterTempC),
        ice_kg_m3: round(a.iceKg),
        ice_alternative_kg_m3: null,
        reaches_temp_c: round(a.reachesC),
        needed_water_temp_c: null,
        flag: a.aimsForMiddle ? null : "top_of_range_only",
        remedy: a.aimsForMiddle ? null : "cool_aggregates",
      };
    case "cannot_reach":
      return {
        water_temp_c: null,
        ice_kg_m3: null,
        ice_alternative_kg_m3: null,
        reaches_temp_c: round(a.bestC),
        needed_water_temp_c: round(a.neededWaterTempC),
        flag: "cannot_reach",
        remedy: a.remedy,
      };
    case "no_mixing_water":
      return {
        water_temp_c: null,
        ice_kg_m3: null,
        ice_alternative_kg_m3: null,
        reaches_temp_c: null,
        needed_water_temp_c: null,
        flag: "no_mixing_water",
        remedy: null,
      };
  }
}

function prediction(
  mix: MixForBatch,
  agg: ReturnType<typeof aggregateTemps>,
  waterTempC: number,
  cementTempC: number,
) {
  const head = { mix_id: mix.id, mix_name: mix.name };
  const missing = missingMixFields(mix);
  if (missing.length > 0) {
    return {
      ...head,
      ready: false,
      reason: "mix_incomplete",
      missing: missing.map((f) => wireField[f]),
      message: `${mix.name} has no proportions to predict a batch from. Fill in on the mix: ${missing
        .map((f) => requiredMixFields[f])
        .join(
          ", ",
        )} (masses in kg per m³, temperatures in °C); the aggregates' moisture too, if known.`,
    };
  }
  const needs: AggregateClass[] = [];
  if ((mix.fineAggKgM3 as number) > 0) needs.push("fine");
  if ((mix.coarseAggKgM3 as number) > 0) needs.push("coarse");
  const lacking = needs.filter((c) => agg[c].tempC === null);
  if (lacking.length > 0) {
    return {
      ...head,
      ready: false,
      reason: "no_aggregate_temp",
      missing: lacking.map((c) => `${c}_temp_c`),
      message: `No reporting ${lacking.join(" or ")} aggregate bin: check the bin sensors, or measure the aggregate and send ${lacking.map((c) => `${c}_temp_c`).join(" and ")}.`,
    };
  }
  const fineC = agg.fine.tempC ?? (agg.coarse.tempC as number);
  const coarseC = agg.coarse.tempC ?? fineC;
  const plan = planBatch(mix, { fineC, coarseC, cementC: cementTempC }, waterTempC);
  return {
    ...head,
    ready: true,
    water_temp_c: waterTempC,
    cement_temp_c: cementTempC,
    fine_temp_c: round(agg.fine.tempC),
    coarse_temp_c: round(agg.coarse.tempC),
    placing_temp_min_c: plan.minC,
    placing_temp_max_c: plan.maxC,
    target_temp_c: round(plan.targetC),
    predicted_temp_c: round(plan.predictedC),
    state: plan.state,
    batch: {
      cementitious_kg_m3: round(plan.masses.cementitiousKg),
      fine_agg_kg_m3: round(plan.masses.fineAggKg),
      coarse_agg_kg_m3: round(plan.masses.coarseAggKg),
      free_water_kg_m3: round(plan.masses.fineFreeWaterKg + plan.masses.coarseFreeWaterKg),
      added_water_kg_m3: round(plan.masses.addedWaterKg),
    },
    advice: {
      action: plan.advice.action,
      ...adviceOut(plan.advice),
      message: adviceText(plan, si),
    },
    notes: plan.notes.map((code) => ({ code, message: noteText(code, si) })),
    caution: BATCH_CAUTION,
  };
}

/**
 * The aggregate bins with their last temperatures, the fine and coarse temperatures they give
 * (mean of the reporting bins of each class, or of the chosen ones, or entered by hand), and
 * for a mix the next batch's temperature by the ACI 305R / 306R heat balance with the water
 * temperature or ice that brings it to the middle of the mix's placing range.
 */
export const GET: APIRoute = endpoint(async ({ locals, url }) => {
  requireAction(locals, "plant.read");
  const raw = Object.fromEntries([...url.searchParams].filter(([, v]) => v.trim() !== ""));
  const parsed = binsQuery.safeParse(raw);
  if (!parsed.success) return badRequest("Bad query.", fieldErrors(parsed.error));
  const q = parsed.data;
  const now = Date.now();

  const rows = listBinSensors();
  const unknown = (q.bins ?? []).filter((id) => !rows.some((r) => r.id === id));
  if (unknown.length > 0)
    return badRequest("Some chosen bins are not aggregate bins.", [
      { field: "bins", error: `not a bin sensor: ${unknown.join(", ")}` },
    ]);
  const mix = q.mix_id === undefined ? undefined : getMixForBatch(q.mix_id);
  if (q.mix_id !== undefined && !mix) return notFound("mix");

  const inputs: BinInput[] = rows.map((r) => ({
    id: r.id,
    aggregate: aggregateClassOf(r.material),
    tempC: r.lastTempC,
    lastSeenAtMs: r.lastSeenAt,
  }));
  const agg = aggregateTemps(inputs, now, {
    chosen: q.bins ?? null,
    enteredC: { fine: q.fine_temp_c ?? null, coarse: q.coarse_temp_c ?? null },
  });
  const used = new Set([...agg.fine.binIds, ...agg.coarse.binIds]);

  return json({
    as_of: new Date(now).toISOString(),
    bins: rows.map((r, i) => ({
      id: r.id,
      label: r.label,
      area: r.areaName,
      material: r.material,
      aggregate: inputs[i]!.aggregate,
      last_temp_c: r.lastTempC,
      last_seen_at: iso(r.lastSeenAt),
      status:
        r.status === "new"
          ? "new"
          : binReporting(inputs[i]!, now)
            ? "reporting"
            : sensorState(r.lastSeenAt, now) === "never"
              ? "never"
              : "silent",
      used: used.has(r.id),
    })),
    aggregates: Object.fromEntries(
      (["fine", "coarse"] as const).map((c) => [
        c,
        { temp_c: round(agg[c].tempC), source: agg[c].source, bins: agg[c].binIds },
      ]),
    ),
    prediction: mix ? prediction(mix, agg, q.water_temp_c, q.cement_temp_c) : null,
  });
});
