/**
 * Mixes, calibration points and fits as the API answers them: snake_case, units in the names,
 * strengths in psi (and MPa beside them), proportions in lb/yd³ (and kg/m³), times ISO 8601.
 */
import {
  chartRangeCH,
  sampleCurve,
  thresholdStanding,
  type ThresholdStanding,
} from "@/domain/calibrationPoints";
import {
  maturityForStrength,
  MIN_CALIBRATION_AGES,
  type FitWarning,
  type StrengthCurve,
} from "@/domain/strength/curves";
import { kgM3ToLbYd3, mpaToPsi } from "@/domain/units";
import {
  datumAt,
  fitRecord,
  listFits,
  listPoints,
  type CalibrationRow,
  type CalibrationWithAuthor,
  type FitRecord,
  type MixListItem,
  type MixRow,
  type PointRow,
} from "../db/queries/mixes";

const iso = (ms: number | null | undefined) => (ms == null ? null : new Date(ms).toISOString());
const round = (v: number, digits: number) => Math.round(v * 10 ** digits) / 10 ** digits;
const psi = (mpa: number, digits = 1) => round(mpaToPsi(mpa), digits);
const lb = (kg: number | null) => (kg === null ? null : round(kgM3ToLbYd3(kg), 1));

/** A warning of a fit, on the wire. */
export interface WireWarning {
  code: string;
  message: string;
}

function storedWarnings(c: CalibrationRow): FitWarning[] {
  try {
    const w = JSON.parse(c.warningsJson ?? "[]") as unknown;
    return Array.isArray(w) ? (w as FitWarning[]) : [];
  } catch {
    return [];
  }
}

/** The curve of a stored fit. */
export function curveOf(c: CalibrationRow): StrengthCurve {
  return { model: c.model, ...JSON.parse(c.paramsJson) } as StrengthCurve;
}

/**
 * The short summary of a mix's current fit, as lists show it, with every warning the full view
 * gives: the fit's own, "datum-changed", and those about the strip and ship strengths.
 */
export function presentCalibrationSummary(mix: MixRow, c: CalibrationRow | null) {
  if (!c) return null;
  const full = fitView(mix, { ...c, createdByName: null }, false);
  return {
    id: c.id,
    model: c.model,
    r2: c.r2,
    point_count: c.pointCount,
    warnings: full.warnings,
    created_at: iso(c.createdAt),
  };
}

function datumWarning(thenC: number, nowC: number): WireWarning {
  return {
    code: "datum-changed",
    message: `This fit used maturity at a datum of ${thenC} °C; the mix now uses ${nowC} °C. Fit again.`,
  };
}

/** The datum temperature of the maturity a fit rested on. */
function datumAtFit(mix: MixRow, c: CalibrationRow, record: FitRecord | null): number {
  return record?.datumC ?? datumAt(mix, c.createdAt);
}

/** A mix as GET /api/v1/mixes and /api/v1/mixes/{id} answer it. */
export function presentMix(item: MixListItem) {
  const m = item.mix;
  return {
    id: m.id,
    name: m.name,
    description: m.description,
    design_strength_psi: psi(m.designStrengthMpa, 2),
    strip_strength_psi: psi(m.stripStrengthMpa, 2),
    ship_strength_psi: psi(m.shipStrengthMpa, 2),
    design_strength_mpa: round(m.designStrengthMpa, 4),
    strip_strength_mpa: round(m.stripStrengthMpa, 4),
    ship_strength_mpa: round(m.shipStrengthMpa, 4),
    datum_temp_c: m.datumTempC,
    activation_energy_j_mol: m.activationEnergyJMol,
    placing_temp_min_c: m.placingTempMinC,
    placing_temp_max_c: m.placingTempMaxC,
    cement_lb_yd3: lb(m.cementKgM3),
    scm_lb_yd3: lb(m.scmKgM3),
    water_lb_yd3: lb(m.waterKgM3),
    fine_agg_lb_yd3: lb(m.fineAggKgM3),
    coarse_agg_lb_yd3: lb(m.coarseAggKgM3),
    cement_kg_m3: m.cementKgM3 === null ? null : round(m.cementKgM3, 1),
    scm_kg_m3: m.scmKgM3 === null ? null : round(m.scmKgM3, 1),
    water_kg_m3: m.waterKgM3 === null ? null : round(m.waterKgM3, 1),
    fine_agg_kg_m3: m.fineAggKgM3 === null ? null : round(m.fineAggKgM3, 1),
    coarse_agg_kg_m3: m.coarseAggKgM3 === null ? null : round(m.coarseAggKgM3, 1),
    fine_agg_moisture_pct: m.fineAggMoisturePct,
    coarse_agg_moisture_pct: m.coarseAggMoisturePct,
    water_cm_ratio:
      m.waterKgM3 !== null && m.cementKgM3 !== null && m.cementKgM3 + (m.scmKgM3 ?? 0) > 0
        ? round(m.waterKgM3 / (m.cementKgM3 + (m.scmKgM3 ?? 0)), 3)
        : null,
    active: m.active,
    point_count: item.pointCount,
    calibration: presentCalibrationSummary(m, item.calibration),
    created_at: iso(m.createdAt),
    updated_at: iso(m.updatedAt),
  };
}
export type MixJson = ReturnType<typeof presentMix>;

