import { useEffect, useId, useMemo, useRef, useState } from "react";
import {
  PREVIEW_ROWS,
  timeFormatLabels,
  timeFormats,
  type TempUnit,
  type TimeFormat,
} from "@/domain/loggerCsv";
import { SENSOR_ID_PATTERN } from "@/domain/readings";
import { formatDateTime, readProblem } from "@/lib/format";
import type { presentPreview, presentUpload } from "@/lib/server/uploads/present";
import Field from "./Field";

type Preview = ReturnType<typeof presentPreview>;
type ImportResult = ReturnType<typeof presentUpload> & {
  new_sensor: boolean;
  errors: { row: number; error: string }[];
  errors_truncated: boolean;
};

interface Props {
  /** Known sensors, offered as suggestions; any other id is registered as a new sensor. */
  sensors: { id: string; label: string | null }[];
  /** The plant's time zone setting, the default for a file's times. */
  plantTimeZone: string;
  /** °F for people who see US units, else °C. */
  defaultTempUnit: TempUnit;
}

interface Columns {
  time: number | null;
  date: number | null;
  temp: number | null;
  rh: number | null;
}

interface Settings {
  timeZone: string;
  tempUnit: TempUnit;
  timeFormat: TimeFormat;
  headerRow: string;
  columns: Columns;
}

const noColumns: Columns = { time: null, date: null, temp: null, rh: null };

interface LoadedFile {
  name: string;
  text: string;
  lines: number;
}

const MAX_FILE_BYTES = 5 * 1024 * 1024;

/** Zones most plants use, then fixed offsets for loggers that never change their clock. */
const commonZones = [
  "America/New_York",
  "America/Chicago",
  "America/Denver",
  "America/Phoenix",
  "America/Los_Angeles",
  "America/Anchorage",
  "Pacific/Honolulu",
  "America/Halifax",
  "America/Toronto",
  "America/Winnipeg",
  "America/Edmonton",
  "America/Vancouver",
  "America/Mexico_City",
  "Europe/London",
  "Europe/Berlin",
  "Australia/Sydney",
  "UTC",
];
const fixedZones = [4, 5, 6, 7, 8, 9, 10].map((h) => ({
  // IANA's Etc zones invert the sign: Etc/GMT+6 is six hours behind UTC.
  zone: `Etc/GMT+${h}`,
  label: `UTC−${String(h).padStart(2, "0")}:00 all year (logger keeps standard time)`,
}));

const nf = (n: number) => n.toLocaleString("en-US");
const plural = (n: number, one: string, many = `${one}s`) => `${nf(n)} ${n === 1 ? one : many}`;

/** Reads a file's bytes as text: UTF-16 when it says so, else UTF-8, else Windows-1252. */
async function readText(file: File): Promise<string> {
  const bytes = new Uint8Array(await file.arrayBuffer());
  if (bytes[0] === 0xff && bytes[1] === 0xfe) return new TextDecoder("utf-16le").decode(bytes);
  if (bytes[0] === 0xfe && bytes[1] === 0xff) return new TextDecoder("utf-16be").decode(bytes);
  try {
    return new TextDecoder("utf-8", { fatal: true }).decode(bytes);
  } catch {
    return new TextDecoder("windows-1252").decode(bytes);
  }
}

/** The header-row field: null when empty (find it), a row number, or undefined when not valid. */
function parseHeaderRow(text: string): number | null | undefined {
  if (text.trim() === "") return null;
  const n = Number(text);
  return Number.isInteger(n) && n >= 0 ? n : undefined;
}

function countLines(text: string): number {
  let n = 0;
  for (let i = text.indexOf("\n"); i !== -1; i = text.indexOf("\n", i + 1)) n++;
  return text.endsWith("\n") ? n : n + 1;
}

/** The instant as the chosen zone shows it, with the zone's short name. */
function localTime(iso: string, timeZone: string): string {
  const d = new Date(iso);
  return d.toLocaleString("en-US", {
    timeZone,
    year: "numeric",
    month: "short",
    day: "numeric",
    hour: "numeric",
    minute: "2-digit",
    ...(d.getUTCSeconds() !== 0 && { second: "2-digit" }),
    timeZoneName: "short",
  });
}

