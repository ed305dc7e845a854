import { useEffect, useId, useMemo, useRef, useState, type SubmitEvent } from "react";
import {
  LAB_CURING_TEMP_C,
  readTempRecordText,
  recordAgeMismatch,
  recordMaturity,
  ttfAtConstantTempCH,
} from "@/domain/calibrationPoints";
import { makeWallClock } from "@/domain/loggerCsv";
import type { UnitSystem } from "@/domain/units";
import { formatDateTime, readProblem } from "@/lib/format";
import Field, { SelectField, SubmitButton, TextField, ariaFor } from "./Field";
import Modal from "./Modal";
import MixChart from "./MixChart";
import { Banner, type Notice } from "./Notice";
import TableHead from "./TableHead";
import {
  ageText,
  calibrationCaution,
  modelLabels,
  modelNames,
  readTyped,
  sendJson,
  strengthText,
  strengthToPsi,
  strengthUnit,
  tempInput,
  tempText,
  tempToC,
  tempUnit,
  ttfText,
  type CalibrationView,
  type FitItem,
  type MixItem,
  type PointItem,
  type Warning,
} from "./MixShared";

interface Props {
  mix: MixItem;
  units: UnitSystem;
  timeZone: string;
  /** QC and managers add breaks and fit; others read. */
  canEdit: boolean;
  initialPoints: PointItem[];
  initialCalibration: CalibrationView;
}

/** Warnings shown by word and mark, never by colour alone. */
function WarningList({ warnings, title }: { warnings: Warning[]; title: string }) {
  if (warnings.length === 0) return null;
  return (
    <section
      aria-label={title}
      className="rounded-lg border-2 border-warn bg-warn-bg p-3 text-warn sm:p-4"
      data-testid="fit-warnings"
    >
      <h3 className="flex items-center gap-2 font-bold">
        <span aria-hidden="true">▲</span> {title}
      </h3>
      <ul className="mt-2 grid gap-1.5 text-ink">
        {warnings.map((w) => (
          <li key={`${w.code}-${w.message}`} data-code={w.code} className="flex gap-2">
            <span aria-hidden="true" className="text-warn">
              ▲
            </span>
            <span>
              <span className="font-semibold">{warningTitles[w.code] ?? "Check"}:</span> {w.message}
            </span>
          </li>
        ))}
      </ul>
    </section>
  );
}

const warningTitles: Record<string, string> = {
  "few-ages": "Too few ages",
  "poor-fit": "Poor fit",
  "curve-not-increasing": "Curve does not rise",
  "breaks-not-increasing": "Breaks do not rise",
  "no-convergence": "Fit did not settle",
  "datum-changed": "Datum changed",
  "threshold-outside-breaks": "Read outside the breaks",
  "threshold-unreachable": "Threshold out of reach",
};

const fmt = (v: number, digits: number) =>
  v.toLocaleString("en-US", { minimumFractionDigits: digits, maximumFractionDigits: digits });

/** The fit's parameters in the person's strength unit. */
function paramsText(fit: FitItem, units: UnitSystem): { label: string; value: string }[] {
  const p = fit.params;
  const s = (psi: number | undefined) => (psi === undefined ? "—" : strengthText(psi, units));
  if (fit.model === "log") {
    return [
      { label: "a", value: s(p.a_psi) },
      {
        label: "b",
        value: `${units === "us" ? fmt(p.b_psi_per_decade ?? 0, 0) : fmt(p.b_mpa_per_decade ?? 0, 2)} ${strengthUnit(units)} per tenfold maturity`,
      },
    ];
  }
  if (fit.model === "hyperbolic") {
    return [
      { label: "Su (limiting strength)", value: s(p.su_psi) },
      { label: "k", value: `${(p.k_per_c_h ?? 0).toExponential(3)} per °C·h` },
      { label: "M0 (start of gain)", value: ttfText(p.m0_c_h ?? 0) },
    ];
  }
  return [
    { label: "Su (limiting strength)", value: s(p.su_psi) },
    { label: "τ", value: ttfText(p.tau_c_h ?? 0) },
    { label: "β", value: fmt(p.beta ?? 0, 3) },
  ];
}

/** Hours of lab curing at 23 °C that give a maturity, for a feel of it. */
const labHours = (ttfCH: number, datumC: number) => ttfCH / (LAB_CURING_TEMP_C - datumC);

/** The date part of an instant on the plant's calendar, for a date input. */
function plantDate(ms: number, timeZone: string): string {
  return new Intl.DateTimeFormat("en-CA", {
    timeZone,
    year: "numeric",
    month: "2-digit",
    day: "2-digit",
  }).format(ms);
}

/** Noon of a date on the plant's calendar, as an instant. */
function plantNoon(date: string, timeZone: string): number | null {
  const m = /^(\d{4})-(\d{2})-(\d{2})$/.exec(date);
  if (!m) return null;
  return makeWallClock(timeZone)(Date.UTC(Number(m[1]), Number(m[2]) - 1, Number(m[3]), 12), null)
    .ms;
}

// ---------------------------------------------------------------------------------------
// Adding one age's breaks

type Source = "constant" | "maturity" | "record";