/** A calibration point as the points routes answer it. */
export function presentPoint(p: PointRow) {
  return {
    id: p.id,
    mix_id: p.mixId,
    age_h: p.ageH === null ? null : round(p.ageH, 3),
    ttf_c_h: round(p.ttfCH, 1),
    equivalent_age_h: p.equivalentAgeH === null ? null : round(p.equivalentAgeH, 2),
    strength_psi: psi(p.strengthMpa, 1),
    strength_mpa: round(p.strengthMpa, 3),
    specimens: p.specimens,
    broken_at: iso(p.brokenAt),
    upload_id: p.uploadId,
    created_at: iso(p.createdAt),
  };
}
export type PointJson = ReturnType<typeof presentPoint>;

/**
 * A fit's parameters in psi-friendly form and in MPa (the stored form), by model:
 * - log, S = a + b·log10(M): a_psi, b_psi_per_decade, a_mpa, b_mpa_per_decade;
 * - hyperbolic, S = Su·k(M − M0)/[1 + k(M − M0)]: su_psi, su_mpa, k_per_c_h, m0_c_h;
 * - exponential, S = Su·exp[−(τ/M)^β]: su_psi, su_mpa, tau_c_h, beta.
 * M is the temperature-time factor in °C·h with the mix's datum temperature.
 */
export function presentParams(curve: StrengthCurve): Record<string, number> {
  switch (curve.model) {
    case "log":
      return {
        a_psi: mpaToPsi(curve.aMpa),
        b_psi_per_decade: mpaToPsi(curve.bMpaPerDecade),
        a_mpa: curve.aMpa,
        b_mpa_per_decade: curve.bMpaPerDecade,
      };
    case "hyperbolic":
      return {
        su_psi: mpaToPsi(curve.suMpa),
        su_mpa: curve.suMpa,
        k_per_c_h: curve.kPerCH,
        m0_c_h: curve.m0CH,
      };
    case "exponential":
      return {
        su_psi: mpaToPsi(curve.suMpa),
        su_mpa: curve.suMpa,
        tau_c_h: curve.tauCH,
        beta: curve.beta,
      };
  }
}

/** The curve's formula in words, with M in °C·h. */
export const equations: Record<StrengthCurve["model"], string> = {
  log: "S = a + b·log10(M)",
  hyperbolic: "S = Su·k(M − M0) / [1 + k(M − M0)]",
  exponential: "S = Su·exp[−(τ/M)^β]",
};

/** The strength (MPa) the curve's formula gives, without the floor at 0, as the fit's residuals use it. */
function formulaMpa(curve: StrengthCurve, m: number): number {
  switch (curve.model) {
    case "log":
      return curve.aMpa + curve.bMpaPerDecade * Math.log10(m);
    case "hyperbolic": {
      const u = curve.kPerCH * (m - curve.m0CH);
      return (curve.suMpa * u) / (1 + u);
    }
    case "exponential":
      return curve.suMpa * Math.exp(-((curve.tauCH / m) ** curve.beta));
  }
}

const standingWords = {
  below: "below the earliest break",
  above: "beyond the latest break",
} as const;

export interface FitContext {
  mix: MixRow;
  /** The points the fit rested on, where known. */
  record: FitRecord | null;
  /** The datum temperature of the points' maturity when the fit was made. */
  datumAtFitC: number;
  current: boolean;
  /** Include the points and the curve for drawing (the current fit; history leaves them out). */
  detailed: boolean;
  createdByName: string | null;
}

/**
 * A fit as the calibration routes answer it: its parameters, R², RMSE, the points with fitted
 * values and residuals, the curve sampled for drawing with its band (± one RMSE), the maturity
 * the strip and ship strengths need, and every warning: the fit's own ("few-ages", "poor-fit",
 * …) and those that depend on the mix now ("datum-changed", "threshold-outside-breaks",
 * "threshold-unreachable").
 */
