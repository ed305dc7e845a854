/**
 * Pours as the API and the pages show them: snake_case, units in the names, SI with psi for
 * strengths (the contract's strength_psi), times as ISO 8601.
 */
import { compareBreak, RECALIBRATE_WARNING } from "@/domain/breakCheck";
import { dischargeTempFlag, placingRange } from "@/domain/freshChecks";
import { allowedTransitions, statusLabels, type PourStatus } from "@/domain/pourLifecycle";
import { mpaToPsi } from "@/domain/units";
import { listBreaksForPour, type BreakWithEnterer } from "../db/queries/breaks";
import {
  getMix,
  getPour,
  listAssignments,
  listProducts,
  releaseFlags,
  splitCylinderIds,
  userName,
  type AssignmentDetail,
  type MixRow,
  type PourListItem,
  type PourRow,
} from "../db/queries/pours";

const iso = (ms: number | null) => (ms === null ? null : new Date(ms).toISOString());
const round = (v: number, digits: number) => Math.round(v * 10 ** digits) / 10 ** digits;
const psi = (mpa: number) => Math.round(mpaToPsi(mpa));

export function presentFreshTests(pour: PourRow, mix: MixRow) {
  const range = placingRange(mix.placingTempMinC, mix.placingTempMaxC);
  return {
    discharge_temp_c: pour.dischargeTempC,
    discharge_temp_flag: dischargeTempFlag(pour.dischargeTempC, range),
    placing_temp_min_c: range.minC,
    placing_temp_max_c: range.maxC,
    placing_range_source: range.source,
    slump_mm: pour.slumpMm,
    spread_mm: pour.spreadMm,
    air_pct: pour.airPct,
    unit_weight_kg_m3: pour.unitWeightKgM3,
    cylinder_ids: splitCylinderIds(pour.cylinderIds),
  };
}

export function presentMix(mix: MixRow) {
  return {
    id: mix.id,
    name: mix.name,
    design_strength_psi: psi(mix.designStrengthMpa),
    strip_strength_psi: psi(mix.stripStrengthMpa),
    ship_strength_psi: psi(mix.shipStrengthMpa),
    datum_temp_c: mix.datumTempC,
    activation_energy_j_mol: mix.activationEnergyJMol,
    placing_temp_min_c: mix.placingTempMinC,
    placing_temp_max_c: mix.placingTempMaxC,
    calibrated: mix.currentCalibrationId !== null,
  };
}

export function presentAssignment(a: AssignmentDetail) {
  return {
    id: a.id,
    sensor: a.sensorId,
    label: a.label,
    kind: a.kind,
    area: a.areaName,
    location: a.location,
    from: new Date(a.fromAt).toISOString(),
    to: iso(a.toAt),
    on_pour: a.toAt === null,
    last_seen_at: iso(a.lastSeenAt),
    last_temp_c: a.lastTempC,
    last_rh: a.lastRhPct,
    assigned_by: a.createdByName,
  };
}

export function presentBreak(b: BreakWithEnterer) {
  const cmp = compareBreak(b.strengthMpa, b.estimateMpa);
  return {
    id: b.id,
    pour_id: b.pourId,
    specimen_id: b.specimenId,
    broken_at: new Date(b.brokenAt).toISOString(),
    age_h: b.ageH === null ? null : round(b.ageH, 1),
    strength_psi: psi(b.strengthMpa),
    strength_mpa: round(b.strengthMpa, 2),
    estimate_psi: b.estimateMpa === null ? null : psi(b.estimateMpa),
    estimate_mpa: b.estimateMpa === null ? null : round(b.estimateMpa, 2),
    ratio: cmp.ratio === null ? null : round(cmp.ratio, 3),
    warning: cmp.warning,
    lab: b.lab,
    note: b.note,
    entered_by: b.enteredByName,
    created_at: iso(b.createdAt),
  };
}

export function breaksSummary(list: ReturnType<typeof presentBreak>[]) {
  const ratios = list.map((b) => b.ratio).filter((r): r is number => r !== null);
  const below = list.filter((b) => b.warning !== null).length;
  return {
    count: list.length,
    below_estimate: below,
    lowest_ratio: ratios.length ? Math.min(...ratios) : null,
    last_broken_at: list.length ? list[list.length - 1]!.broken_at : null,
    warning: below > 0 ? RECALIBRATE_WARNING : null,
  };
}

export function presentPourListItem(item: PourListItem, nowMs = Date.now()) {
  const { pour } = item;
  return {
    id: pour.id,
    code: pour.code,
    status: pour.status,
    cast_at: iso(pour.castAt),
    age_h: round(Math.max(0, nowMs - pour.castAt) / 3_600_000, 1),
    mix: { id: pour.mixId, name: item.mixName },
    bed: pour.bed,
    products: item.products.map((p) => ({ product: p.product, piece_count: p.pieceCount })),
    piece_count: item.products.reduce((n, p) => n + p.pieceCount, 0),
    sensors: item.sensorIds,
  };
}

export type PourListItemOut = ReturnType<typeof presentPourListItem>;

/** The whole pour (GET /api/v1/pours/{id}), or undefined when there is no such pour. */
export function presentPour(id: number, nowMs = Date.now()) {
  const pour = getPour(id);
  if (!pour) return undefined;
  const mix = getMix(pour.mixId)!;
  const products = listProducts(id);
  const assignments = listAssignments(id).map(presentAssignment);
  const breaks = listBreaksForPour(id).map(presentBreak);
  const flags = releaseFlags(id);
  const status = pour.status as PourStatus;
  return {
    id: pour.id,
    code: pour.code,
    status,
    status_label: statusLabels[status],
    cast_at: new Date(pour.castAt).toISOString(),
    age_h: round(Math.max(0, nowMs - pour.castAt) / 3_600_000, 1),
    bed: pour.bed,
    notes: pour.notes,
    mix: presentMix(mix),
    products: products.map((p) => ({
      product: p.product,
      piece_count: p.pieceCount,
      marks: p.marks,
    })),
    piece_count: products.reduce((n, p) => n + p.pieceCount, 0),
    sensors: assignments.filter((a) => a.on_pour).map((a) => a.sensor),
    assignments,
    fresh_tests: presentFreshTests(pour, mix),
    breaks: breaksSummary(breaks),
    releases: { strip: flags.hasStripRelease, ship: flags.hasShipRelease },
    next_statuses: allowedTransitions(status, flags),
    stripped_at: iso(pour.strippedAt),
    shipped_at: iso(pour.shippedAt),
    created_at: iso(pour.createdAt),
    created_by: userName(pour.createdBy),
    updated_at: iso(pour.updatedAt),
  };
}

export type PourOut = NonNullable<ReturnType<typeof presentPour>>;
export type BreakOut = ReturnType<typeof presentBreak>;
export type AssignmentOut = ReturnType<typeof presentAssignment>;
