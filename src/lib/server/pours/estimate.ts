/**
 * The in-place estimate of a pour at a past moment (a cylinder break's time): each sensor's
 * maturity from its stored readings up to that moment, the governing one, and the mix's curve
 * now in force. The running states of src/lib/server/strength/maturity.ts hold only "now".
 */
import { estimateAtTime, type EstimateAtTime } from "@/domain/breakCheck";
import { listPourAssignments, readingsForAssignment } from "../db/queries/maturity";
import { currentCurve, getPourWithMix } from "../db/queries/strength";

export function estimateAtBreak(pourId: number, brokenAtMs: number): EstimateAtTime | null {
  const found = getPourWithMix(pourId);
  if (!found) return null;
  const { pour, mix } = found;
  const curve = currentCurve(mix)?.curve ?? null;
  const assignments = listPourAssignments(pourId).map((a) => ({
    sensorId: a.sensorId,
    fromMs: a.fromMs,
    toMs: a.toMs,
    readings: readingsForAssignment({
      ...a,
      toMs: a.toMs === null ? brokenAtMs : Math.min(a.toMs, brokenAtMs),
    }),
  }));
  return estimateAtTime(
    assignments,
    pour.castAt,
    brokenAtMs,
    { datumC: mix.datumTempC, activationEnergyJMol: mix.activationEnergyJMol },
    curve,
  );
}