export function presentFit(c: CalibrationRow, ctx: FitContext) {
  const curve = curveOf(c);
  const pts = ctx.record?.points ?? [];
  const fitted = pts.map((p) => formulaMpa(curve, p.ttfCH));
  const rmseMpa =
    ctx.record?.rmseMpa ??
    (pts.length > 0
      ? Math.sqrt(pts.reduce((s, p, i) => s + (p.strengthMpa - fitted[i]!) ** 2, 0) / pts.length)
      : null);
  const ttfs = pts.map((p) => p.ttfCH);
  const warnings: WireWarning[] = storedWarnings(c).map((w) => ({
    code: w.code,
    message: w.message,
  }));
  if (ctx.datumAtFitC !== ctx.mix.datumTempC)
    warnings.push(datumWarning(ctx.datumAtFitC, ctx.mix.datumTempC));
  const thresholds = {
    strip: { strengthMpa: ctx.mix.stripStrengthMpa, label: "strip" },
    ship: { strengthMpa: ctx.mix.shipStrengthMpa, label: "ship" },
  };
  const readThreshold = (t: { strengthMpa: number; label: string }) => {
    // Without the fit's points, where a threshold lies against them is not known.
    const s: { ttfCH: number | null; standing: ThresholdStanding | "unknown" } =
      ttfs.length > 0
        ? thresholdStanding(curve, t.strengthMpa, ttfs)
        : { ttfCH: maturityForStrength(curve, t.strengthMpa), standing: "unknown" };
    if (s.ttfCH === null) s.standing = "unreachable";
    if (s.standing === "unreachable") {
      warnings.push({
        code: "threshold-unreachable",
        message: `The ${t.label} strength is never reached on this curve.`,
      });
    } else if (s.standing === "below" || s.standing === "above") {
      warnings.push({
        code: "threshold-outside-breaks",
        message: `The ${t.label} strength lies ${standingWords[s.standing]}: there the curve is read outside the breaks it was fitted to. Breaks at an age near ${t.label === "strip" ? "stripping" : "shipping"} would support it.`,
      });
    }
    return {
      strength_psi: psi(t.strengthMpa, 1),
      ttf_c_h: s.ttfCH === null ? null : round(s.ttfCH, 1),
      standing: s.standing,
    };
  };
  const strip = readThreshold(thresholds.strip);
  const ship = readThreshold(thresholds.ship);

  const base = {
    id: c.id,
    mix_id: c.mixId,
    model: c.model,
    equation: equations[c.model],
    params: presentParams(curve),
    r2: c.r2,
    rmse_psi: rmseMpa === null ? null : psi(rmseMpa, 1),
    rmse_mpa: rmseMpa === null ? null : round(rmseMpa, 4),
    point_count: c.pointCount,
    ages: pts.length > 0 ? new Set(ttfs).size : null,
    min_ages: MIN_CALIBRATION_AGES,
    datum_temp_c: ctx.datumAtFitC,
    warnings,
    thresholds: { strip, ship },
    current: ctx.current,
    source: ctx.record?.source ?? null,
    created_at: iso(c.createdAt),
    created_by: ctx.createdByName,
  };
  if (!ctx.detailed) return base;
  let drawn: { ttf_c_h: number; strength_psi: number }[] = [];
  if (ttfs.length > 0) {
    const { fromCH, toCH } = chartRangeCH(ttfs, [strip.ttf_c_h, ship.ttf_c_h]);
    drawn = sampleCurve(curve, fromCH, toCH, 64).map((p) => ({
      ttf_c_h: round(p.ttfCH, 1),
      strength_psi: psi(p.strengthMpa, 1),
    }));
  }
  return {
    ...base,
    band_psi: rmseMpa === null ? null : psi(rmseMpa, 1),
    points: pts.map((p, i) => ({
      ttf_c_h: round(p.ttfCH, 1),
      strength_psi: psi(p.strengthMpa, 1),
      fitted_psi: psi(fitted[i]!, 1),
      residual_psi: psi(p.strengthMpa - fitted[i]!, 1),
    })),
    curve: drawn,
  };
}
export type FitJson = ReturnType<typeof presentFit>;

/**
 * One stored fit as the API answers it. Its points come from its audit entry; a fit made before
 * Plinth kept them there (the demo's) is shown with the mix's stored points when their number
 * matches the fit's.
 */
export function fitView(mix: MixRow, c: CalibrationWithAuthor, detailed: boolean) {
  let record = fitRecord(c.id);
  if (!record) {
    const stored = listPoints(mix.id);
    record =
      stored.length === c.pointCount
        ? {
            datumC: null,
            rmseMpa: null,
            points: stored.map((p) => ({ ttfCH: p.ttfCH, strengthMpa: p.strengthMpa })),
            source: "stored_points",
          }
        : null;
  }
  return presentFit(c, {
    mix,
    record,
    datumAtFitC: datumAtFit(mix, c, record),
    current: mix.currentCalibrationId === c.id,
    detailed,
    createdByName: c.createdByName,
  });
}

/** GET /api/v1/mixes/{id}/calibration: the current fit in full, and every fit, newest first. */
export function calibrationView(mix: MixRow) {
  const fits = listFits(mix.id);
  const current = fits.find((f) => f.id === mix.currentCalibrationId);
  return {
    mix_id: mix.id,
    current: current ? fitView(mix, current, true) : null,
    history: fits.map((f) => fitView(mix, f, false)),
  };
}
export type CalibrationViewJson = ReturnType<typeof calibrationView>;
