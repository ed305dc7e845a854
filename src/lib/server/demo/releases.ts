/**
 * The demo plant's past sign-offs: QC released the two oldest demo pours to strip a little after
 * each reached its strip strength. Each release rests on the strength as it stood at that moment,
 * recomputed from the seeded readings up to then, so the record is what QC saw when signing.
 */
import { eq } from "drizzle-orm";
import { maturityFromHistory, recordCompleteAsOf } from "@/domain/maturity/accumulator";
import { ttfReachedAt } from "@/domain/maturity/crossing";
import { meanTempOverWindowC } from "@/domain/maturity/readings";
import {
  FORECAST_WINDOW_H,
  forecastThresholdAt,
  maturityForStrength,
  strengthAt,
  type StrengthCurve,
} from "@/domain/strength/curves";
import { mpaToPsi } from "@/domain/units";
import { getDb } from "../db/client";
import { writeAudit } from "../db/queries/audit";
import { listPourAssignments, readingsForAssignment } from "../db/queries/maturity";
import { currentCurve, getPourWithMix } from "../db/queries/strength";
import { pours, users } from "../db/schema";
import type { Milestone, PourStrength } from "../strength/pourStrength";
import { recordRelease, type ReleaseBasis } from "../strength/releases";

const HOUR_MS = 3_600_000;
const iso = (v: number | null) => (v === null ? null : new Date(v).toISOString());
const round = (v: number, digits: number) => Math.round(v * 10 ** digits) / 10 ** digits;

/** The demo's strip sign-offs: which pour, and how long after reaching strip strength QC signed. */
const demoStripReleases = [
  { code: "P-2611-01", afterH: 1.25, note: "Stripped at the start of the day shift." },
  { code: "P-2611-02", afterH: 2.5, note: "Checked bag pads before stripping; all wet." },
];

/** One sensor's readings up to a moment. */
function upTo(rs: { tsMs: number; tempC: number }[], asOfMs: number) {
  return rs.filter((r) => r.tsMs <= asOfMs);
}

/**
 * The strength view of a pour as it stood at `asOfMs`, from the stored readings up to then, by
 * the same rules as the live view (pourStrength.ts): weakest sensor governs, a threshold is
 * reached when the last sensor reaches it, the forecast holds the last 6 hours' mean.
 */
function strengthViewAsOf(
  pourId: number,
  curve: StrengthCurve,
  stripMpa: number,
  shipMpa: number,
  asOfMs: number,
): { view: PourStrength; governing: ReleaseBasis["governing"] } {
  const items = listPourAssignments(pourId).map((a) => {
    const readings = upTo(readingsForAssignment(a), asOfMs);
    const params = { datumC: a.datumC, activationEnergyJMol: a.activationEnergyJMol };
    return { a, readings, params, state: maturityFromHistory(readings, a.castAtMs, params) };
  });
  const milestone = (thresholdMpa: number): Milestone => {
    const out: Milestone = {
      threshold_psi: Math.round(mpaToPsi(thresholdMpa)),
      reached_at: null,
      forecast_at: null,
    };
    const target = maturityForStrength(curve, thresholdMpa);
    if (target === null || items.length === 0) return out;
    let latest = 0;
    if (items.every((i) => i.state.ttfCH >= target)) {
      for (const i of items) {
        const at = ttfReachedAt(i.readings, i.a.castAtMs, i.params, target);
        if (at === null) return out;
        latest = Math.max(latest, at);
      }
      out.reached_at = iso(latest);
      return out;
    }
    for (const i of items) {
      if (i.state.ttfCH >= target) continue;
      const at = forecastThresholdAt({
        asOfMs,
        ttfCH: i.state.ttfCH,
        meanTempC: meanTempOverWindowC(i.readings, asOfMs, FORECAST_WINDOW_H),
        datumC: i.a.datumC,
        targetTtfCH: target,
      });
      if (at === null) return out;
      latest = Math.max(latest, at);
    }
    out.forecast_at = iso(latest);
    return out;
  };
  const sensors = items.map(({ a, state }) => ({
    sensor: a.sensorId,
    ttf_c_h: round(state.ttfCH, 1),
    equivalent_age_h: round(state.equivalentAgeH, 2),
    strength_psi: Math.round(mpaToPsi(strengthAt(curve, state.ttfCH))),
    complete_record: recordCompleteAsOf(state, asOfMs),
    last_reading_at: iso(state.lastTsMs),
  }));
  const weakest = [...items].sort((x, y) => x.state.ttfCH - y.state.ttfCH)[0];
  return {
    view: {
      pour_id: pourId,
      as_of: new Date(asOfMs).toISOString(),
      governing_sensor: weakest?.a.sensorId ?? null,
      complete_record: sensors.length > 0 && sensors.every((s) => s.complete_record),
      calibrated: true,
      sensors,
      strip: milestone(stripMpa),
      ship: milestone(shipMpa),
    },
    governing: weakest
      ? {
          sensorId: weakest.a.sensorId,
          ttfCH: weakest.state.ttfCH,
          equivalentAgeH: weakest.state.equivalentAgeH,
          estimateMpa: strengthAt(curve, weakest.state.ttfCH),
        }
      : null,
  };
}

/** Records the demo's strip releases. Call after the demo's readings are stored. */
export function seedDemoReleases(nowMs: number): void {
  const db = getDb();
  const qc = db.select().from(users).where(eq(users.email, "qc@example.com")).get();
  if (!qc) return;
  for (const d of demoStripReleases) {
    const row = db.select({ id: pours.id }).from(pours).where(eq(pours.code, d.code)).get();
    const found = row && getPourWithMix(row.id);
    const fit = found && currentCurve(found.mix);
    if (!found || !fit) continue;
    const { mix, pour } = found;
    const now = strengthViewAsOf(
      pour.id,
      fit.curve,
      mix.stripStrengthMpa,
      mix.shipStrengthMpa,
      nowMs,
    );
    const reached = now.view.strip.reached_at;
    if (reached === null) continue;
    // Signed on a whole five minutes, a while after the pour reached its strip strength.
    const atMs = Math.ceil((Date.parse(reached) + d.afterH * HOUR_MS) / 300_000) * 300_000;
    if (atMs > nowMs) continue;
    const then = strengthViewAsOf(
      pour.id,
      fit.curve,
      mix.stripStrengthMpa,
      mix.shipStrengthMpa,
      atMs,
    );
    const { model, ...params } = fit.curve;
    const basis: ReleaseBasis = {
      asOfMs: atMs,
      pour,
      mix,
      view: then.view,
      calibration: { id: fit.calibrationId, model, params, r2: fit.r2 },
      governing: then.governing,
      missing: [],
      releases: [],
    };
    const out = recordRelease(basis, {
      kind: "strip",
      note: d.note,
      overrideReason: null,
      userId: qc.id,
    });
    if (!out.ok) continue;
    writeAudit(
      { userId: qc.id, label: qc.email },
      {
        action: "release.strip",
        entityType: "release",
        entityId: out.release.id,
        pourId: pour.id,
        detail: {
          pour_code: pour.code,
          estimate_psi:
            then.governing?.estimateMpa == null
              ? null
              : Math.round(mpaToPsi(then.governing.estimateMpa)),
          threshold_psi: then.view.strip.threshold_psi,
          governing_sensor: then.governing?.sensorId ?? null,
          complete_record: then.view.complete_record,
          override_reason: null,
          overridden: [],
          warnings: out.decision.warnings.map((w) => w.code),
          status: { from: pour.status, to: out.decision.nextStatus },
        },
      },
      atMs,
    );
  }
}
