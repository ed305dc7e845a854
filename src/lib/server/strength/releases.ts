/**
 * Strip and ship releases at the edge: gathers what a release rests on (the pour's strength view
 * as of now, the governing sensor's unrounded figures, the calibration in force, what is missing
 * from the record), asks the pure decision (src/domain/release.ts), and records the release.
 * Also the wire form of a release (snake_case, units in names, psi as the contract has it).
 */
import {
  decideRelease,
  RELEASE_CAUTION,
  recordGaps,
  type PourStatus,
  type RecordGap,
  type ReleaseDecision,
  type ReleaseFacts,
  type ReleaseKind,
} from "@/domain/release";
import { strengthAt } from "@/domain/strength/curves";
import { mpaToPsi } from "@/domain/units";
import { readingsForAssignment } from "../db/queries/maturity";
import { insertRelease, listReleases, type ReleaseWithPerson } from "../db/queries/releases";
import { currentCurve, getPourWithMix, type MixRow, type PourRow } from "../db/queries/strength";
import { pourMaturity } from "./maturity";
import { pourStrength, type PourStrength } from "./pourStrength";

const iso = (ms: number) => new Date(ms).toISOString();
const round = (v: number, digits: number) => Math.round(v * 10 ** digits) / 10 ** digits;
const snake = (k: string) => k.replace(/[A-Z]/g, (c) => `_${c.toLowerCase()}`);

export interface GoverningFigures {
  sensorId: string;
  ttfCH: number;
  equivalentAgeH: number;
  /** Null when the mix is not calibrated. */
  estimateMpa: number | null;
}

export interface SensorGaps {
  sensor: string;
  gaps: RecordGap[];
}

/** Everything a release of this pour rests on, as of `asOfMs`. */
export interface ReleaseBasis {
  asOfMs: number;
  pour: PourRow;
  mix: MixRow;
  view: PourStrength;
  calibration: {
    id: number;
    model: string;
    params: Record<string, number>;
    r2: number | null;
  } | null;
  governing: GoverningFigures | null;
  missing: SensorGaps[];
  releases: ReleaseWithPerson[];
}

export const thresholdMpaOf = (mix: MixRow, kind: ReleaseKind): number =>
  kind === "strip" ? mix.stripStrengthMpa : mix.shipStrengthMpa;

/** The basis of a release of the pour now, or undefined when there is no such pour. */
export function releaseBasis(pourId: number, asOfMs = Date.now()): ReleaseBasis | undefined {
  const found = getPourWithMix(pourId);
  if (!found) return undefined;
  const view = pourStrength(pourId, asOfMs);
  if (!view) return undefined;
  const fit = currentCurve(found.mix);
  // The same sensors the view uses: those on the pour now, or its last ones if none is left.
  const all = pourMaturity(pourId);
  const current = all.filter((x) => x.a.toMs === null);
  const used = current.length > 0 ? current : all;
  const weakest = [...used].sort((x, y) => x.state.ttfCH - y.state.ttfCH)[0];
  const governing: GoverningFigures | null = weakest
    ? {
        sensorId: weakest.a.sensorId,
        ttfCH: weakest.state.ttfCH,
        equivalentAgeH: weakest.state.equivalentAgeH,
        estimateMpa: fit ? strengthAt(fit.curve, weakest.state.ttfCH) : null,
      }
    : null;
  const incomplete = new Set(view.sensors.filter((s) => !s.complete_record).map((s) => s.sensor));
  const missing: SensorGaps[] = used
    .filter(({ a }) => incomplete.has(a.sensorId))
    .map(({ a }) => ({
      sensor: a.sensorId,
      gaps: recordGaps(
        readingsForAssignment(a).map((r) => r.tsMs),
        // From cast, as the record's completeness counts it (a sensor put on late starts late).
        a.castAtMs,
        a.toMs ?? asOfMs,
      ),
    }));
  const { model, ...params } = fit?.curve ?? { model: "" };
  return {
    asOfMs,
    pour: found.pour,
    mix: found.mix,
    view,
    calibration: fit
      ? { id: fit.calibrationId, model, params: params as Record<string, number>, r2: fit.r2 }
      : null,
    governing,
    missing,
    releases: listReleases(pourId),
  };
}

/** The facts the pure decision needs, from a basis. */
export function releaseFacts(
  basis: ReleaseBasis,
  kind: ReleaseKind,
  overrideReason: string | null | undefined,
): ReleaseFacts {
  return {
    kind,
    pourStatus: basis.pour.status as PourStatus,
    released: basis.releases.map((r) => r.kind),
    calibrated: basis.calibration !== null,
    estimateMpa: basis.governing?.estimateMpa ?? null,
    thresholdMpa: thresholdMpaOf(basis.mix, kind),
    completeRecord: basis.view.complete_record,
    overrideReason,
  };
}

export function presentGaps(missing: SensorGaps[]) {
  return missing.flatMap((m) =>
    m.gaps.map((g) => ({ sensor: m.sensor, kind: g.kind, from: iso(g.fromMs), to: iso(g.toMs) })),
  );
}