function AddBreak({
  mix,
  units,
  timeZone,
  onAdded,
}: {
  mix: MixItem;
  units: UnitSystem;
  timeZone: string;
  onAdded: (p: PointItem) => void;
}) {
  const uid = useId();
  const [age, setAge] = useState("");
  const [ageUnit, setAgeUnit] = useState<"d" | "h">("d");
  const [strength, setStrength] = useState("");
  const [source, setSource] = useState<Source>("constant");
  const [curingTemp, setCuringTemp] = useState(tempInput(LAB_CURING_TEMP_C, units));
  const [ttf, setTtf] = useState("");
  const [record, setRecord] = useState("");
  const [specimens, setSpecimens] = useState("");
  const [brokenOn, setBrokenOn] = useState(() => plantDate(Date.now(), timeZone));
  const [errors, setErrors] = useState<Record<string, string>>({});
  const [notice, setNotice] = useState<Notice | null>(null);
  const [busy, setBusy] = useState(false);
  const id = (k: string) => `${uid}-${k}`;

  const ageH = (() => {
    const v = readTyped(age);
    return Number.isFinite(v) && v > 0 ? (ageUnit === "d" ? v * 24 : v) : null;
  })();
  const parsedRecord = useMemo(
    () =>
      source === "record" && record.trim() !== ""
        ? readTempRecordText(record, { timeZone, tempUnit: units === "us" ? "f" : "c" })
        : null,
    [record, source, timeZone, units],
  );
  const recordSummary = useMemo(() => {
    if (!parsedRecord || parsedRecord.readings.length < 2) return null;
    try {
      return recordMaturity(parsedRecord.readings, mix.datum_temp_c, mix.activation_energy_j_mol);
    } catch {
      return null;
    }
  }, [parsedRecord, mix.datum_temp_c, mix.activation_energy_j_mol]);

  const preview = (() => {
    if (source === "constant") {
      const t = readTyped(curingTemp);
      if (ageH === null || !Number.isFinite(t)) return null;
      const c = tempToC(t, units);
      if (!(c > mix.datum_temp_c))
        return `At or below the datum (${tempText(mix.datum_temp_c, units)}) no maturity is gained.`;
      return `Maturity: ${ttfText(ttfAtConstantTempCH(ageH, c, mix.datum_temp_c))} (age × (temperature − datum)).`;
    }
    if (source === "record" && recordSummary) {
      const parts = [
        `${recordSummary.readingCount.toLocaleString("en-US")} readings over ${recordSummary.spanH.toFixed(1)} h: ${ttfText(recordSummary.ttfCH)}.`,
      ];
      if (!recordSummary.complete)
        parts.push("The record has a gap over 2 h: send the full record.");
      const mismatch = ageH !== null ? recordAgeMismatch(recordSummary.spanH, ageH) : null;
      if (mismatch) parts.push(`Check: ${mismatch}.`);
      return parts.join(" ");
    }
    return null;
  })();

  async function loadRecordFile(file: File | undefined) {
    if (!file) return;
    if (file.size > 5 * 1024 * 1024) {
      setErrors((e) => ({ ...e, temps: "The file is over 5 MiB" }));
      return;
    }
    setRecord(await file.text());
  }

  async function submit(e: SubmitEvent) {
    e.preventDefault();
    setNotice(null);
    const errs: Record<string, string> = {};
    const body: Record<string, unknown> = {};
    const s = readTyped(strength);
    if (!Number.isFinite(s) || s <= 0)
      errs.strength_psi = `Enter the mean strength in ${strengthUnit(units)}`;
    else body.strength_psi = Math.round(strengthToPsi(s, units) * 100) / 100;
    if (age.trim() !== "" || source !== "record") {
      if (ageH === null) errs.age_h = "Enter the age at the break";
      else body.age_h = ageH;
    }
    if (source === "constant") {
      const t = readTyped(curingTemp);
      if (!Number.isFinite(t)) errs.temp_c = "Enter the curing temperature";
      else body.temp_c = Math.round(tempToC(t, units) * 1000) / 1000;
    } else if (source === "maturity") {
      const m = readTyped(ttf);
      if (!Number.isFinite(m) || m <= 0) errs.ttf_c_h = "Enter the maturity in °C·h";
      else body.ttf_c_h = m;
    } else {
      if (!parsedRecord || parsedRecord.readings.length < 2)
        errs.temps = "Paste or choose the specimens' record: two or more readings";
      else if (parsedRecord.errors.length > 0)
        errs.temps = `Line ${parsedRecord.errors[0]!.line}: ${parsedRecord.errors[0]!.error}`;
      else body.temps = parsedRecord.readings.map((r) => ({ ts: r.tsMs, temp_c: r.tempC }));
    }
    if (specimens.trim() !== "") body.specimens = specimens.trim();
    if (brokenOn) {
      const at = plantNoon(brokenOn, timeZone);
      if (at === null) errs.broken_at = "Enter a date";
      else body.broken_at = at;
    }
    setErrors(errs);
    if (Object.keys(errs).length > 0) return;
    setBusy(true);
    const res = await sendJson(`/api/v1/mixes/${mix.id}/points`, "POST", body);
    setBusy(false);
    if (!res.ok) {
      const p = await readProblem(res);
      const fields: Record<string, string> = {};
      for (const [f, t] of Object.entries(p.fields)) fields[f.split(".")[0]!] = t;
      setErrors(fields);
      setNotice({ tone: "error", text: p.message });
      return;
    }
    const point = (await res.json()) as PointItem;
    onAdded(point);
    setAge("");
    setStrength("");
    setTtf("");
    setRecord("");
    setSpecimens("");
    setNotice({
      tone: "ok",
      text: `Break${point.age_h !== null ? ` at ${ageText(point.age_h)}` : ""} added: ${strengthText(point.strength_psi, units)} at ${ttfText(point.ttf_c_h)}. Fit again to use it.`,
    });
  }

  const err = (k: string) => errors[k];
  const described = (k: string) => ariaFor(id(k), err(k));

  return (
    <form onSubmit={submit} noValidate className="grid grid-cols-1 gap-4" aria-label="Add a break">
      <div className="grid grid-cols-1 gap-4 sm:grid-cols-3">
        <Field id={id("age_h")} label="Age at the break" error={err("age_h")}>
          <div className="flex items-start gap-2">
            <input
              id={id("age_h")}
              className="input figure"
              inputMode="decimal"
              value={age}
              onChange={(e) => setAge(e.target.value)}
              {...described("age_h")}
            />
            <label className="sr-only" htmlFor={id("age_unit")}>
              Age unit
            </label>
            <select
              id={id("age_unit")}
              className="input w-28"
              value={ageUnit}
              onChange={(e) => setAgeUnit(e.target.value as "d" | "h")}
            >
              <option value="d">days</option>
              <option value="h">hours</option>
            </select>
          </div>
        </Field>
        <TextField
          id={id("strength_psi")}
          label={`Mean strength (${strengthUnit(units)})`}
          error={err("strength_psi")}
          hint="Mean of the cylinders broken at this age"
          className="input figure"
          inputMode="decimal"
          value={strength}
          onChange={(e) => setStrength(e.target.value)}
        />
        <TextField
          id={id("specimens")}
          label="Specimens"
          hint="Cylinder marks, e.g. HS10-C4 A, B"
          value={specimens}
          maxLength={500}
          onChange={(e) => setSpecimens(e.target.value)}
        />
      </div>

      <fieldset className="grid grid-cols-1 gap-3">
        <legend className="label mb-1">Maturity of the cylinders</legend>
        <div className="flex flex-wrap gap-x-5 gap-y-1">
          {(
            [
              ["constant", "Cured at one temperature"],
              ["maturity", "Maturity known (°C·h)"],
              ["record", "Temperature record of the specimens"],
            ] as const
          ).map(([v, label]) => (
            <label key={v} className="flex min-h-11 items-center gap-2">
              <input
                type="radio"
                className="h-5 w-5"
                name={id("source")}
                value={v}
                checked={source === v}
                onChange={() => setSource(v)}
              />
              {label}
            </label>
          ))}
        </div>
        {source === "constant" && (
          <TextField
            id={id("temp_c")}
            label={`Curing temperature (${tempUnit(units)})`}
            error={err("temp_c")}
            hint={`Lab moist room per ASTM C511: ${tempText(LAB_CURING_TEMP_C, units)} ± ${units === "us" ? "3.5 °F" : "2 °C"}.`}
            className="input figure sm:max-w-48"
            inputMode="decimal"
            value={curingTemp}
            onChange={(e) => setCuringTemp(e.target.value)}
          />
        )}
        {source === "maturity" && (
          <TextField
            id={id("ttf_c_h")}
            label="Temperature-time factor (°C·h)"
            error={err("ttf_c_h")}
            hint={`With this mix's datum temperature, ${tempText(mix.datum_temp_c, "si")}.`}
            className="input figure sm:max-w-48"
            inputMode="decimal"
            value={ttf}
            onChange={(e) => setTtf(e.target.value)}
          />
        )}
        {source === "record" && (
          <div className="grid grid-cols-1 gap-2">
            <Field
              id={id("temps")}
              label="The specimens' readings"
              error={err("temps")}
              hint={`One reading a line: time, temperature (${tempUnit(units)} unless written). Times without an offset are on the plant's clock (${timeZone}). From moulding to the break.`}
            >
              <textarea
                id={id("temps")}
                className="input figure min-h-32 py-2 text-sm"
                value={record}
                onChange={(e) => setRecord(e.target.value)}
                spellCheck={false}
                {...described("temps")}
              />
            </Field>
            <label className="text-sm font-semibold" htmlFor={id("temps_file")}>
              Or read the logger's file
            </label>
            <input
              id={id("temps_file")}
              type="file"
              accept=".csv,.txt,text/csv,text/plain"
              className="input py-2 file:mr-3 file:rounded-md file:border-0 file:bg-surface-2 file:px-3 file:py-1 file:font-semibold file:text-ink"
              onChange={(e) => void loadRecordFile(e.target.files?.[0])}
            />
            {parsedRecord && parsedRecord.errors.length > 0 && (
              <ul className="text-sm text-alarm">
                {parsedRecord.errors.slice(0, 5).map((e) => (
                  <li key={e.line}>
                    Line {e.line}: {e.error}
                  </li>
                ))}
              </ul>
            )}
          </div>
        )}
        {preview && (
          <p className="figure text-sm" role="status">
            {preview}
          </p>
        )}
      </fieldset>

      <TextField
        id={id("broken_at")}
        label="Broken on"
        error={err("broken_at")}
        type="date"
        className="input sm:max-w-56"
        value={brokenOn}
        onChange={(e) => setBrokenOn(e.target.value)}
      />
      {notice && <Banner {...notice} />}
      <div>
        <SubmitButton busy={busy} busyLabel="Adding…">
          Add the break
        </SubmitButton>
      </div>
    </form>
  );
}

