/**
 * What the mix islands share: the shapes the mix API answers with, and numbers shown and read in
 * the person's own units (psi or MPa, °F or °C). The API speaks psi and °C; conversion is here, once.
 */
import { cToF, fToC, mpaToPsi, psiToMpa, type UnitSystem } from "@/domain/units";

export interface Warning {
  code: string;
  message: string;
}

/** A mix as GET /api/v1/mixes/{id} answers it. */
export interface MixItem {
  id: number;
  name: string;
  description: string | null;
  design_strength_psi: number;
  strip_strength_psi: number;
  ship_strength_psi: number;
  datum_temp_c: number;
  activation_energy_j_mol: number;
  placing_temp_min_c: number | null;
  placing_temp_max_c: number | null;
  cement_lb_yd3: number | null;
  scm_lb_yd3: number | null;
  water_lb_yd3: number | null;
  fine_agg_lb_yd3: number | null;
  coarse_agg_lb_yd3: number | null;
  cement_kg_m3: number | null;
  scm_kg_m3: number | null;
  water_kg_m3: number | null;
  fine_agg_kg_m3: number | null;
  coarse_agg_kg_m3: number | null;
  fine_agg_moisture_pct: number | null;
  coarse_agg_moisture_pct: number | null;
  point_count: number;
  calibration: {
    id: number;
    model: string;
    r2: number | null;
    point_count: number;
    warnings: Warning[];
    created_at: string | null;
  } | null;
}

/** A calibration point as GET /api/v1/mixes/{id}/points answers it. */
export interface PointItem {
  id: number;
  age_h: number | null;
  ttf_c_h: number;
  equivalent_age_h: number | null;
  strength_psi: number;
  strength_mpa: number;
  specimens: string | null;
  broken_at: string | null;
  upload_id: number | null;
  created_at: string | null;
}

export type ThresholdStanding = "within" | "below" | "above" | "unreachable" | "unknown";

/** A fit as the calibration routes answer it (the current one carries points and curve). */
export interface FitItem {
  id: number;
  mix_id: number;
  model: "log" | "hyperbolic" | "exponential";
  equation: string;
  params: Record<string, number>;
  r2: number | null;
  rmse_psi: number | null;
  point_count: number;
  ages: number | null;
  min_ages: number;
  datum_temp_c: number;
  warnings: Warning[];
  thresholds: Record<
    "strip" | "ship",
    { strength_psi: number; ttf_c_h: number | null; standing: ThresholdStanding }
  >;
  current: boolean;
  created_at: string | null;
  created_by: string | null;
  band_psi?: number | null;
  points?: { ttf_c_h: number; strength_psi: number; fitted_psi: number; residual_psi: number }[];
  curve?: { ttf_c_h: number; strength_psi: number }[];
}

export interface CalibrationView {
  mix_id: number;
  current: FitItem | null;
  history: FitItem[];
}

export const modelLabels: Record<FitItem["model"], string> = {
  log: "Logarithmic: S = a + b·log M",
  hyperbolic: "Hyperbolic: S = Su·k(M − M0) / [1 + k(M − M0)]",
  exponential: "Exponential: S = Su·exp[−(τ/M)^β]",
};
export const modelNames: Record<FitItem["model"], string> = {
  log: "Logarithmic",
  hyperbolic: "Hyperbolic",
  exponential: "Exponential",
};

export const strengthUnit = (u: UnitSystem) => (u === "us" ? "psi" : "MPa");
export const tempUnit = (u: UnitSystem) => (u === "us" ? "°F" : "°C");

const nf0 = new Intl.NumberFormat("en-US", { maximumFractionDigits: 0 });
const nf1 = new Intl.NumberFormat("en-US", { minimumFractionDigits: 1, maximumFractionDigits: 1 });

/** A strength given in psi, as the person reads it: "3,500 psi" or "24.1 MPa". */
export function strengthText(psi: number, u: UnitSystem, withUnit = true): string {
  const v = u === "us" ? nf0.format(Math.round(psi / 10) * 10) : nf1.format(psiToMpa(psi));
  return withUnit ? `${v} ${strengthUnit(u)}` : v;
}

/** A strength in psi in the person's unit, as a plain number (for charts). */
export const strengthValue = (psi: number, u: UnitSystem) => (u === "us" ? psi : psiToMpa(psi));

/** psi from a number typed in the person's unit. */
export const strengthToPsi = (v: number, u: UnitSystem) => (u === "us" ? v : mpaToPsi(v));

/** A temperature given in °C, as the person reads it: "14 °F" or "−10 °C". */
export function tempText(c: number, u: UnitSystem): string {
  const v = u === "us" ? cToF(c) : c;
  return `${Number(v.toFixed(1)).toLocaleString("en-US")} ${tempUnit(u)}`;
}

/** °C from a number typed in the person's unit. */
export const tempToC = (v: number, u: UnitSystem) => (u === "us" ? fToC(v) : v);
/** A temperature in °C as the number the person would type. */
export const tempInput = (c: number, u: UnitSystem) =>
  String(Number((u === "us" ? cToF(c) : c).toFixed(1)));

/** A maturity in °C·h: "2,310 °C·h". */
export const ttfText = (ttfCH: number) => `${nf0.format(ttfCH)} °C·h`;

/** An age in hours as people say it: "18 h", "3 d", "2.5 d". */
export function ageText(ageH: number): string {
  if (ageH < 48 && !Number.isInteger(ageH / 24)) return `${Number(ageH.toFixed(1))} h`;
  return `${Number((ageH / 24).toFixed(2))} d`;
}

/** A number typed by a person: "4,150" and "4150" are the same; "28,6" is 28.6. */
export function readTyped(text: string): number {
  const t = text.trim().replace(/\s/g, "");
  if (t === "") return Number.NaN;
  if (/^[+-]?\d{1,3}(,\d{3})+(\.\d+)?$/.test(t)) return Number(t.replace(/,/g, ""));
  if (/^[+-]?\d*,\d+$/.test(t)) return Number(t.replace(",", "."));
  return /^[+-]?(\d+(\.\d*)?|\.\d+)$/.test(t) ? Number(t) : Number.NaN;
}

export async function sendJson(path: string, method: string, body?: unknown): Promise<Response> {
  return fetch(path, {
    method,
    headers: body === undefined ? {} : { "content-type": "application/json" },
    body: body === undefined ? null : JSON.stringify(body),
  });
}

/** The caution every calibration view carries: the curve governs every estimate of the mix. */
export function calibrationCaution(mixName: string): string {
  return `This calibration governs every strength estimate of ${mixName}'s pours, and so every strip and ship decision made on them. Estimates support QC's judgement; they do not replace cylinder breaks, the engineer of record, local codes or licensed practice.`;
}
