/**
 * The words and figures a pour's history shows, shared by the history page and the printed
 * cure report so both say the same thing in the reader's units.
 */
import { displayTtf } from "@/domain/history";
import { displayStrength, displayTemp, type UnitSystem } from "@/domain/units";
import type { StrengthModel } from "@/domain/strength/curves";
import { formatDateTime } from "@/lib/format";
import type { HistoryMilestone, PourHistoryData } from "./data";

/** Shown with every estimate and on every report: the decision rests with people, not the number. */
export const CURE_CAUTION =
  "Maturity estimates support, and never replace, the judgement of the engineer of record, the project specifications and local codes.";

/** Said where a sensor's record has a gap: the estimate then errs low. */
export const GAP_NOTE =
  "A gap of over 2 hours between readings adds nothing to maturity, so the estimate errs low.";

export const statusLabels: Record<PourHistoryData["pour"]["status"], string> = {
  curing: "Curing",
  stripped: "Stripped",
  ready_to_ship: "Ready to ship",
  shipped: "Shipped",
  void: "Void",
};

export const modelLabels: Record<StrengthModel, string> = {
  log: "Logarithmic, S = a + b log10(M)",
  hyperbolic: "Hyperbolic",
  exponential: "Exponential",
};

export const sensorKindLabels = {
  bag: "Cure bag",
  embedded: "Embedded probe",
  bin: "Aggregate bin",
  ambient: "Air",
} as const;

export const releaseKindLabels = { strip: "Strip", ship: "Ship" } as const;

export const episodeStateLabels = {
  open: "Open",
  acknowledged: "Acknowledged",
  cleared: "Cleared",
} as const;

export function strengthText(mpa: number | null, units: UnitSystem): string {
  if (mpa === null) return "—";
  const d = displayStrength(mpa, units);
  return `${d.value} ${d.unit}`;
}

export function tempText(c: number | null, units: UnitSystem, digits = 1): string {
  if (c === null) return "—";
  const d = displayTemp(c, units, digits);
  return `${d.value} ${d.unit}`;
}

export function ttfText(ttfCH: number | null, units: UnitSystem): string {
  if (ttfCH === null) return "—";
  const d = displayTtf(ttfCH, units);
  return `${d.value} ${d.unit}`;
}

export function hoursText(h: number): string {
  return h >= 48 ? `${(h / 24).toFixed(1)} d` : `${h.toFixed(1)} h`;
}

/** Where a threshold stands: reached (when), forecast (when), or why neither is known. */
export function milestoneText(
  m: HistoryMilestone,
  calibrated: boolean,
  timeZone: string,
): { state: "reached" | "forecast" | "waiting" | "unknown"; text: string } {
  if (!calibrated) return { state: "unknown", text: "Mix not calibrated: no estimate" };
  if (m.reachedAtMs !== null)
    return {
      state: "reached",
      text: `Reached ${formatDateTime(m.reachedAtMs, timeZone, "short")}`,
    };
  if (m.forecastAtMs !== null)
    return {
      state: "forecast",
      text: `Forecast ${formatDateTime(m.forecastAtMs, timeZone, "short")}`,
    };
  if (m.targetTtfCH === null)
    return { state: "unknown", text: "Beyond what the mix's curve can reach" };
  return { state: "waiting", text: "Not reached" };
}

/** The pieces of a pour in one line: "24 × Post base 8 in., 6 × Anchor block". */
export function productsText(products: PourHistoryData["products"]): string {
  if (products.length === 0) return "None recorded";
  return products.map((p) => `${p.pieceCount} × ${p.product}`).join(", ");
}