// ---------------------------------------------------------------------------------------
// The lab's file

interface LabPreview {
  file_name: string;
  dry_run: boolean;
  header_row: number;
  columns: Record<string, string | null>;
  units: { age: string | null; strength: string | null; temp: string | null; maturity: string };
  rows_in: number;
  errors: { row: number; error: string }[];
  points: {
    age_h: number | null;
    ttf_c_h: number;
    strength_psi: number;
    specimens: string | null;
    cylinder_count: number;
    range_pct: number | null;
    rows: number[];
  }[];
  warnings: string[];
  imported: number;
}

const columnLabels: Record<string, string> = {
  specimen: "Specimen",
  age: "Age",
  strength: "Strength",
  maturity: "Maturity",
  curing_temp: "Curing temperature",
  broken_at: "Date broken",
};

function LabUpload({
  mix,
  units,
  onImported,
}: {
  mix: MixItem;
  units: UnitSystem;
  onImported: () => Promise<void>;
}) {
  const uid = useId();
  const fileRef = useRef<HTMLInputElement>(null);
  const [file, setFile] = useState<{ name: string; text: string } | null>(null);
  const [ageUnit, setAgeUnit] = useState("");
  const [sUnit, setSUnit] = useState("");
  const [tUnit, setTUnit] = useState("");
  const [useLabTemp, setUseLabTemp] = useState(true);
  const [labTemp, setLabTemp] = useState(tempInput(LAB_CURING_TEMP_C, units));
  const [preview, setPreview] = useState<LabPreview | null>(null);
  const [notice, setNotice] = useState<Notice | null>(null);
  const [busy, setBusy] = useState<"" | "reading" | "importing">("");
  const id = (k: string) => `${uid}-${k}`;

  function body(dryRun: boolean, f: { name: string; text: string }) {
    const t = readTyped(labTemp);
    return {
      file_name: f.name,
      csv: f.text,
      dry_run: dryRun,
      age_unit: ageUnit || null,
      strength_unit: sUnit || null,
      temp_unit: tUnit || null,
      curing_temp_c:
        useLabTemp && Number.isFinite(t) ? Math.round(tempToC(t, units) * 1000) / 1000 : null,
    };
  }

  async function read(f: { name: string; text: string }) {
    setBusy("reading");
    setNotice(null);
    const res = await sendJson(`/api/v1/mixes/${mix.id}/points/upload`, "POST", body(true, f));
    setBusy("");
    if (!res.ok) {
      setPreview(null);
      setNotice({ tone: "error", text: (await readProblem(res)).message });
      return;
    }
    setPreview((await res.json()) as LabPreview);
  }

  // Read again whenever the file or a setting changes.
  useEffect(() => {
    if (file) void read(file);
  }, [file, ageUnit, sUnit, tUnit, useLabTemp, labTemp]);

  async function choose(f: File | undefined) {
    if (!f) return;
    if (f.size > 1024 * 1024) {
      setNotice({
        tone: "error",
        text: "The file is over 1 MiB; a lab's sheet of breaks is much smaller.",
      });
      return;
    }
    setFile({ name: f.name, text: await f.text() });
  }

  async function importNow() {
    if (!file) return;
    setBusy("importing");
    const res = await sendJson(`/api/v1/mixes/${mix.id}/points/upload`, "POST", body(false, file));
    setBusy("");
    if (!res.ok) {
      setNotice({ tone: "error", text: (await readProblem(res)).message });
      return;
    }
    const done = (await res.json()) as LabPreview;
    await onImported();
    setFile(null);
    setPreview(null);
    if (fileRef.current) fileRef.current.value = "";
    setNotice({
      tone: "ok",
      text: `${done.imported} point${done.imported === 1 ? "" : "s"} imported from ${done.file_name}${done.errors.length ? `; ${done.errors.length} row${done.errors.length === 1 ? "" : "s"} could not be read` : ""}. Fit again to use them.`,
    });
  }

  const select = (
    k: string,
    label: string,
    value: string,
    set: (v: string) => void,
    options: [string, string][],
  ) => (
    <SelectField
      id={id(k)}
      label={label}
      value={value}
      onChange={(e) => set(e.target.value)}
      options={[["", "As the file's header says"], ...options]}
    />
  );

  return (
    <div className="grid grid-cols-1 gap-4">
      <p className="hint">
        A CSV file from the lab with a header row: specimen, age (days or hours), strength (psi or
        MPa), and a maturity (°C·h) or a curing temperature. One row a cylinder or one a set; the
        cylinders of each age become one point, their mean strength at their mean maturity.
      </p>
      <div>
        <label className="label mb-1 block" htmlFor={id("file")}>
          The lab's file
        </label>
        <input
          ref={fileRef}
          id={id("file")}
          type="file"
          accept=".csv,.txt,text/csv,text/plain"
          className="input py-2 file:mr-3 file:rounded-md file:border-0 file:bg-surface-2 file:px-3 file:py-1 file:font-semibold file:text-ink"
          onChange={(e) => void choose(e.target.files?.[0])}
        />
      </div>
      <div className="grid grid-cols-1 gap-4 sm:grid-cols-3">
        {select("age_unit", "Ages are in", ageUnit, setAgeUnit, [
          ["d", "days"],
          ["h", "hours"],
        ])}
        {select("strength_unit", "Strengths are in", sUnit, setSUnit, [
          ["psi", "psi"],
          ["mpa", "MPa"],
        ])}
        {select("temp_unit", "Curing temperatures are in", tUnit, setTUnit, [
          ["c", "°C"],
          ["f", "°F"],
        ])}
      </div>
      <div className="grid grid-cols-1 gap-2 sm:grid-cols-[auto_minmax(0,14rem)] sm:items-end sm:gap-4">
        <label className="flex min-h-11 items-center gap-2 text-sm font-semibold">
          <input
            type="checkbox"
            className="h-5 w-5"
            checked={useLabTemp}
            onChange={(e) => setUseLabTemp(e.target.checked)}
          />
          Rows without a maturity or temperature were cured at
        </label>
        <div>
          <label className="sr-only" htmlFor={id("lab_temp")}>
            Lab curing temperature ({tempUnit(units)})
          </label>
          <div className="flex items-center gap-2">
            <input
              id={id("lab_temp")}
              className="input figure"
              inputMode="decimal"
              value={labTemp}
              disabled={!useLabTemp}
              onChange={(e) => setLabTemp(e.target.value)}
            />
            <span aria-hidden="true">{tempUnit(units)}</span>
          </div>
        </div>
      </div>
      {busy === "reading" && (
        <p role="status" className="text-sm text-muted">
          Reading the file…
        </p>
      )}
      {notice && <Banner {...notice} />}
      {preview && (
        <section
          aria-label="Preview of the lab's file"
          className="grid grid-cols-1 gap-3"
          data-testid="lab-preview"
        >
          <p className="text-sm">
            <span className="font-semibold">{preview.file_name}</span>: header on row{" "}
            {preview.header_row};{" "}
            {Object.entries(preview.columns)
              .filter(([, v]) => v !== null)
              .map(([k, v]) => `${columnLabels[k] ?? k} “${v}”`)
              .join(", ")}
            . {preview.rows_in} rows, {preview.points.length} point
            {preview.points.length === 1 ? "" : "s"}
            {preview.errors.length > 0 &&
              `, ${preview.errors.length} row${preview.errors.length === 1 ? "" : "s"} not readable`}
            .
          </p>
          {preview.warnings.length > 0 && (
            <WarningList
              title="About this file"
              warnings={preview.warnings.map((m) => ({ code: "file", message: m }))}
            />
          )}
          {preview.points.length > 0 && (
            <div className="relative overflow-x-auto">
              <table className="w-full min-w-[30rem] text-left text-sm">
                <caption className="sr-only">Points the file gives</caption>
                <TableHead
                  cell="p-2"
                  columns={["Age", "Cylinders", "Mean strength", "Maturity", "Spread"]}
                />
                <tbody>
                  {preview.points.map((p) => (
                    <tr key={p.rows.join("-")} className="border-b border-line last:border-0">
                      <td className="figure p-2">{p.age_h === null ? "—" : ageText(p.age_h)}</td>
                      <td className="p-2">
                        {p.cylinder_count}
                        {p.specimens && (
                          <span className="block text-xs text-muted">{p.specimens}</span>
                        )}
                      </td>
                      <td className="figure p-2">{strengthText(p.strength_psi, units)}</td>
                      <td className="figure p-2">{ttfText(p.ttf_c_h)}</td>
                      <td className="figure p-2">
                        {p.range_pct === null ? "—" : `${p.range_pct.toFixed(0)} %`}
                      </td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          )}
          {preview.errors.length > 0 && (
            <details className="text-sm" open={preview.points.length === 0}>
              <summary className="cursor-pointer font-semibold">
                Rows that cannot be read ({preview.errors.length})
              </summary>
              <ul className="mt-1 grid gap-1">
                {preview.errors.slice(0, 50).map((e) => (
                  <li key={e.row}>
                    <span className="font-semibold">Row {e.row}:</span> {e.error}
                  </li>
                ))}
              </ul>
            </details>
          )}
          <div>
            <button
              type="button"
              className="btn btn-primary"
              disabled={busy !== "" || preview.points.length === 0}
              onClick={() => void importNow()}
            >
              {busy === "importing"
                ? "Importing…"
                : `Import ${preview.points.length} point${preview.points.length === 1 ? "" : "s"}`}
            </button>
          </div>
        </section>
      )}
    </div>
  );
}

// ---------------------------------------------------------------------------------------
// The whole calibration of one mix

/**
 * A mix's calibration: the current fit with its warnings and the caution that it governs every
 * estimate, the chart of breaks, curve and band, the breaks (add, remove, import the lab's file),
 * fitting with a choice of model, and every earlier fit.
 */
export default function MixCalibration({
  mix,
  units,
  timeZone,
  canEdit,
  initialPoints,
  initialCalibration,
}: Props) {
  const uid = useId();
  const [points, setPoints] = useState(initialPoints);
  const [view, setView] = useState(initialCalibration);
  const [model, setModel] = useState<FitItem["model"]>(initialCalibration.current?.model ?? "log");
  const [confirmFit, setConfirmFit] = useState(false);
  const [removing, setRemoving] = useState<PointItem | null>(null);
  const [notice, setNotice] = useState<Notice | null>(null);
  const [busy, setBusy] = useState(false);
  const fit = view.current;
  const fitPointSet = new Set(
    (fit?.points ?? []).map((p) => `${Math.round(p.ttf_c_h)}|${Math.round(p.strength_psi)}`),
  );
  const inFit = (p: PointItem) =>
    fitPointSet.has(`${Math.round(p.ttf_c_h)}|${Math.round(p.strength_psi)}`);
  // The same button on the phone's cards and the desk's table.
  const removeButton = (p: PointItem) => (
    <button
      type="button"
      className="btn btn-quiet min-h-10 px-3 text-sm"
      disabled={busy}
      onClick={() => setRemoving(p)}
    >
      Remove
      <span className="sr-only"> the break{p.age_h !== null ? ` at ${ageText(p.age_h)}` : ""}</span>
    </button>
  );

  async function reloadPoints() {
    const res = await fetch(`/api/v1/mixes/${mix.id}/points`);
    if (res.ok) setPoints(((await res.json()) as { points: PointItem[] }).points);
  }
  async function reloadCalibration() {
    const res = await fetch(`/api/v1/mixes/${mix.id}/calibration`);
    if (res.ok) setView((await res.json()) as CalibrationView);
  }

  async function runFit() {
    setBusy(true);
    setNotice(null);
    const res = await sendJson(`/api/v1/mixes/${mix.id}/calibration`, "POST", { model });
    setBusy(false);
    setConfirmFit(false);
    if (!res.ok) {
      setNotice({ tone: "error", text: (await readProblem(res)).message });
      return;
    }
    const made = (await res.json()) as FitItem;
    await reloadCalibration();
    setNotice({
      tone: "ok",
      text: `${modelNames[made.model]} curve fitted to ${made.point_count} breaks and made current: R² ${made.r2?.toFixed(3) ?? "—"}${made.warnings.length ? `, with ${made.warnings.length} warning${made.warnings.length === 1 ? "" : "s"} to read below` : ""}.`,
    });
  }

  async function remove(p: PointItem) {
    setBusy(true);
    const res = await sendJson(`/api/v1/mixes/${mix.id}/points/${p.id}`, "DELETE");
    setBusy(false);
    setRemoving(null);
    if (!res.ok) {
      setNotice({ tone: "error", text: (await readProblem(res)).message });
      return;
    }
    setPoints((list) => list.filter((x) => x.id !== p.id));
    setNotice({
      tone: "ok",
      text: `Break${p.age_h !== null ? ` at ${ageText(p.age_h)}` : ""} removed. Fit again to leave it out of the curve.`,
    });
  }

  const ages = new Set(points.map((p) => (p.age_h ?? p.ttf_c_h).toFixed(2))).size;

  return (
    <div className="grid grid-cols-1 gap-6">
      {/* The current fit */}
      <section aria-labelledby={`${uid}-fit`} className="card grid grid-cols-1 gap-4 p-4 sm:p-5">
        <div className="flex flex-wrap items-start justify-between gap-3">
          <div>
            <h2 id={`${uid}-fit`} className="text-xl font-bold">
              Strength-maturity calibration
            </h2>
            <p className="text-sm text-muted">
              Strength against temperature-time factor (°C·h, datum{" "}
              {tempText(mix.datum_temp_c, "si")}), ASTM C1074.
            </p>
          </div>
          {fit ? (
            <span
              className={`inline-flex items-center gap-1 rounded-full px-3 py-1 text-sm font-bold ${fit.warnings.length ? "bg-warn-bg text-warn" : "bg-ok-bg text-ok"}`}
              data-testid="fit-state"
            >
              <span aria-hidden="true">{fit.warnings.length ? "▲" : "●"}</span>
              {fit.warnings.length ? "Calibrated, with warnings" : "Calibrated"}
            </span>
          ) : (
            <span
              className="inline-flex items-center gap-1 rounded-full bg-warn-bg px-3 py-1 text-sm font-bold text-warn"
              data-testid="fit-state"
            >
              <span aria-hidden="true">▲</span>Not calibrated
            </span>
          )}
        </div>

        <p className="rounded-lg bg-info-bg p-3 text-sm" role="note">
          <span className="font-semibold">Caution. </span>
          {calibrationCaution(mix.name)}
        </p>

        {fit ? (
          <>
            <WarningList title="Warnings about this calibration" warnings={fit.warnings} />
            <dl
              className="grid grid-cols-2 gap-x-4 gap-y-3 text-sm md:grid-cols-4"
              data-testid="fit-summary"
            >
              <div>
                <dt className="text-muted">Model</dt>
                <dd className="font-semibold">{modelNames[fit.model]}</dd>
                <dd className="figure text-xs text-muted">{fit.equation}</dd>
              </div>
              <div>
                <dt className="text-muted">R²</dt>
                <dd className="figure text-lg font-bold">
                  {fit.r2 === null ? "—" : fit.r2.toFixed(3)}
                </dd>
              </div>
              <div>
                <dt className="text-muted">RMSE</dt>
                <dd className="figure text-lg font-bold">
                  {fit.rmse_psi === null ? "—" : strengthText(fit.rmse_psi, units)}
                </dd>
              </div>
              <div>
                <dt className="text-muted">Breaks, ages</dt>
                <dd className="figure text-lg font-bold">
                  {fit.point_count}, {fit.ages ?? "—"}
                  <span className="text-xs font-normal text-muted">
                    {" "}
                    (want {fit.min_ages}+ ages)
                  </span>
                </dd>
              </div>
              {paramsText(fit, units).map((p) => (
                <div key={p.label}>
                  <dt className="text-muted">{p.label}</dt>
                  <dd className="figure font-semibold">{p.value}</dd>
                </div>
              ))}
              <div className="col-span-2">
                <dt className="text-muted">Fitted</dt>
                <dd>
                  {fit.created_at
                    ? formatDateTime(Date.parse(fit.created_at), timeZone, "short")
                    : "—"}
                  {fit.created_by && ` by ${fit.created_by}`}
                </dd>
              </div>
            </dl>
            <div className="grid grid-cols-1 gap-3 sm:grid-cols-2">
              {(["strip", "ship"] as const).map((k) => {
                const t = fit.thresholds[k];
                return (
                  <div key={k} className="rounded-lg border border-line p-3">
                    <p className="text-sm text-muted">
                      {k === "strip" ? "Strip" : "Ship"} at {strengthText(t.strength_psi, units)}{" "}
                      needs
                    </p>
                    <p className="figure text-lg font-bold">
                      {t.ttf_c_h === null ? "never reached" : ttfText(t.ttf_c_h)}
                    </p>
                    {t.ttf_c_h !== null && (
                      <p className="text-xs text-muted">
                        about {ageText(labHours(t.ttf_c_h, mix.datum_temp_c))} of lab curing at{" "}
                        {tempText(LAB_CURING_TEMP_C, units)}
                        {t.standing === "below" && "; below the earliest break"}
                        {t.standing === "above" && "; beyond the latest break"}
                      </p>
                    )}
                  </div>
                );
              })}
            </div>
          </>
        ) : (
          <p className="rounded-lg border-2 border-warn bg-warn-bg p-3 font-semibold text-warn">
            <span aria-hidden="true">▲ </span>
            No curve yet: this mix's pours show maturity but no strength estimate until QC fits one
            to the cylinder breaks.
          </p>
        )}

        {(fit || points.length > 0) && (
          <MixChart
            fit={fit}
            points={points}
            units={units}
            stripPsi={mix.strip_strength_psi}
            shipPsi={mix.ship_strength_psi}
            mixName={mix.name}
          />
        )}

        {canEdit && (
          <div className="grid grid-cols-1 gap-3 border-t border-line pt-4">
            <h3 className="font-bold">Fit the stored breaks</h3>
            <div className="flex flex-wrap items-end gap-3">
              <div className="min-w-64 flex-1 sm:max-w-md">
                <SelectField
                  id={`${uid}-model`}
                  label="Model"
                  value={model}
                  onChange={(e) => setModel(e.target.value as FitItem["model"])}
                >
                  {(Object.keys(modelLabels) as FitItem["model"][]).map((m) => (
                    <option key={m} value={m}>
                      {modelNames[m]}
                      {m === "log" ? " (ASTM C1074)" : ""}
                    </option>
                  ))}
                </SelectField>
                <p className="hint figure mt-1">{modelLabels[model].split(": ")[1]}</p>
              </div>
              <button
                type="button"
                className="btn btn-primary"
                disabled={busy || points.length < 2}
                onClick={() => setConfirmFit(true)}
              >
                Fit {points.length} breaks…
              </button>
            </div>
            {points.length < 2 && (
              <p className="hint">
                A fit needs two or more breaks; five ages (1, 3, 7, 14 and 28 days) make a
                calibration.
              </p>
            )}
            {busy && (
              <p role="status" className="text-sm text-muted">
                Working…
              </p>
            )}
            {notice && <Banner {...notice} />}
          </div>
        )}
      </section>

      {/* The breaks */}
      <section aria-labelledby={`${uid}-breaks`} className="card grid grid-cols-1 gap-3 p-4 sm:p-5">
        <h2 id={`${uid}-breaks`} className="text-xl font-bold">
          Cylinder breaks ({points.length}, {ages} age{ages === 1 ? "" : "s"})
        </h2>
        {points.length === 0 ? (
          <p className="text-muted">
            No breaks yet. {canEdit ? "Add them below, or import the lab's file." : ""}
          </p>
        ) : (
          <>
            <ul
              className="grid grid-cols-1 gap-2 sm:hidden"
              aria-label={`Cylinder breaks of ${mix.name}`}
            >
              {points.map((p) => (
                <li key={p.id} className="rounded-lg border border-line p-3">
                  <div className="flex items-baseline justify-between gap-2">
                    <span className="figure font-bold">
                      {p.age_h === null ? "—" : ageText(p.age_h)} · {ttfText(p.ttf_c_h)}
                    </span>
                    <span className="figure text-lg font-bold">
                      {strengthText(p.strength_psi, units)}
                    </span>
                  </div>
                  <p className="text-sm text-muted">
                    {p.equivalent_age_h !== null && (
                      <span className="figure">
                        equivalent age {p.equivalent_age_h.toFixed(1)} h ·{" "}
                      </span>
                    )}
                    {p.specimens ?? "No specimen marks"}
                    {p.broken_at &&
                      ` · broken ${new Date(p.broken_at).toLocaleDateString("en-US", { timeZone, dateStyle: "medium" })}`}
                  </p>
                  <div className="mt-1 flex items-center justify-between gap-2 text-sm">
                    <span>
                      {fit &&
                        (inFit(p) ? (
                          "In the fit"
                        ) : (
                          <span className="font-semibold text-alarm">
                            <span aria-hidden="true">■ </span>Not in the fit yet
                          </span>
                        ))}
                    </span>
                    {canEdit && removeButton(p)}
                  </div>
                </li>
              ))}
            </ul>
            <div className="relative hidden overflow-x-auto sm:block">
              <table className="w-full min-w-[36rem] text-left text-sm" data-testid="breaks-table">
                <caption className="sr-only">Cylinder breaks of {mix.name}</caption>
                <TableHead
                  cell="p-2"
                  columns={[
                    "Age",
                    "Maturity",
                    "Equivalent age",
                    "Mean strength",
                    "Specimens",
                    "Broken",
                    !!fit && "In fit",
                    canEdit && { label: "Actions", srOnly: true },
                  ]}
                />
                <tbody>
                  {points.map((p) => (
                    <tr key={p.id} className="border-b border-line last:border-0">
                      <th scope="row" className="figure whitespace-nowrap p-2 font-semibold">
                        {p.age_h === null ? "—" : ageText(p.age_h)}
                      </th>
                      <td className="figure whitespace-nowrap p-2">{ttfText(p.ttf_c_h)}</td>
                      <td className="figure p-2">
                        {p.equivalent_age_h === null ? "—" : `${p.equivalent_age_h.toFixed(1)} h`}
                      </td>
                      <td className="figure whitespace-nowrap p-2 font-semibold">
                        {strengthText(p.strength_psi, units)}
                      </td>
                      <td className="max-w-56 break-words p-2">{p.specimens ?? "—"}</td>
                      <td className="whitespace-nowrap p-2">
                        {p.broken_at
                          ? new Date(p.broken_at).toLocaleDateString("en-US", {
                              timeZone,
                              dateStyle: "medium",
                            })
                          : "—"}
                      </td>
                      {fit && (
                        <td className="p-2">
                          {inFit(p) ? (
                            "Yes"
                          ) : (
                            <span className="font-semibold text-alarm">Not yet</span>
                          )}
                        </td>
                      )}
                      {canEdit && <td className="p-2 text-right">{removeButton(p)}</td>}
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          </>
        )}
        {canEdit && (
          <>
            <details className="rounded-lg border border-line p-3" open={points.length === 0}>
              <summary className="cursor-pointer text-base font-bold">Add a break</summary>
              <div className="mt-3">
                <AddBreak
                  mix={mix}
                  units={units}
                  timeZone={timeZone}
                  onAdded={(p) =>
                    setPoints((list) => [...list, p].sort((a, b) => a.ttf_c_h - b.ttf_c_h))
                  }
                />
              </div>
            </details>
            <details className="rounded-lg border border-line p-3">
              <summary className="cursor-pointer text-base font-bold">
                Import the lab's file
              </summary>
              <div className="mt-3">
                <LabUpload mix={mix} units={units} onImported={reloadPoints} />
              </div>
            </details>
          </>
        )}
      </section>

      {/* Every fit */}
      <section aria-labelledby={`${uid}-history`} className="card p-4 sm:p-5">
        <h2 id={`${uid}-history`} className="text-xl font-bold">
          Fits on record ({view.history.length})
        </h2>
        {view.history.length === 0 ? (
          <p className="mt-2 text-muted">None yet.</p>
        ) : (
          <div className="relative mt-2 overflow-x-auto">
            <table className="w-full min-w-[36rem] text-left text-sm" data-testid="fit-history">
              <caption className="sr-only">Fits of {mix.name}, newest first</caption>
              <TableHead
                cell="p-2"
                columns={["Fitted", "Model", "R²", "RMSE", "Breaks", "Warnings"]}
              />
              <tbody>
                {view.history.map((f) => (
                  <tr
                    key={f.id}
                    className={`border-b border-line last:border-0 ${f.current ? "" : "text-muted"}`}
                  >
                    <th scope="row" className="p-2 font-normal">
                      {f.created_at
                        ? formatDateTime(Date.parse(f.created_at), timeZone, "short")
                        : "—"}
                      {f.created_by && <span className="block text-xs">{f.created_by}</span>}
                      {f.current && (
                        <span className="mt-1 inline-flex items-center gap-1 rounded-full bg-info-bg px-2 py-0.5 text-xs font-bold text-accent">
                          <span aria-hidden="true">◆</span>Current
                        </span>
                      )}
                    </th>
                    <td className="p-2">{modelNames[f.model]}</td>
                    <td className="figure p-2">{f.r2 === null ? "—" : f.r2.toFixed(3)}</td>
                    <td className="figure whitespace-nowrap p-2">
                      {f.rmse_psi === null ? "—" : strengthText(f.rmse_psi, units)}
                    </td>
                    <td className="figure p-2">{f.point_count}</td>
                    <td className="p-2">
                      {f.warnings.length === 0
                        ? "None"
                        : f.warnings.map((w) => warningTitles[w.code] ?? w.code).join(", ")}
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
      </section>

      {confirmFit && (
        <Modal title={`Fit ${mix.name} and make it current?`} onClose={() => setConfirmFit(false)}>
          <p className="mt-2">
            A {modelNames[model].toLowerCase()} curve is fitted to the {points.length} stored breaks
            and becomes {mix.name}'s calibration. From then on every strength estimate of its pours,
            and every strip and ship decision made on them, follows the new curve. Earlier fits stay
            on record.
          </p>
          <p className="hint mt-2">
            Read the warnings after the fit; a poor fit or too few ages calls for more breaks, not a
            release.
          </p>
          <div className="mt-4 flex flex-wrap gap-2">
            <button
              type="button"
              className="btn btn-primary"
              disabled={busy}
              onClick={() => void runFit()}
            >
              {busy ? "Fitting…" : "Fit and make current"}
            </button>
            <button type="button" className="btn btn-quiet" onClick={() => setConfirmFit(false)}>
              Cancel
            </button>
          </div>
        </Modal>
      )}
      {removing && (
        <Modal title="Remove this break?" onClose={() => setRemoving(null)}>
          <p className="mt-2">
            {removing.age_h !== null ? `${ageText(removing.age_h)}: ` : ""}
            {strengthText(removing.strength_psi, units)} at {ttfText(removing.ttf_c_h)}
            {removing.specimens ? ` (${removing.specimens})` : ""}. Fits already made keep it; the
            next fit leaves it out. The audit log keeps a record.
          </p>
          <div className="mt-4 flex flex-wrap gap-2">
            <button
              type="button"
              className="btn btn-danger"
              disabled={busy}
              onClick={() => void remove(removing)}
            >
              Remove the break
            </button>
            <button type="button" className="btn btn-quiet" onClick={() => setRemoving(null)}>
              Keep it
            </button>
          </div>
        </Modal>
      )}
    </div>
  );
}
