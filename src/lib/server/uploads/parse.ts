import Papa from "papaparse";
import { z } from "zod";
import {
  canonicalTimeZone,
  readLoggerTable,
  tempUnits,
  timeFormats,
  type LoggerFileResult,
} from "@/domain/loggerCsv";
import { SENSOR_ID_PATTERN } from "@/domain/readings";

/** A logger file may be at most 5 MiB of text. */
export const MAX_CSV_BYTES = 5 * 1024 * 1024;
/** The JSON body around it: escaping (quotes, line breaks) can nearly double the text. */
export const MAX_UPLOAD_BODY_BYTES = 2 * MAX_CSV_BYTES + 64 * 1024;

export type Delimiter = "," | ";" | "\t";

export interface CsvTable {
  rows: string[][];
  delimiter: Delimiter;
  /** Things about the file's shape worth telling the person uploading it. */
  warnings: string[];
}

// On a tie, a semicolon wins over a comma: "21,5;95" is a semicolon file with decimal commas.
const DELIMITERS: readonly Delimiter[] = [";", "\t", ","];

/**
 * The delimiter of a file: the one that splits most of its first 60 non-blank lines into
 * the same number (two or more) of cells; on a tie, the one giving more cells, then a semicolon or tab over a comma. Unlike a guess
 * from the first few lines alone, a logger's title lines above the header do not mislead it.
 */
export function detectDelimiter(text: string): Delimiter {
  let best: { d: Delimiter; rows: number; cells: number } = { d: ",", rows: 0, cells: 0 };
  for (const d of DELIMITERS) {
    const { data } = Papa.parse<string[]>(text, {
      delimiter: d,
      preview: 60,
      skipEmptyLines: "greedy",
    });
    const counts = new Map<number, number>();
    for (const r of data) counts.set(r.length, (counts.get(r.length) ?? 0) + 1);
    for (const [cells, rows] of counts) {
      if (cells < 2) continue;
      if (rows > best.rows || (rows === best.rows && cells > best.cells)) best = { d, rows, cells };
    }
  }
  return best.d;
}

/**
 * Splits CSV text into rows of cells: strips a UTF-8 byte-order mark, detects the delimiter
 * (comma, semicolon or tab) and keeps blank lines as blank rows, so row numbers match a
 * spreadsheet's. A quote that is never closed would swallow the rest of the file into one
 * cell; the file is then read again with quotes taken as ordinary characters.
 */
export function parseCsvText(text: string): CsvTable {
  const body = text.replace(/^\uFEFF/, "");
  const delimiter = detectDelimiter(body);
  const options = {
    delimiter,
    header: false,
    dynamicTyping: false,
    skipEmptyLines: false,
  } as const;
  let result = Papa.parse<string[]>(body, options);
  const warnings: string[] = [];
  const openQuote = result.errors.find((e) => e.code === "MissingQuotes");
  if (openQuote) {
    const line = typeof openQuote.row === "number" ? ` on row ${openQuote.row + 1}` : "";
    warnings.push(`A quote${line} is never closed, so quotes were read as ordinary characters.`);
    result = Papa.parse<string[]>(body, { ...options, quoteChar: "\u0000" });
    result.data = result.data.map((r) => r.map((c) => c.replace(/^\s*"(.*)"\s*$/, "$1")));
  }
  // A final line break leaves one empty row behind; it is no row of the file.
  const rows = result.data.map((r) => (Array.isArray(r) ? r.map(String) : []));
  if (rows.length > 0 && rows.at(-1)!.every((c) => c === "")) rows.pop();
  return { rows, delimiter, warnings };
}

const columnRef = z.union([z.string().trim().min(1).max(200), z.number().int().min(0).max(9_999)]);

/** The file's own name: no folders, no control characters. */
const baseName = (name: string) =>
  [...name.split(/[\\/]/).at(-1)!]
    .filter((ch) => ch.charCodeAt(0) >= 0x20 && ch.charCodeAt(0) !== 0x7f)
    .join("")
    .trim();

/** What both the preview and the import take. */
const loggerFileFields = {
  file_name: z
    .string()
    .max(1_000)
    .transform(baseName)
    .pipe(z.string().min(1, { message: "Give the file's name" }).max(255)),
  csv: z.string().min(1, { message: "The file is empty" }),
  sensor: z.string().trim().regex(SENSOR_ID_PATTERN, {
    message: "1 to 64 letters, digits or . _ : - (starting with a letter or digit)",
  }),
  time_zone: z
    .string()
    .trim()
    .transform((v, ctx) => {
      const zone = canonicalTimeZone(v);
      if (zone === null) {
        ctx.addIssue({
          code: "custom",
          message: 'not a time zone name this server knows (e.g. "America/Chicago")',
        });
        return z.NEVER;
      }
      return zone;
    }),
  temp_unit: z.enum(tempUnits),
  time_format: z.enum(timeFormats).default("auto"),
  header_row: z.number().int().min(0).max(10_000_000).nullable().optional(),
};

const columnsField = z.object({
  time: columnRef,
  date: columnRef.nullable().optional(),
  temp: columnRef,
  rh: columnRef.nullable().optional(),
});

/** POST /api/v1/uploads: the mapping, the sensor and the unit must be given. */
export const loggerUploadBody = z.object({ ...loggerFileFields, columns: columnsField });
export type LoggerUploadBody = z.infer<typeof loggerUploadBody>;

/**
 * POST /api/v1/uploads/preview: as the import, but the mapping may be left out (the
 * proposed one is used and returned), and so may the sensor and the unit.
 */
export const loggerPreviewBody = z.object({
  ...loggerFileFields,
  sensor: loggerFileFields.sensor.optional(),
  temp_unit: loggerFileFields.temp_unit.optional(),
  columns: columnsField.nullable().optional(),
});
export type LoggerPreviewBody = z.infer<typeof loggerPreviewBody>;

/** Stands in for the sensor while previewing a file whose sensor is not chosen yet; never stored. */
const PREVIEW_SENSOR = "preview";

export type LoggerRead = { table: CsvTable; result: LoggerFileResult };

/** Splits the file and reads it with the request's settings. */
export function readLoggerUpload(
  body: LoggerPreviewBody | LoggerUploadBody,
  nowMs: number,
): LoggerRead {
  const table = parseCsvText(body.csv);
  const result = readLoggerTable(table.rows, {
    sensorId: body.sensor ?? PREVIEW_SENSOR,
    timeZone: body.time_zone,
    tempUnit: body.temp_unit ?? null,
    timeFormat: body.time_format,
    headerRow: body.header_row ?? null,
    columns: body.columns ?? null,
    nowMs,
  });
  return { table, result };
}

/** The size of the file's text in UTF-8 bytes. */
export const csvBytes = (csv: string) => Buffer.byteLength(csv, "utf8");