/** What is stored as basis_json: the whole strength view and the calibration behind it. */
function basisDocument(
  basis: ReleaseBasis,
  decision: Extract<ReleaseDecision, { outcome: "allowed" }>,
) {
  const g = basis.governing;
  return {
    strength: basis.view,
    calibration: basis.calibration && {
      id: basis.calibration.id,
      model: basis.calibration.model,
      params: Object.fromEntries(
        Object.entries(basis.calibration.params).map(([k, v]) => [snake(k), v]),
      ),
      r2: basis.calibration.r2,
    },
    mix: {
      id: basis.mix.id,
      name: basis.mix.name,
      datum_temp_c: basis.mix.datumTempC,
      activation_energy_j_mol: basis.mix.activationEnergyJMol,
      strip_strength_mpa: basis.mix.stripStrengthMpa,
      ship_strength_mpa: basis.mix.shipStrengthMpa,
    },
    pour: {
      id: basis.pour.id,
      code: basis.pour.code,
      cast_at: iso(basis.pour.castAt),
      status_before: basis.pour.status,
    },
    governing: g && {
      sensor: g.sensorId,
      ttf_c_h: g.ttfCH,
      equivalent_age_h: g.equivalentAgeH,
      strength_mpa: g.estimateMpa,
    },
    missing: presentGaps(basis.missing),
    decision: { overridden: decision.overridden, warnings: decision.warnings },
  };
}

export type RecordOutcome =
  | {
      ok: true;
      release: ReleaseWithPerson;
      decision: Extract<ReleaseDecision, { outcome: "allowed" }>;
    }
  | { ok: false; decision: Exclude<ReleaseDecision, { outcome: "allowed" }> };

/**
 * Decides and, when allowed, records a release made by `userId` at `atMs`. The decision is taken
 * again inside the write transaction against the pour's releases as they are then.
 */
export function recordRelease(
  basis: ReleaseBasis,
  input: { kind: ReleaseKind; note: string | null; overrideReason: string | null; userId: number },
): RecordOutcome {
  const decision = decideRelease(releaseFacts(basis, input.kind, input.overrideReason));
  if (decision.outcome !== "allowed") return { ok: false, decision };
  const g = basis.governing;
  const seen: { late: Exclude<ReleaseDecision, { outcome: "allowed" }> | null } = { late: null };
  const release = insertRelease(
    {
      pourId: basis.pour.id,
      kind: input.kind,
      releasedBy: input.userId,
      releasedAt: basis.asOfMs,
      thresholdMpa: thresholdMpaOf(basis.mix, input.kind),
      estimateMpa: g?.estimateMpa ?? null,
      governingSensorId: g?.sensorId ?? null,
      ttfCH: g?.ttfCH ?? null,
      equivalentAgeH: g?.equivalentAgeH ?? null,
      completeRecord: basis.view.complete_record,
      basisJson: JSON.stringify(basisDocument(basis, decision)),
      overrideReason: input.overrideReason,
      note: input.note,
      caution: RELEASE_CAUTION,
    },
    decision.nextStatus,
    (kinds) => {
      const again = decideRelease({
        ...releaseFacts(basis, input.kind, input.overrideReason),
        released: kinds,
      });
      if (again.outcome !== "allowed") seen.late = again;
      return again.outcome === "allowed";
    },
  );
  if (!release) {
    return {
      ok: false,
      decision: seen.late ?? {
        outcome: "refused",
        reason: { code: "already-released", message: "The pour already has this release." },
      },
    };
  }
  return { ok: true, release, decision };
}

interface StoredBasis {
  decision?: {
    overridden?: { code: string; message: string }[];
    warnings?: { code: string; message: string }[];
  };
  missing?: { sensor: string; kind: string; from: string; to: string }[];
}

/** A release on the wire. Strength in psi (as the contract) and MPa, times ISO 8601. */
export function presentRelease(r: ReleaseWithPerson, { withBasis = true } = {}) {
  const basis = (r.basisJson ? JSON.parse(r.basisJson) : {}) as StoredBasis &
    Record<string, unknown>;
  return {
    id: r.id,
    pour_id: r.pourId,
    kind: r.kind,
    released_by: { id: r.releasedBy, name: r.releasedByName, email: r.releasedByEmail },
    released_at: iso(r.releasedAt),
    threshold_psi: Math.round(mpaToPsi(r.thresholdMpa)),
    threshold_mpa: round(r.thresholdMpa, 3),
    estimate_psi: r.estimateMpa === null ? null : Math.round(mpaToPsi(r.estimateMpa)),
    estimate_mpa: r.estimateMpa === null ? null : round(r.estimateMpa, 3),
    governing_sensor: r.governingSensorId,
    ttf_c_h: r.ttfCH === null ? null : round(r.ttfCH, 1),
    equivalent_age_h: r.equivalentAgeH === null ? null : round(r.equivalentAgeH, 2),
    complete_record: r.completeRecord,
    override_reason: r.overrideReason,
    overridden: basis.decision?.overridden ?? [],
    warnings: basis.decision?.warnings ?? [],
    missing: basis.missing ?? [],
    note: r.note,
    caution: r.caution,
    ...(withBasis ? { basis } : {}),
  };
}

export type PresentedRelease = ReturnType<typeof presentRelease>;
