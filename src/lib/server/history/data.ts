/**
 * Assembles a pour's whole cure record for the history page and the cure report: the pour, its
 * mix and calibration, each sensor's readings in its window with the running maturity and
 * strength at every reading (thinned for charts), the governing line over time, when strip and
 * ship were reached, breaks, releases, alert episodes and the audit entries touching the pour.
 * Everything is SI and epoch ms; the page and the report convert to the reader's units.
 */
import { recordCompleteAsOf, type MaturityState } from "@/domain/maturity/accumulator";
import { meanTempOverWindowC } from "@/domain/maturity/readings";
import {
  governingSeries,
  maturityTrack,
  thinRising,
  thinRows,
  timeGrid,
  ttfCrossingAt,
  type MaturityTrack,
  type ReadingRow,
} from "@/domain/history";
import {
  FORECAST_WINDOW_H,
  forecastThresholdAt,
  maturityForStrength,
  strengthAt,
  type StrengthCurve,
  type StrengthModel,
} from "@/domain/strength/curves";
import {
  currentCalibrationRecord,
  listHistoryAssignments,
  listPourAlertEpisodes,
  listPourAudit,
  listPourBreaks,
  listPourProducts,
  listPourReleases,
  readingRows,
  type AuditRecord,
  type BreakRecord,
  type EpisodeRecord,
  type HistoryAssignment,
  type ProductRow,
  type ReleaseRecord,
} from "../db/queries/history";
import { ackViaOf } from "../db/queries/alertViews";
import { getSetting } from "../db/queries/settings";
import { currentCurve, getPourWithMix, type MixRow, type PourRow } from "../db/queries/strength";

const H_MS = 3_600_000;
/** Temperature points sent for charts across all sensors, and the floor and cap per sensor. */
const TEMP_POINTS_BUDGET = 8_000;
const TEMP_POINTS_MIN = 300;
const TEMP_POINTS_MAX = 1_500;
/** Maturity points per sensor, and instants on the governing line. */
const MATURITY_POINTS_PER_SENSOR = 300;
const GOVERNING_POINTS = 400;

export interface HistorySensor {
  assignmentId: number;
  sensor: string;
  label: string | null;
  kind: HistoryAssignment["kind"];
  location: string | null;
  /** The window whose readings count: from max(cast, assignment start) to its end (null: still on). */
  fromMs: number;
  toMs: number | null;
  /** True when this sensor is among those decisions follow (on the pour now, or its last ones). */
  governs: boolean;
  readingCount: number;
  firstTsMs: number | null;
  lastTsMs: number | null;
  minTempC: number | null;
  maxTempC: number | null;
  ttfCH: number;
  equivalentAgeH: number;
  strengthMpa: number | null;
  completeRecord: boolean;
  /** Thinned for charts (extremes kept): readings in the window. */
  temps: { tsMs: number[]; tempC: number[]; rhPct: (number | null)[] };
  /** Thinned for charts (true points only): running maturity and strength. */
  maturity: { tsMs: number[]; ttfCH: number[]; strengthMpa: (number | null)[] };
}

export interface HistoryMilestone {
  thresholdMpa: number;
  /** The temperature-time factor the curve needs for the threshold; null without a curve. */
  targetTtfCH: number | null;
  reachedAtMs: number | null;
  forecastAtMs: number | null;
}

export interface PourHistoryData {
  asOfMs: number;
  plantName: string;
  timeZone: string;
  pour: PourRow;
  mix: MixRow;
  calibration: {
    model: StrengthModel;
    r2: number | null;
    pointCount: number;
    createdAtMs: number;
    curve: StrengthCurve;
  } | null;
  products: ProductRow[];
  sensors: HistorySensor[];
  governing: { tsMs: number[]; ttfCH: number[]; strengthMpa: (number | null)[]; sensor: string[] };
  /** The weakest of the governing sensors now. */
  governingSensor: string | null;
  completeRecord: boolean;
  strip: HistoryMilestone;
  ship: HistoryMilestone;
  breaks: BreakRecord[];
  releases: ReleaseRecord[];
  episodes: HistoryEpisode[];
  audit: AuditRecord[];
}

/** An alert episode of the pour with what was done about it, and how it was acknowledged. */
export type HistoryEpisode = EpisodeRecord & { ackVia: "web" | "sms" | null };

export interface HistoryOptions {
  asOfMs?: number;
}

/**
 * One sensor's part of the record. Its readings are read, folded and thinned one sensor at a
 * time, and only what the page needs is kept: a week of minutes is ten thousand rows a sensor,
 * and holding every sensor's rows at once would only make work for the garbage collector.
 */
