/**
 * A pour's cure history as CSV: a header block of "#" lines (plant, pour, mix, cast_at,
 * generated_at), then one row per reading in each sensor's window with the sensor's running
 * temperature-time factor and strength at that reading, then the pour's alert episodes with
 * what was done about them as a closing block of "#" lines (so a reader that skips comments
 * still gets the readings table alone). Streamed one sensor at a time, so a long pour is
 * never held whole as text.
 */
import Papa from "papaparse";
import { exportFileName, maturityTrack } from "@/domain/history";
import { strengthAt } from "@/domain/strength/curves";
import { ruleKinds } from "@/domain/alerts/rules";
import { mpaToPsi } from "@/domain/units";
import { ackViaOf } from "../db/queries/alertViews";
import { listHistoryAssignments, listPourAlertEpisodes, readingRows } from "../db/queries/history";
import { getSetting } from "../db/queries/settings";
import { currentCurve, getPourWithMix } from "../db/queries/strength";

export const CSV_COLUMNS = ["ts", "sensor", "temp_c", "rh_pct", "ttf_c_h", "strength_psi"] as const;
/** The closing block's columns: one "# alert" line per episode, values SI in `value_unit`. */
export const CSV_ALERT_COLUMNS = [
  "id",
  "rule",
  "severity",
  "sensor",
  "state",
  "started_at",
  "opened_at",
  "worst_value",
  "value_unit",
  "acknowledged_at",
  "acknowledged_by",
  "ack_via",
  "ack_note",
  "cleared_at",
] as const;
const NEWLINE = "\r\n";
/** Rows turned to text at a time, so one sensor's week of minutes is sent in pieces. */
const ROWS_PER_CHUNK = 5_000;

const iso = (ms: number) => new Date(ms).toISOString();

/** The CSV of a pour's history as a stream, with its file name; undefined for no such pour. */
export function pourHistoryCsv(
  pourId: number,
  nowMs = Date.now(),
): { fileName: string; stream: ReadableStream<Uint8Array> } | undefined {
  const found = getPourWithMix(pourId);
  if (!found) return undefined;
  const { pour, mix } = found;
  const curve = currentCurve(mix)?.curve ?? null;
  const params = { datumC: mix.datumTempC, activationEnergyJMol: mix.activationEnergyJMol };
  const assignments = listHistoryAssignments(pourId);
  const encoder = new TextEncoder();

  const head =
    Papa.unparse(
      [
        ["# plant", getSetting("plant_name")],
        ["# pour", pour.code],
        ["# mix", mix.name],
        ["# cast_at", iso(pour.castAt)],
        ["# generated_at", iso(nowMs)],
      ],
      { newline: NEWLINE },
    ) +
    NEWLINE +
    Papa.unparse([[...CSV_COLUMNS]], { newline: NEWLINE }) +
    NEWLINE;

  const isoOrEmpty = (ms: number | null) => (ms === null ? "" : iso(ms));
  const oneLine = (text: string | null) => (text ?? "").replace(/\s*[\r\n]+\s*/g, " ");
  const episodes = listPourAlertEpisodes(
    pourId,
    assignments.map((a) => ({
      sensorId: a.sensorId,
      fromMs: Math.max(pour.castAt, a.fromAt),
      toMs: a.toAt,
    })),
  );
  const via = ackViaOf(episodes.map((e) => e.id));
  const tail =
    Papa.unparse(
      [
        ["# alerts", ...CSV_ALERT_COLUMNS],
        ...episodes.map((e) => {
          const unit = ruleKinds[e.ruleKind].unit;
          return [
            "# alert",
            e.id,
            oneLine(e.rule),
            e.severity,
            e.sensorId ?? "",
            e.state,
            iso(e.startedAt),
            iso(e.openedAt),
            e.worstValue ?? "",
            unit === "none" ? "mpa" : unit,
            isoOrEmpty(e.acknowledgedAt),
            oneLine(e.acknowledgedBy),
            via.get(e.id) ?? "",
            oneLine(e.ackNote),
            isoOrEmpty(e.clearedAt),
          ];
        }),
      ],
      { newline: NEWLINE },
    ) + NEWLINE;

  let next = 0;
  let pending: (string | number | null)[][] = [];
  let sent = 0;
  const stream = new ReadableStream<Uint8Array>({
    start(controller) {
      controller.enqueue(encoder.encode(head));
    },
    pull(controller) {
      // Send what is left of the current sensor, or read the next one.
      if (sent >= pending.length) {
        const a = assignments[next++];
        if (!a) {
          controller.enqueue(encoder.encode(tail));
          controller.close();
          return;
        }
        const fromMs = Math.max(pour.castAt, a.fromAt);
        const toMs = a.toAt ?? Number.MAX_SAFE_INTEGER;
        const rows = toMs >= fromMs ? readingRows(a.sensorId, fromMs, toMs) : [];
        const { track } = maturityTrack(rows, pour.castAt, params);
        // Each point names the row it came from; a row with no point (none here: the window
        // starts at cast and the key keeps one reading per time) shows no maturity.
        const ttfOfRow = new Float64Array(rows.length).fill(Number.NaN);
        for (let k = 0; k < track.length; k++) ttfOfRow[track.row[k]!] = track.ttfCH[k]!;
        sent = 0;
        pending = rows.map(([tsMs, tempC, rhPct], i) => {
          const ttf = ttfOfRow[i]!;
          const known = !Number.isNaN(ttf);
          return [
            iso(tsMs),
            a.sensorId,
            tempC,
            rhPct,
            known ? Math.round(ttf * 100) / 100 : null,
            known && curve ? Math.round(mpaToPsi(strengthAt(curve, ttf))) : null,
          ];
        });
      }
      const chunk = pending.slice(sent, sent + ROWS_PER_CHUNK);
      sent += chunk.length;
      if (chunk.length > 0)
        controller.enqueue(encoder.encode(Papa.unparse(chunk, { newline: NEWLINE }) + NEWLINE));
    },
  });
  return { fileName: exportFileName(pour.code, "cure-history.csv"), stream };
}
