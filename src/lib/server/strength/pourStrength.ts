/**
 * A pour's strength as the contract's GET /api/v1/pours/{id}/strength tells it: each
 * sensor's temperature-time factor, equivalent age and estimated strength, the governing
 * (weakest) sensor, whether the record is complete, and for strip and ship the threshold,
 * when it was reached and, if not yet, when it is forecast.
 */
import { recordCompleteAsOf } from "@/domain/maturity/accumulator";
import { meanTempOverWindowC } from "@/domain/maturity/readings";
import {
  FORECAST_WINDOW_H,
  forecastThresholdAt,
  maturityForStrength,
  strengthAt,
  type StrengthCurve,
} from "@/domain/strength/curves";
import { mpaToPsi } from "@/domain/units";
import type { MaturityAssignment } from "../db/queries/maturity";
import { currentCurve, getPourWithMix } from "../db/queries/strength";
import { pourMaturity, RECENT_WINDOW_MS, recentReadingsFor, ttfReachedAtFor } from "./maturity";

export interface SensorStrength {
  sensor: string;
  ttf_c_h: number;
  equivalent_age_h: number;
  strength_psi: number | null;
  complete_record: boolean;
  last_reading_at: string | null;
}

export interface Milestone {
  threshold_psi: number;
  reached_at: string | null;
  forecast_at: string | null;
}

export interface PourStrength {
  pour_id: number;
  as_of: string;
  governing_sensor: string | null;
  complete_record: boolean;
  calibrated: boolean;
  sensors: SensorStrength[];
  strip: Milestone;
  ship: Milestone;
}

const iso = (ms: number | null) => (ms === null ? null : new Date(ms).toISOString());
const round = (v: number, digits: number) => Math.round(v * 10 ** digits) / 10 ** digits;

function milestone(
  thresholdMpa: number,
  curve: StrengthCurve | null,
  items: { a: MaturityAssignment; ttfCH: number }[],
  asOfMs: number,
): Milestone {
  const out: Milestone = {
    threshold_psi: Math.round(mpaToPsi(thresholdMpa)),
    reached_at: null,
    forecast_at: null,
  };
  const target = curve ? maturityForStrength(curve, thresholdMpa) : null;
  if (target === null || items.length === 0) return out;
  // The pour reaches a threshold when its last sensor does.
  if (items.every((i) => i.ttfCH >= target)) {
    let latest = 0;
    for (const i of items) {
      const at = ttfReachedAtFor(i.a, target);
      if (at === null) return out;
      latest = Math.max(latest, at);
    }
    out.reached_at = iso(latest);
    return out;
  }
  let latest = 0;
  for (const i of items) {
    if (i.ttfCH >= target) continue;
    const recent = recentReadingsFor(i.a, asOfMs - RECENT_WINDOW_MS);
    const meanTempC = meanTempOverWindowC(recent, asOfMs, FORECAST_WINDOW_H);
    const at = forecastThresholdAt({
      asOfMs,
      ttfCH: i.ttfCH,
      meanTempC,
      datumC: i.a.datumC,
      targetTtfCH: target,
    });
    if (at === null) return out;
    latest = Math.max(latest, at);
  }
  out.forecast_at = iso(latest);
  return out;
}

/** The strength view of one pour, or undefined if there is no such pour. */
export function pourStrength(pourId: number, asOfMs = Date.now()): PourStrength | undefined {
  const found = getPourWithMix(pourId);
  if (!found) return undefined;
  const { mix } = found;
  const fit = currentCurve(mix);
  const curve = fit?.curve ?? null;
  const all = pourMaturity(pourId);
  // Decisions follow the sensors on the pour now; a pour with none left keeps its last ones.
  const current = all.filter((x) => x.a.toMs === null);
  const used = current.length > 0 ? current : all;
  const sensors: SensorStrength[] = used.map(({ a, state }) => ({
    sensor: a.sensorId,
    ttf_c_h: round(state.ttfCH, 1),
    equivalent_age_h: round(state.equivalentAgeH, 2),
    strength_psi: curve ? Math.round(mpaToPsi(strengthAt(curve, state.ttfCH))) : null,
    complete_record: recordCompleteAsOf(state, asOfMs),
    last_reading_at: iso(state.lastTsMs),
  }));
  const byWeakest = [...used].sort((x, y) => x.state.ttfCH - y.state.ttfCH);
  const items = used.map(({ a, state }) => ({ a, ttfCH: state.ttfCH }));
  return {
    pour_id: pourId,
    as_of: new Date(asOfMs).toISOString(),
    governing_sensor: byWeakest[0]?.a.sensorId ?? null,
    complete_record: sensors.length > 0 && sensors.every((s) => s.complete_record),
    calibrated: curve !== null,
    sensors,
    strip: milestone(mix.stripStrengthMpa, curve, items, asOfMs),
    ship: milestone(mix.shipStrengthMpa, curve, items, asOfMs),
  };
}