interface Track {
  a: HistoryAssignment;
  fromMs: number;
  track: MaturityTrack;
  state: MaturityState;
  temps: HistorySensor["temps"];
  minTempC: number | null;
  maxTempC: number | null;
  /** The readings the forecast's mean temperature may use: those of the last hours. */
  recent: ReadingRow[];
}

/** The readings window of an assignment, as the strength view counts it. */
function windowOf(a: HistoryAssignment, castAtMs: number): { fromMs: number; toMs: number } {
  return { fromMs: Math.max(castAtMs, a.fromAt), toMs: a.toAt ?? Number.MAX_SAFE_INTEGER };
}

function milestone(
  thresholdMpa: number,
  curve: StrengthCurve | null,
  used: readonly Track[],
  open: boolean,
  asOfMs: number,
  datumC: number,
): HistoryMilestone {
  const targetTtfCH = curve ? maturityForStrength(curve, thresholdMpa) : null;
  const out: HistoryMilestone = {
    thresholdMpa,
    targetTtfCH,
    reachedAtMs: null,
    forecastAtMs: null,
  };
  if (targetTtfCH === null || used.length === 0) return out;
  // The pour reaches a threshold when its last sensor does (as the strength view tells it).
  const crossings = used.map((t) =>
    ttfCrossingAt(t.track.tsMs.subarray(0, t.track.length), t.track.ttfCH, targetTtfCH),
  );
  if (crossings.every((c) => c !== null)) {
    out.reachedAtMs = Math.max(...(crossings as number[]));
    return out;
  }
  if (!open) return out;
  let latest = 0;
  for (const t of used) {
    if (t.state.ttfCH >= targetTtfCH) continue;
    const at = forecastThresholdAt({
      asOfMs,
      ttfCH: t.state.ttfCH,
      meanTempC: meanTempOverWindowC(
        t.recent.map(([tsMs, tempC]) => ({ tsMs, tempC })),
        asOfMs,
        FORECAST_WINDOW_H,
      ),
      datumC,
      targetTtfCH,
    });
    if (at === null) return out;
    latest = Math.max(latest, at);
  }
  out.forecastAtMs = latest;
  return out;
}

