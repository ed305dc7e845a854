import {
  MAX_KEPT_ERRORS,
  PREVIEW_ROWS,
  timeFormatLabels,
  type LoggerFileRead,
  type LoggerRow,
} from "@/domain/loggerCsv";
import type { RowError, UploadListRow } from "@/lib/server/db/queries/uploads";
import type { Delimiter } from "./parse";

const iso = (ms: number | null) => (ms === null ? null : new Date(ms).toISOString());

const delimiterNames: Record<Delimiter, string> = {
  ",": "commas",
  ";": "semicolons",
  "\t": "tabs",
};

/** An upload in the history, as the API answers it. */
export function presentUpload(u: UploadListRow) {
  return {
    id: u.id,
    file_name: u.fileName,
    sensor: u.sensorId,
    uploaded_by: u.uploadedBy,
    created_at: new Date(u.createdAtMs).toISOString(),
    rows_in: u.rowsIn,
    rows_accepted: u.rowsAccepted,
    rows_duplicate: u.rowsDuplicate,
    rows_rejected: u.rowsRejected,
    time_zone: u.timeZone,
  };
}

export function presentRow(r: LoggerRow) {
  return {
    row: r.row,
    time_text: r.timeText,
    ts: iso(r.tsMs),
    temp_text: r.tempText,
    temp_c: r.tempC,
    rh_text: r.rhText,
    rh: r.rhPct,
    error: r.error,
    note: r.note,
  };
}

/** The rejected rows, first ones only (the count is always complete). */
export function rowErrors(rows: readonly LoggerRow[]): { errors: RowError[]; truncated: boolean } {
  const all = rows.filter((r) => r.error !== null);
  return {
    errors: all.slice(0, MAX_KEPT_ERRORS).map((r) => ({ row: r.row, error: r.error! })),
    truncated: all.length > MAX_KEPT_ERRORS,
  };
}

/** How the file was read, in words for the person uploading it. */
export function fileWarnings(file: LoggerFileRead, tableWarnings: readonly string[]): string[] {
  const w = [...tableWarnings];
  if (file.rowsAboveHeader > 0) {
    w.push(
      `${file.rowsAboveHeader} line${file.rowsAboveHeader === 1 ? "" : "s"} above the header row ${file.rowsAboveHeader === 1 ? "is" : "are"} not data and ${file.rowsAboveHeader === 1 ? "was" : "were"} skipped.`,
    );
  }
  if (file.timeFormatAmbiguous) {
    w.push(
      `Every date reads both as month/day and as day/month; they were read as ${timeFormatLabels[file.timeFormat]}. Change the date order if that is wrong.`,
    );
  }
  if (file.columns && file.guessed.tempUnit && file.guessed.tempUnit !== file.tempUnit) {
    w.push(
      `The temperature column's name says °${file.guessed.tempUnit.toUpperCase()}, but the values are read as °${file.tempUnit.toUpperCase()}.`,
    );
  }
  if (file.columns === null) {
    w.push("Choose the time and temperature columns: their names do not say which they are.");
  }
  return w;
}

/** The preview's answer: how the file was read, the first rows, and every row's problem. */
export function presentPreview(
  input: { fileName: string; sensor: string | null; timeZone: string },
  file: LoggerFileRead,
  delimiter: Delimiter,
  tableWarnings: readonly string[],
  extra: { alreadyStored: number | null; previousUpload: UploadListRow | undefined },
) {
  const bad = file.rows.filter((r) => r.error !== null).length;
  let firstMs: number | null = null;
  let lastMs: number | null = null;
  for (const r of file.readings) {
    if (firstMs === null || r.tsMs < firstMs) firstMs = r.tsMs;
    if (lastMs === null || r.tsMs > lastMs) lastMs = r.tsMs;
  }
  const { errors, truncated } = rowErrors(file.rows);
  return {
    file_name: input.fileName,
    sensor: input.sensor,
    time_zone: input.timeZone,
    temp_unit: file.tempUnit,
    time_format: file.timeFormat,
    delimiter,
    delimiter_name: delimiterNames[delimiter],
    header_row: file.headerIndex === null ? null : file.headerIndex + 1,
    headers: file.headers,
    columns: file.columns,
    guessed: {
      time: file.guessed.time,
      date: file.guessed.date,
      temp: file.guessed.temp,
      rh: file.guessed.rh,
      temp_unit: file.guessed.tempUnit,
    },
    needs_mapping: file.columns === null,
    rows_in: file.rows.length,
    rows_good: file.rows.length - bad,
    rows_bad: bad,
    blank_rows: file.blankRows,
    rows_above_header: file.rowsAboveHeader,
    already_stored: extra.alreadyStored,
    previous_upload: extra.previousUpload ? presentUpload(extra.previousUpload) : null,
    first_ts: iso(firstMs),
    last_ts: iso(lastMs),
    warnings: fileWarnings(file, tableWarnings),
    rows: file.rows.slice(0, PREVIEW_ROWS).map(presentRow),
    errors,
    errors_truncated: truncated,
  };
}