async function post(path: string, body: unknown) {
  return fetch(path, {
    method: "POST",
    headers: { "content-type": "application/json" },
    body: JSON.stringify(body),
  });
}

/**
 * A logger file in: choose the file, say which sensor it is and the time zone its clock
 * kept, check the column mapping and unit against a preview with each row's problems,
 * then import. Duplicates are skipped; rejected rows are listed by spreadsheet row.
 */
export default function LoggerUpload({ sensors, plantTimeZone, defaultTempUnit }: Props) {
  const uid = useId();
  const fileInput = useRef<HTMLInputElement>(null);
  const [file, setFile] = useState<LoadedFile | null>(null);
  const [sensor, setSensor] = useState("");
  const [timeZone, setTimeZone] = useState(plantTimeZone);
  const [tempUnit, setTempUnit] = useState<TempUnit>(defaultTempUnit);
  const [timeFormat, setTimeFormat] = useState<TimeFormat>("auto");
  const [headerRow, setHeaderRow] = useState("");
  const [columns, setColumns] = useState<Columns>(noColumns);
  const [preview, setPreview] = useState<Preview | null>(null);
  const [previewKey, setPreviewKey] = useState("");
  /** Settings whose preview failed: not tried again on their own until something changes. */
  const [failedKey, setFailedKey] = useState("");
  const [busy, setBusy] = useState<"reading" | "preview" | "import" | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const [fieldErrors, setFieldErrors] = useState<Record<string, string>>({});
  const [result, setResult] = useState<ImportResult | null>(null);
  const [allZones, setAllZones] = useState<string[]>([]);
  const resultHeading = useRef<HTMLHeadingElement>(null);

  // The full list differs between runtimes, so it is added only in the browser.
  useEffect(() => {
    try {
      setAllZones(Intl.supportedValuesOf("timeZone"));
    } catch {
      setAllZones([]);
    }
  }, []);

  const settings: Settings = { timeZone, tempUnit, timeFormat, headerRow, columns };
  const settingsKey = JSON.stringify(settings);
  const mapped = columns.time !== null && columns.temp !== null;
  const current = preview !== null && previewKey === settingsKey;
  const sensorTrimmed = sensor.trim();
  const sensorValid = SENSOR_ID_PATTERN.test(sensorTrimmed);
  const knownSensor = sensors.some((s) => s.id === sensorTrimmed);

  const headerRowNumber = parseHeaderRow(headerRow);
  const headerRowValid = headerRowNumber !== undefined;

  function requestBody(s: Settings, f: LoadedFile, withMapping: boolean) {
    const header = parseHeaderRow(s.headerRow);
    return {
      file_name: f.name,
      csv: f.text,
      time_zone: s.timeZone,
      time_format: s.timeFormat,
      ...(sensorValid && { sensor: sensorTrimmed }),
      ...(withMapping && { temp_unit: s.tempUnit }),
      ...(header !== null && header !== undefined && { header_row: header }),
      ...(withMapping &&
        s.columns.time !== null &&
        s.columns.temp !== null && { columns: s.columns }),
    };
  }

  /** Previews with the given settings; with `guess`, the mapping and unit come from the file. */
  async function runPreview(f: LoadedFile, s: Settings, guess: boolean) {
    setBusy("preview");
    setProblem(null);
    setFieldErrors({});
    try {
      const res = await post("/api/v1/uploads/preview", requestBody(s, f, !guess));
      if (!res.ok) {
        const p = await readProblem(res);
        setFieldErrors(p.fields);
        setProblem(p.message);
        setFailedKey(JSON.stringify(s));
        return;
      }
      const answer = (await res.json()) as Preview;
      const used: Columns = answer.columns ?? {
        time: answer.guessed.time,
        date: answer.guessed.date,
        temp: answer.guessed.temp,
        rh: answer.guessed.rh,
      };
      setPreview(answer);
      if (guess) {
        setColumns(used);
        setTempUnit(answer.temp_unit);
      }
      setPreviewKey(
        JSON.stringify(guess ? { ...s, tempUnit: answer.temp_unit, columns: used } : s),
      );
    } catch {
      setFailedKey(JSON.stringify(s));
      setProblem("The server could not be reached. Check the connection and try again.");
    } finally {
      setBusy(null);
    }
  }

  // A changed mapping, unit, zone or date order is previewed again at once.
  useEffect(() => {
    const waiting = !current && settingsKey !== failedKey && busy === null;
    if (file && preview && mapped && waiting && headerRowValid && !result) {
      void runPreview(file, settings, false);
    }
  }, [settingsKey, busy]);

  useEffect(() => {
    if (result) resultHeading.current?.focus();
  }, [result]);

  async function chooseFile(list: FileList | null) {
    const chosen = list?.[0];
    setResult(null);
    setPreview(null);
    setProblem(null);
    setFieldErrors({});
    if (!chosen) {
      setFile(null);
      return;
    }
    if (chosen.size > MAX_FILE_BYTES) {
      setFile(null);
      setFieldErrors({
        csv: `This file is ${(chosen.size / 1024 / 1024).toFixed(1)} MiB; a logger file may be at most 5 MiB. Split it and upload the parts.`,
      });
      return;
    }
    setBusy("reading");
    let text: string;
    try {
      text = await readText(chosen);
    } catch {
      setBusy(null);
      setFieldErrors({ csv: "This file could not be read." });
      return;
    }
    const loaded = { name: chosen.name, text, lines: countLines(text) };
    setFile(loaded);
    setColumns(noColumns);
    setHeaderRow("");
    setTimeFormat("auto");
    await runPreview(
      loaded,
      { ...settings, headerRow: "", timeFormat: "auto", columns: noColumns },
      true,
    );
  }

  async function runImport() {
    if (!file || !preview) return;
    if (!sensorValid) {
      setFieldErrors({
        sensor:
          sensorTrimmed === ""
            ? "Say which sensor this file is from."
            : "Use 1 to 64 letters, digits or . _ : - (starting with a letter or digit).",
      });
      document.getElementById(`${uid}-sensor`)?.focus();
      return;
    }
    setBusy("import");
    setProblem(null);
    setFieldErrors({});
    try {
      const res = await post("/api/v1/uploads", {
        ...requestBody(settings, file, true),
        sensor: sensorTrimmed,
      });
      if (!res.ok) {
        const p = await readProblem(res);
        setFieldErrors(p.fields);
        setProblem(p.message);
        return;
      }
      setResult((await res.json()) as ImportResult);
    } catch {
      setProblem(
        "The server could not be reached; nothing is known to be imported. Check the history below, then try again.",
      );
    } finally {
      setBusy(null);
    }
  }

  function startOver() {
    setFile(null);
    setPreview(null);
    setResult(null);
    setProblem(null);
    setFieldErrors({});
    setColumns(noColumns);
    if (fileInput.current) fileInput.current.value = "";
    fileInput.current?.focus();
  }

  const zoneOptions = useMemo(() => {
    const common = [plantTimeZone, ...commonZones.filter((z) => z !== plantTimeZone)];
    const rest = allZones.filter((z) => !common.includes(z));
    return { common, rest };
  }, [plantTimeZone, allZones]);

  const rowCount = preview?.rows_in ?? file?.lines ?? 0;
  const status =
    busy === "reading"
      ? "Reading the file…"
      : busy === "preview"
        ? `Reading ${plural(file?.lines ?? 0, "line")}…`
        : busy === "import"
          ? `Importing ${plural(rowCount, "row")}…`
          : null;

  const headerOptions = (preview?.headers ?? []).map((h, i) => (
    <option key={i} value={i}>
      {h}
    </option>
  ));
  const columnSelect = (key: keyof Columns, label: string, optional: boolean) => (
    <Field id={`${uid}-col-${key}`} label={label} error={fieldErrors[`columns.${key}`]}>
      <select
        id={`${uid}-col-${key}`}
        className="input"
        value={columns[key] ?? ""}
        disabled={busy !== null || !preview}
        aria-invalid={fieldErrors[`columns.${key}`] ? true : undefined}
        onChange={(e) =>
          setColumns((c) => ({
            ...c,
            [key]: e.target.value === "" ? null : Number(e.target.value),
          }))
        }
      >
        {optional ? <option value="">None</option> : <option value="">Choose a column</option>}
        {headerOptions}
      </select>
    </Field>
  );

  const badInPreview = preview ? preview.rows.filter((r) => r.error).length : 0;
  const errorsBeyond = preview
    ? preview.errors.filter((e) => e.row > (preview.rows.at(-1)?.row ?? 0))
    : [];

  return (
    <div className="grid gap-5">
      <section aria-labelledby={`${uid}-h`} className="card grid gap-4 p-4">
        <h2 id={`${uid}-h`} className="text-lg font-bold">
          Upload a logger file
        </h2>

        <Field
          id={`${uid}-file`}
          label="Logger file (CSV, at most 5 MiB)"
          hint="Comma, semicolon or tab separated, with a time and a temperature on each row."
          error={fieldErrors.csv}
        >
          <input
            ref={fileInput}
            id={`${uid}-file`}
            type="file"
            accept=".csv,.txt,.tsv,text/csv,text/plain,text/tab-separated-values"
            className="input py-2 file:mr-3 file:rounded-md file:border-0 file:bg-surface-2 file:px-3 file:py-1 file:font-semibold file:text-ink"
            disabled={busy !== null}
            aria-invalid={fieldErrors.csv ? true : undefined}
            aria-describedby={fieldErrors.csv ? `${uid}-file-err` : undefined}
            onChange={(e) => void chooseFile(e.target.files)}
          />
        </Field>

        <div className="grid gap-4 sm:grid-cols-2">
          <Field
            id={`${uid}-sensor`}
            label="Sensor"
            error={fieldErrors.sensor}
            hint={
              sensorTrimmed !== "" && sensorValid && !knownSensor
                ? "A new sensor: it is registered with this id, and a manager names and places it later."
                : "The sensor or logger this file came from, e.g. CB-07."
            }
          >
            <input
              id={`${uid}-sensor`}
              className="input"
              list={`${uid}-sensors`}
              autoComplete="off"
              spellCheck={false}
              value={sensor}
              disabled={busy === "import"}
              aria-invalid={fieldErrors.sensor ? true : undefined}
              aria-describedby={fieldErrors.sensor ? `${uid}-sensor-err` : undefined}
              onChange={(e) => setSensor(e.target.value)}
            />
            <datalist id={`${uid}-sensors`}>
              {sensors.map((s) => (
                <option key={s.id} value={s.id}>
                  {s.label ?? s.id}
                </option>
              ))}
            </datalist>
          </Field>

          <Field
            id={`${uid}-zone`}
            label="Time zone of the logger's clock"
            hint="Times without an offset are read in this zone."
            error={fieldErrors.time_zone}
          >
            <select
              id={`${uid}-zone`}
              className="input"
              value={timeZone}
              disabled={busy !== null}
              onChange={(e) => setTimeZone(e.target.value)}
            >
              <optgroup label="Common">
                {zoneOptions.common.map((z) => (
                  <option key={z} value={z}>
                    {z === plantTimeZone ? `${z} (the plant's)` : z}
                  </option>
                ))}
              </optgroup>
              <optgroup label="No daylight saving">
                {fixedZones.map((z) => (
                  <option key={z.zone} value={z.zone}>
                    {z.label}
                  </option>
                ))}
              </optgroup>
              {zoneOptions.rest.length > 0 && (
                <optgroup label="All time zones">
                  {zoneOptions.rest.map((z) => (
                    <option key={z} value={z}>
                      {z}
                    </option>
                  ))}
                </optgroup>
              )}
            </select>
          </Field>
        </div>

        {preview && (
          <>
            <div className="grid gap-4 sm:grid-cols-3">
              {columnSelect("time", "Time column", false)}
              {columnSelect("temp", "Temperature column", false)}
              {columnSelect("rh", "Humidity column (optional)", true)}
            </div>

            <fieldset className="grid gap-2">
              <legend className="label mb-1">Temperatures in the file are in</legend>
              <div className="flex flex-wrap gap-2">
                {(["f", "c"] as const).map((u) => (
                  <label
                    key={u}
                    className={`flex min-h-11 min-w-28 cursor-pointer items-center gap-2 rounded-lg border px-3 font-semibold ${tempUnit === u ? "border-accent bg-info-bg" : "border-line bg-surface"}`}
                  >
                    <input
                      type="radio"
                      name={`${uid}-unit`}
                      value={u}
                      className="h-5 w-5 accent-accent"
                      checked={tempUnit === u}
                      disabled={busy !== null}
                      onChange={() => setTempUnit(u)}
                    />
                    {u === "f" ? "°F (Fahrenheit)" : "°C (Celsius)"}
                  </label>
                ))}
              </div>
            </fieldset>

            <details
              className="rounded-lg border border-line p-3"
              open={preview.columns?.date != null}
            >
              <summary className="cursor-pointer font-semibold">More options</summary>
              <div className="mt-3 grid gap-4 sm:grid-cols-3">
                <Field
                  id={`${uid}-format`}
                  label="How dates are written"
                  error={fieldErrors.time_format}
                >
                  <select
                    id={`${uid}-format`}
                    className="input"
                    value={timeFormat}
                    disabled={busy !== null}
                    onChange={(e) => setTimeFormat(e.target.value as TimeFormat)}
                  >
                    {timeFormats.map((f) => (
                      <option key={f} value={f}>
                        {f === "auto" && preview
                          ? `Detect (found: ${timeFormatLabels[preview.time_format]})`
                          : timeFormatLabels[f]}
                      </option>
                    ))}
                  </select>
                </Field>
                {columnSelect("date", "Separate date column", true)}
                <Field
                  id={`${uid}-header`}
                  label="Header row"
                  hint={`Empty to find it (found: ${preview.header_row === null ? "none" : `row ${preview.header_row}`}); 0 for none.`}
                  error={
                    fieldErrors.header_row ??
                    (headerRowValid ? undefined : "Give a row number, or 0.")
                  }
                >
                  <input
                    id={`${uid}-header`}
                    className="input"
                    inputMode="numeric"
                    value={headerRow}
                    disabled={busy !== null}
                    aria-invalid={headerRowValid ? undefined : true}
                    onChange={(e) => setHeaderRow(e.target.value)}
                  />
                </Field>
              </div>
            </details>
          </>
        )}

        <div className="flex flex-wrap items-center gap-3">
          {!result && (
            <>
              <button
                type="button"
                className="btn btn-quiet"
                disabled={
                  !file || busy !== null || !headerRowValid || (preview !== null && !mapped)
                }
                onClick={() => file && void runPreview(file, settings, preview === null)}
              >
                Preview
              </button>
              <button
                type="button"
                className="btn btn-primary"
                disabled={
                  !current ||
                  busy !== null ||
                  !preview ||
                  preview.rows_good === 0 ||
                  result !== null
                }
                onClick={() => void runImport()}
              >
                {preview && current ? `Import ${plural(preview.rows_good, "good row")}` : "Import"}
              </button>
            </>
          )}
          {(file || result) && (
            <button
              type="button"
              className="btn btn-quiet"
              disabled={busy !== null}
              onClick={startOver}
            >
              {result ? "Upload another file" : "Clear"}
            </button>
          )}
        </div>
        {!file && (
          <p className="hint">
            Choose a file to see how it will be read. Nothing is stored until you import.
          </p>
        )}
        {preview && !current && busy === null && mapped && (
          <p className="hint">
            {settingsKey === failedKey
              ? "This preview is of earlier settings; fix what is marked above to read the file again."
              : "The settings changed since this preview; it is read again."}
          </p>
        )}
        {preview && preview.rows_good === 0 && current && (
          <p className="hint">
            No row can be imported with these settings. Check the columns, the unit and the date
            order.
          </p>
        )}

        <div role="status" aria-live="polite" className="min-h-0">
          {status && (
            <p className="flex items-center gap-3 font-semibold">
              <progress className="h-2 w-24 accent-accent" aria-hidden="true" />
              {status}
            </p>
          )}
        </div>
        {problem && (
          <p role="alert" className="card bg-alarm-bg p-3 font-semibold text-alarm">
            {problem}
          </p>
        )}
      </section>

      {result && (
        <section
          aria-labelledby={`${uid}-result`}
          className="card bg-ok-bg p-4"
          data-testid="upload-result"
        >
          <h2 id={`${uid}-result`} className="text-lg font-bold" tabIndex={-1} ref={resultHeading}>
            Imported {result.file_name} into {result.sensor}
          </h2>
          <dl className="mt-3 grid grid-cols-3 gap-3">
            <div>
              <dt className="text-sm text-muted">Stored</dt>
              <dd className="figure text-2xl font-bold">{nf(result.rows_accepted)}</dd>
            </div>
            <div>
              <dt className="text-sm text-muted">Already in Plinth</dt>
              <dd className="figure text-2xl font-bold">{nf(result.rows_duplicate)}</dd>
            </div>
            <div>
              <dt className="text-sm text-muted">Rejected</dt>
              <dd className="figure text-2xl font-bold">{nf(result.rows_rejected)}</dd>
            </div>
          </dl>
          <p className="mt-3">
            {result.rows_accepted > 0
              ? `${plural(result.rows_accepted, "reading")} stored for ${result.sensor}.`
              : "No new readings were stored."}{" "}
            {result.rows_duplicate > 0 &&
              `${plural(result.rows_duplicate, "reading was", "readings were")} already stored and skipped. `}
            {result.new_sensor &&
              `${result.sensor} is a new sensor; a manager can name and place it. `}
            {result.rows_rejected > 0 &&
              `${plural(result.rows_rejected, "row was", "rows were")} rejected:`}
          </p>
          {result.errors.length > 0 && (
            <ul className="mt-2 grid gap-1 text-sm">
              {result.errors.slice(0, 20).map((e) => (
                <li key={e.row}>
                  <span className="font-semibold">Row {e.row}:</span> {e.error}
                </li>
              ))}
              {(result.errors.length > 20 || result.errors_truncated) && (
                <li className="text-muted">
                  The upload's record in the history keeps the first {result.errors.length}.
                </li>
              )}
            </ul>
          )}
          <p className="mt-3">
            <a
              className="font-semibold text-accent underline"
              href={`/uploads?upload=${result.id}#upload-${result.id}`}
            >
              See it in the history
            </a>
          </p>
        </section>
      )}

      {preview && !result && (
        <section aria-labelledby={`${uid}-preview`} className="card grid gap-4 p-4">
          <h2 id={`${uid}-preview`} className="text-lg font-bold">
            Preview of {preview.file_name}
          </h2>
          <dl className="grid grid-cols-2 gap-3 sm:grid-cols-4">
            <div>
              <dt className="text-sm text-muted">Rows</dt>
              <dd className="figure text-2xl font-bold">{nf(preview.rows_in)}</dd>
            </div>
            <div>
              <dt className="text-sm text-muted">Good</dt>
              <dd className="figure text-2xl font-bold text-ok">{nf(preview.rows_good)}</dd>
            </div>
            <div>
              <dt className="text-sm text-muted">With problems</dt>
              <dd
                className={`figure text-2xl font-bold ${preview.rows_bad > 0 ? "text-alarm" : ""}`}
              >
                {nf(preview.rows_bad)}
              </dd>
            </div>
            <div>
              <dt className="text-sm text-muted">Already in Plinth</dt>
              <dd className="figure text-2xl font-bold">
                {preview.already_stored === null ? "—" : nf(preview.already_stored)}
              </dd>
            </div>
          </dl>
          <p className="text-sm text-muted">
            {preview.header_row === null ? "No header row" : `Header on row ${preview.header_row}`};
            columns separated by {preview.delimiter_name}; dates read as{" "}
            {timeFormatLabels[preview.time_format]}.
            {preview.first_ts && preview.last_ts && (
              <>
                {" "}
                Readings from {localTime(preview.first_ts, timeZone)} to{" "}
                {localTime(preview.last_ts, timeZone)}.
              </>
            )}
            {preview.blank_rows > 0 && ` ${plural(preview.blank_rows, "blank row")} skipped.`}
            {preview.already_stored === null &&
              " Say which sensor it is to see how many readings Plinth already has."}
          </p>
          {preview.previous_upload && (
            <p className="card bg-info-bg p-3">
              This exact file was imported on{" "}
              {formatDateTime(Date.parse(preview.previous_upload.created_at), timeZone)}
              {preview.previous_upload.uploaded_by &&
                ` by ${preview.previous_upload.uploaded_by}`}{" "}
              (for {preview.previous_upload.sensor ?? "a sensor"}). Importing it again for the same
              sensor stores nothing new.
            </p>
          )}
          {preview.warnings.length > 0 && (
            <ul className="card grid gap-1 bg-warn-bg p-3 text-sm">
              {preview.warnings.map((w) => (
                <li key={w}>
                  <span className="font-bold text-warn">Check: </span>
                  {w}
                </li>
              ))}
            </ul>
          )}

          {preview.rows.length > 0 && (
            <div className="max-w-4xl overflow-x-auto">
              <table className="w-full text-left text-sm">
                <caption className="mb-2 text-left text-muted">
                  {preview.rows_in > PREVIEW_ROWS
                    ? `The first ${PREVIEW_ROWS} of ${plural(preview.rows_in, "row")}`
                    : `All ${plural(preview.rows_in, "row")}`}
                  {badInPreview > 0 && `; ${plural(badInPreview, "row")} with problems marked`}
                </caption>
                <thead className="border-b border-line text-muted">
                  <tr>
                    <th scope="col" className="py-2 pr-2">
                      Row
                    </th>
                    <th scope="col" className="py-2 pr-2">
                      Time ({timeZone})
                    </th>
                    <th scope="col" className="py-2 pr-2 text-right">
                      Temp
                    </th>
                    <th scope="col" className="py-2 text-right">
                      RH
                    </th>
                  </tr>
                </thead>
                {preview.rows.map((r) => (
                  <tbody
                    key={r.row}
                    className={`border-b border-line last:border-0 ${r.error ? "bg-alarm-bg" : ""}`}
                  >
                    <tr>
                      <th scope="row" className="figure py-2 pr-2 align-top font-normal text-muted">
                        {r.row}
                      </th>
                      <td className="py-2 pr-2 align-top">
                        {r.ts ? (
                          localTime(r.ts, timeZone)
                        ) : (
                          <span className="figure">{r.time_text || "—"}</span>
                        )}
                      </td>
                      <td className="figure py-2 pr-2 text-right align-top whitespace-nowrap">
                        {r.temp_text === ""
                          ? "—"
                          : /^[-+]?[\d.,]+$/.test(r.temp_text)
                            ? `${r.temp_text} °${preview.temp_unit.toUpperCase()}`
                            : r.temp_text}
                        {r.temp_c !== null && preview.temp_unit === "f" && (
                          <span className="block text-xs text-muted">{r.temp_c.toFixed(1)} °C</span>
                        )}
                      </td>
                      <td className="figure py-2 text-right align-top whitespace-nowrap">
                        {!r.rh_text
                          ? "—"
                          : /^[-+]?[\d.,]+$/.test(r.rh_text)
                            ? `${r.rh_text} %`
                            : r.rh_text}
                      </td>
                    </tr>
                    {(r.error || r.note) && (
                      <tr>
                        <td colSpan={4} className="pb-2 text-sm">
                          {r.error && (
                            <p className="font-semibold text-alarm">
                              <span aria-hidden="true">✕ </span>Rejected: {r.error}
                            </p>
                          )}
                          {r.note && (
                            <p className="text-muted">
                              <span className="font-semibold">Note:</span> {r.note}
                            </p>
                          )}
                        </td>
                      </tr>
                    )}
                  </tbody>
                ))}
              </table>
            </div>
          )}

          {errorsBeyond.length > 0 && (
            <details className="rounded-lg border border-line p-3">
              <summary className="cursor-pointer font-semibold">
                {plural(preview.rows_bad - badInPreview, "more row")} with problems further down
              </summary>
              <ul className="mt-2 grid gap-1 text-sm">
                {errorsBeyond.map((e) => (
                  <li key={e.row}>
                    <span className="font-semibold">Row {e.row}:</span> {e.error}
                  </li>
                ))}
                {preview.errors_truncated && (
                  <li className="text-muted">
                    Only the first {preview.errors.length} problems are listed.
                  </li>
                )}
              </ul>
            </details>
          )}
        </section>
      )}
    </div>
  );
}