/** The index of the first reading at or after `fromMs` (readings in time order). */
function firstIndexAtOrAfter(rows: readonly ReadingRow[], fromMs: number): number {
  let lo = 0;
  let hi = rows.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (rows[mid]![0] < fromMs) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

function columnsOfTemps(
  rows: readonly ReadingRow[],
  keep: readonly number[],
): HistorySensor["temps"] {
  return {
    tsMs: keep.map((i) => rows[i]![0]),
    tempC: keep.map((i) => rows[i]![1]),
    rhPct: keep.map((i) => rows[i]![2]),
  };
}

/**
 * The whole cure record of one pour, or undefined when there is no such pour. Reads each
 * sensor's readings once, off the (sensor_id, ts) key, and thins what charts will draw.
 */
export function pourHistoryData(
  pourId: number,
  options: HistoryOptions = {},
): PourHistoryData | undefined {
  const asOfMs = options.asOfMs ?? Date.now();
  const found = getPourWithMix(pourId);
  if (!found) return undefined;
  const { pour, mix } = found;
  const fit = currentCurve(mix);
  const record = fit ? currentCalibrationRecord(mix) : null;
  const curve = fit?.curve ?? null;
  const params = { datumC: mix.datumTempC, activationEnergyJMol: mix.activationEnergyJMol };
  const open =
    pour.status === "curing" || pour.status === "stripped" || pour.status === "ready_to_ship";

  const assignments = listHistoryAssignments(pourId);
  const tempPerSensor = Math.min(
    TEMP_POINTS_MAX,
    Math.max(TEMP_POINTS_MIN, Math.floor(TEMP_POINTS_BUDGET / Math.max(1, assignments.length))),
  );
  const tracks: Track[] = assignments.map((a) => {
    const w = windowOf(a, pour.castAt);
    const rows = w.toMs >= w.fromMs ? readingRows(a.sensorId, w.fromMs, w.toMs) : [];
    const { track, state } = maturityTrack(rows, pour.castAt, params);
    const keep = thinRows(rows, tempPerSensor, w.fromMs, rows.at(-1)?.[0]);
    let minTempC: number | null = null;
    let maxTempC: number | null = null;
    for (const [, tempC] of rows) {
      if (minTempC === null || tempC < minTempC) minTempC = tempC;
      if (maxTempC === null || tempC > maxTempC) maxTempC = tempC;
    }
    const recent = open
      ? rows.slice(firstIndexAtOrAfter(rows, asOfMs - (FORECAST_WINDOW_H + 2) * H_MS))
      : [];
    const temps = columnsOfTemps(rows, keep);
    return { a, fromMs: w.fromMs, track, state, temps, minTempC, maxTempC, recent };
  });

  // Decisions follow the sensors on the pour now; a pour with none left keeps its last ones.
  const current = tracks.filter((t) => t.a.toAt === null);
  const used = current.length > 0 ? current : tracks;
  const usedIds = new Set(used.map((t) => t.a.id));
  const closedAtMs = open ? asOfMs : (pour.shippedAt ?? asOfMs);

  const sensors: HistorySensor[] = tracks.map((t) => {
    const tsMs = t.track.tsMs.subarray(0, t.track.length);
    const maturity = thinRising(tsMs, MATURITY_POINTS_PER_SENSOR);
    const { minTempC, maxTempC } = t;
    const completeAsOf = Math.min(closedAtMs, t.a.toAt ?? closedAtMs);
    return {
      assignmentId: t.a.id,
      sensor: t.a.sensorId,
      label: t.a.label,
      kind: t.a.kind,
      location: t.a.location,
      fromMs: t.fromMs,
      toMs: t.a.toAt,
      governs: usedIds.has(t.a.id),
      readingCount: t.state.readingCount,
      firstTsMs: t.state.firstTsMs,
      lastTsMs: t.state.lastTsMs,
      minTempC,
      maxTempC,
      ttfCH: t.state.ttfCH,
      equivalentAgeH: t.state.equivalentAgeH,
      strengthMpa: curve ? strengthAt(curve, t.state.ttfCH) : null,
      completeRecord: recordCompleteAsOf(t.state, completeAsOf),
      temps: t.temps,
      maturity: {
        tsMs: maturity.map((i) => t.track.tsMs[i]!),
        ttfCH: maturity.map((i) => t.track.ttfCH[i]!),
        strengthMpa: maturity.map((i) => (curve ? strengthAt(curve, t.track.ttfCH[i]!) : null)),
      },
    };
  });

  const lastTs = Math.max(pour.castAt, ...tracks.map((t) => t.state.lastTsMs ?? 0));
  const gov = governingSeries(
    tracks.map((t) => ({
      sensor: t.a.sensorId,
      tsMs: t.track.tsMs.subarray(0, t.track.length),
      ttfCH: t.track.ttfCH,
      fromMs: t.fromMs,
      toMs: t.a.toAt,
    })),
    timeGrid(pour.castAt, lastTs, GOVERNING_POINTS),
  );
  const weakest = [...used].sort((x, y) => x.state.ttfCH - y.state.ttfCH)[0];

  const breaks = listPourBreaks(pourId);
  const releaseRows = listPourReleases(pourId);
  const episodeRows = listPourAlertEpisodes(
    pourId,
    tracks.map((t) => ({ sensorId: t.a.sensorId, fromMs: t.fromMs, toMs: t.a.toAt })),
  );
  const via = ackViaOf(episodeRows.map((e) => e.id));
  const episodes: HistoryEpisode[] = episodeRows.map((e) => ({
    ...e,
    ackVia: via.get(e.id) ?? null,
  }));
  const audit = listPourAudit({
    pourId,
    assignmentIds: assignments.map((a) => a.id),
    releaseIds: releaseRows.map((r) => r.id),
    breakIds: breaks.map((b) => b.id),
    episodeIds: episodes.map((e) => e.id),
    mixId: mix.id,
    cureFromMs: pour.castAt,
    cureToMs: open ? asOfMs : (pour.shippedAt ?? asOfMs),
  });

  return {
    asOfMs,
    plantName: getSetting("plant_name"),
    timeZone: getSetting("time_zone"),
    pour,
    mix,
    calibration:
      fit && record
        ? {
            model: record.model,
            r2: record.r2,
            pointCount: record.pointCount,
            createdAtMs: record.createdAt,
            curve: fit.curve,
          }
        : null,
    products: listPourProducts(pourId),
    sensors,
    governing: {
      tsMs: gov.map((g) => g.tsMs),
      ttfCH: gov.map((g) => g.ttfCH),
      strengthMpa: gov.map((g) => (curve ? strengthAt(curve, g.ttfCH) : null)),
      sensor: gov.map((g) => g.sensor),
    },
    governingSensor: weakest?.a.sensorId ?? null,
    completeRecord:
      used.length > 0 && sensors.filter((s) => s.governs).every((s) => s.completeRecord),
    strip: milestone(mix.stripStrengthMpa, curve, used, open, asOfMs, mix.datumTempC),
    ship: milestone(mix.shipStrengthMpa, curve, used, open, asOfMs, mix.datumTempC),
    breaks,
    releases: releaseRows,
    episodes,
    audit,
  };
}
