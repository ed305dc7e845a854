import { zodResolver } from "@hookform/resolvers/zod";
import { useEffect, useMemo, useState, type ReactNode } from "react";
import { useForm } from "react-hook-form";
import { z } from "zod";
import {
  CALIBRATION_INTERVAL_MONTHS,
  MAX_RH_OFFSET_PCT,
  MAX_TEMP_OFFSET_C,
  calibrationStanding,
  offsetFromCheck,
  type CalibrationStanding,
  type SensorKind,
} from "@/domain/calibration";
import { formatDuration, sensorState } from "@/domain/sensorState";
import { deltaCToF, deltaFToC, displayTemp, fToC, type UnitSystem } from "@/domain/units";
import { formatDateTime, readProblem } from "@/lib/format";
import Field, { SelectField, SubmitButton, TextField } from "./Field";
import Modal from "./Modal";
import { NoticeCard, type Notice } from "./Notice";
import TableHead from "./TableHead";

/** One sensor as the page and GET /api/v1/sensors show it, with its newest calibration check. */
export interface SensorItem {
  id: string;
  label: string | null;
  kind: SensorKind | null;
  area: string | null;
  last_seen_at: string | null;
  last_temp_c: number | null;
  last_rh: number | null;
  battery_pct: number | null;
  temp_offset_c: number;
  rh_offset_pct: number;
  status: "new" | "reporting" | "silent" | "retired";
  last_checked_at: string | null;
  next_check_due_at: string | null;
}

interface Props {
  initialSensors: SensorItem[];
  areas: string[];
  units: UnitSystem;
  timeZone: string;
  nowMs: number;
  /** Managers name, place and retire sensors. */
  canAdmin: boolean;
  /** QC and managers record calibration checks. */
  canCalibrate: boolean;
}

type Status = SensorItem["status"];

export const kindLabels: Record<SensorKind, string> = {
  bag: "Cure bag",
  embedded: "Embedded",
  bin: "Aggregate bin",
  ambient: "Ambient air",
};
const kinds = Object.keys(kindLabels) as SensorKind[];

const statusLabels: Record<Status, string> = {
  reporting: "Reporting",
  silent: "Silent",
  new: "New",
  retired: "Retired",
};

type Tone = "ok" | "warn" | "alarm" | "info" | "muted";
const toneStyles: Record<Tone, string> = {
  ok: "bg-ok-bg text-ok",
  warn: "bg-warn-bg text-warn",
  alarm: "bg-alarm-bg text-alarm",
  info: "bg-info-bg text-accent",
  muted: "bg-surface-2 text-muted",
};
const toneMarks: Record<Tone, string> = { ok: "●", warn: "▲", alarm: "■", info: "◆", muted: "○" };
const statusTones: Record<Status, Tone> = {
  reporting: "ok",
  silent: "warn",
  new: "info",
  retired: "muted",
};

/** A state by word and mark together, never by colour alone (as StateBadge.astro). */
function Badge({ tone, label }: { tone: Tone; label: string }) {
  return (
    <span
      className={`inline-flex items-center gap-1 whitespace-nowrap rounded-full px-2 py-0.5 text-xs font-bold ${toneStyles[tone]}`}
    >
      <span aria-hidden="true">{toneMarks[tone]}</span>
      {label}
    </span>
  );
}

/** A sensor in service is reporting or silent by the time of its last reading, now. */
function liveStatus(s: SensorItem, nowMs: number): Status {
  if (s.status === "new" || s.status === "retired") return s.status;
  const seen = s.last_seen_at ? Date.parse(s.last_seen_at) : null;
  return sensorState(seen, nowMs) === "reporting" ? "reporting" : "silent";
}

function standingOf(s: SensorItem, nowMs: number): CalibrationStanding {
  const dbStatus = s.status === "new" || s.status === "retired" ? s.status : "active";
  const last = s.last_checked_at
    ? {
        checkedAtMs: Date.parse(s.last_checked_at),
        nextDueAtMs: s.next_check_due_at ? Date.parse(s.next_check_due_at) : null,
      }
    : null;
  return calibrationStanding(s.kind, dbStatus, last, nowMs);
}

const needsCheck = (c: CalibrationStanding) => c === "never" || c === "overdue";

function ago(iso: string | null, nowMs: number): string {
  if (!iso) return "never";
  const ms = nowMs - Date.parse(iso);
  return ms < 60_000 ? "just now" : `${formatDuration(ms)} ago`;
}

function tempText(c: number | null, units: UnitSystem): string {
  if (c === null) return "—";
  const t = displayTemp(c, units);
  return `${t.value} ${t.unit}`;
}

/** An offset (a temperature difference) in the user's units, signed. */
function offsetText(c: number, units: UnitSystem): string {
  const v = units === "us" ? deltaCToF(c) : c;
  const s = v.toFixed(1);
  return `${v > 0 ? "+" : Number(s) === 0 ? "±" : ""}${Number(s) === 0 ? "0.0" : s} ${units === "us" ? "°F" : "°C"}`;
}

async function api(path: string, method: string, body?: unknown) {
  return fetch(path, {
    method,
    headers: body === undefined ? {} : { "content-type": "application/json" },
    body: body === undefined ? null : JSON.stringify(body),
  });
}

// ---------------------------------------------------------------------------------------
// Name and place / edit

const editForm = z.object({
  label: z
    .string()
    .trim()
    .min(1, { message: "Enter a name people will recognise" })
    .max(80, { message: "Use at most 80 characters" }),
  kind: z.enum(["bag", "embedded", "bin", "ambient"], { message: "Choose what the sensor is" }),
  area: z.string(),
});
type EditForm = z.input<typeof editForm>;

function EditDialog({
  sensor,
  areas,
  onDone,
  onClose,
}: {
  sensor: SensorItem;
  areas: string[];
  onDone: (updated: SensorItem, text: string) => void;
  onClose: () => void;
}) {
  const isNew = sensor.status === "new";
  const [error, setError] = useState<string | null>(null);
  const form = useForm<EditForm>({
    resolver: zodResolver(editForm),
    defaultValues: {
      label: sensor.label ?? "",
      // zod's enum refuses "", so an unset kind shows the "Choose" line and is caught on save.
      kind: (sensor.kind ?? "") as EditForm["kind"],
      area: sensor.area ?? "",
    },
  });
  const { errors, isSubmitting } = form.formState;

  async function save(values: EditForm) {
    setError(null);
    const body: Record<string, unknown> = {
      label: values.label.trim(),
      kind: values.kind,
      area: values.area === "" ? null : values.area,
    };
    if (isNew) body.status = "active";
    const res = await api(`/api/v1/sensors/${encodeURIComponent(sensor.id)}`, "PATCH", body);
    if (!res.ok) {
      const p = await readProblem(res);
      for (const [field, message] of Object.entries(p.fields)) {
        if (field === "label" || field === "kind" || field === "area")
          form.setError(field, { message });
      }
      setError(p.message);
      return;
    }
    const updated = (await res.json()) as Omit<SensorItem, "last_checked_at" | "next_check_due_at">;
    onDone(
      { ...sensor, ...updated },
      isNew
        ? `${sensor.id} is now "${updated.label}"${updated.area ? ` in ${updated.area}` : ""}, in service.`
        : `${sensor.id}: saved.`,
    );
  }

  const fid = (f: string) => `edit-${f}`;
  return (
    <Modal
      backdrop="backdrop:bg-black/50"
      title={isNew ? `Name and place ${sensor.id}` : `Edit ${sensor.id}`}
      onClose={onClose}
    >
      <p className="hint">
        {isNew
          ? "A gateway sent this sensor's first readings. Give it a name the crew will know, say what it is and where it lives; it then joins the live floor."
          : "The name, kind and area the crew sees. Its readings stay as they are."}
      </p>
      <form className="mt-4 grid gap-4" onSubmit={form.handleSubmit(save)} noValidate>
        <TextField
          id={fid("label")}
          label="Name"
          error={errors.label?.message}
          hint="e.g. Bed 3 east bag"
          autoComplete="off"
          {...form.register("label")}
        />
        <SelectField
          id={fid("kind")}
          label="Kind"
          error={errors.kind?.message}
          options={kinds.map((k) => [k, kindLabels[k]])}
          {...form.register("kind")}
        >
          <option value="" disabled>
            Choose…
          </option>
        </SelectField>
        <SelectField
          id={fid("area")}
          label="Area"
          error={errors.area?.message}
          options={[["", "Not in an area (spare)"], ...areas.map((a): [string, string] => [a, a])]}
          {...form.register("area")}
        />
        {error && (
          <p role="alert" className="error-text">
            {error}
          </p>
        )}
        <div className="flex flex-wrap gap-2">
          <SubmitButton busy={isSubmitting} busyLabel="Saving…">
            {isNew ? "Name and place" : "Save"}
          </SubmitButton>
          <button type="button" className="btn btn-quiet" onClick={onClose}>
            Cancel
          </button>
        </div>
      </form>
    </Modal>
  );
}

// ---------------------------------------------------------------------------------------
// Calibration check

const numberText = (required: boolean) =>
  z
    .string()
    .trim()
    .refine((s) => (s === "" ? !required : Number.isFinite(Number(s.replace(",", ".")))), {
      message: required ? "Enter a number" : "Enter a number, or leave it empty",
    });
const toNumber = (s: string) => Number(s.trim().replace(",", "."));

const checkForm = z.object({
  checked_at: z.string().min(1, { message: "Enter when the check was made" }),
  reference: numberText(true),
  reading: numberText(true),
  offset: numberText(false),
  rh_offset: numberText(false),
  next_due: z.string(),
  note: z.string().max(1000, { message: "Use at most 1000 characters" }),
});
type CheckForm = z.input<typeof checkForm>;

/** How far a time zone's wall clock is ahead of UTC at an instant, in ms. */
function zoneOffsetMs(ms: number, timeZone: string): number {
  const parts = new Intl.DateTimeFormat("en-US", {
    timeZone,
    hourCycle: "h23",
    year: "numeric",
    month: "2-digit",
    day: "2-digit",
    hour: "2-digit",
    minute: "2-digit",
    second: "2-digit",
  }).formatToParts(new Date(ms));
  const get = (t: Intl.DateTimeFormatPartTypes) => Number(parts.find((p) => p.type === t)?.value);
  const wall = Date.UTC(
    get("year"),
    get("month") - 1,
    get("day"),
    get("hour"),
    get("minute"),
    get("second"),
  );
  return wall - Math.floor(ms / 1000) * 1000;
}

/** "2026-03-02T04:10" for a datetime-local input: the plant's wall clock at an instant. */
function toPlantInput(ms: number, timeZone: string): string {
  return new Date(ms + zoneOffsetMs(ms, timeZone)).toISOString().slice(0, 16);
}

/** The instant a datetime-local value ("2026-03-02T04:10") names on the plant's wall clock. */
function fromPlantInput(value: string, timeZone: string): number {
  const wall = Date.parse(`${value.length === 16 ? `${value}:00` : value}Z`);
  if (!Number.isFinite(wall)) return Number.NaN;
  // Twice, so a wall time just after a daylight-saving change lands on the right offset.
  const first = wall - zoneOffsetMs(wall, timeZone);
  return wall - zoneOffsetMs(first, timeZone);
}

function CalibrateDialog({
  sensor,
  units,
  timeZone,
  onDone,
  onClose,
}: {
  sensor: SensorItem;
  units: UnitSystem;
  timeZone: string;
  onDone: (updated: SensorItem, text: string) => void;
  onClose: () => void;
}) {
  const unit = units === "us" ? "°F" : "°C";
  // Cure-bag and ambient sensors report humidity; embedded probes and bins do not.
  const hasHumidity = sensor.kind === "bag" || sensor.kind === "ambient" || sensor.last_rh !== null;
  const [error, setError] = useState<string | null>(null);
  const form = useForm<CheckForm>({
    resolver: zodResolver(checkForm),
    defaultValues: {
      checked_at: toPlantInput(Date.now(), timeZone),
      reference: "",
      reading: "",
      offset: "",
      rh_offset: String(sensor.rh_offset_pct),
      next_due: "",
      note: "",
    },
  });
  const { errors, isSubmitting } = form.formState;
  const [reference, reading, offset] = form.watch(["reference", "reading", "offset"]);

  const toC = (v: number) => (units === "us" ? fToC(v) : v);
  const deltaToC = (v: number) => (units === "us" ? deltaFToC(v) : v);
  const finite = (s: string) => s.trim() !== "" && Number.isFinite(toNumber(s));
  const previewC = finite(offset)
    ? deltaToC(toNumber(offset))
    : finite(reference) && finite(reading)
      ? offsetFromCheck(toC(toNumber(reference)), toC(toNumber(reading)))
      : null;

  async function save(values: CheckForm) {
    setError(null);
    const checkedAtMs = fromPlantInput(values.checked_at, timeZone);
    if (!Number.isFinite(checkedAtMs)) {
      form.setError("checked_at", { message: "Enter a date and time" });
      return;
    }
    const body: Record<string, unknown> = {
      checked_at: new Date(checkedAtMs).toISOString(),
      reference_temp_c: toC(toNumber(values.reference)),
      sensor_temp_c: toC(toNumber(values.reading)),
      note: values.note.trim() || null,
    };
    if (values.offset.trim() !== "") body.temp_offset_c = deltaToC(toNumber(values.offset));
    if (hasHumidity && values.rh_offset.trim() !== "")
      body.rh_offset_pct = toNumber(values.rh_offset);
    if (values.next_due) {
      // The end of the chosen day on the plant's clock.
      body.next_due_at = new Date(
        fromPlantInput(`${values.next_due}T23:59`, timeZone),
      ).toISOString();
    }
    const res = await api(
      `/api/v1/sensors/${encodeURIComponent(sensor.id)}/calibrations`,
      "POST",
      body,
    );
    if (!res.ok) {
      const p = await readProblem(res);
      const map: Record<string, keyof CheckForm> = {
        checked_at: "checked_at",
        reference_temp_c: "reference",
        sensor_temp_c: "reading",
        temp_offset_c: "offset",
        rh_offset_pct: "rh_offset",
        next_due_at: "next_due",
        note: "note",
      };
      for (const [field, message] of Object.entries(p.fields)) {
        const f = map[field];
        if (f) form.setError(f, { message });
      }
      setError(p.message);
      return;
    }
    const c = (await res.json()) as {
      checked_at: string;
      next_due_at: string;
      temp_offset_c: number;
      rh_offset_pct: number;
      applied: boolean;
    };
    const newer =
      !sensor.last_checked_at || Date.parse(c.checked_at) >= Date.parse(sensor.last_checked_at);
    onDone(
      {
        ...sensor,
        ...(c.applied && { temp_offset_c: c.temp_offset_c, rh_offset_pct: c.rh_offset_pct }),
        ...(newer && { last_checked_at: c.checked_at, next_check_due_at: c.next_due_at }),
      },
      c.applied
        ? `${sensor.id}: check recorded. Readings received from now on are corrected by ${offsetText(c.temp_offset_c, units)}; readings already stored keep their values. Next check due ${formatDateTime(Date.parse(c.next_due_at), timeZone, "medium")}.`
        : `${sensor.id}: check recorded in its history. A later check is already on record, so its correction stands.`,
    );
  }

  const fid = (f: string) => `cal-${f}`;
  return (
    <Modal
      backdrop="backdrop:bg-black/50"
      title={`Record a calibration check: ${sensor.id}`}
      onClose={onClose}
    >
      <p className="hint">
        Put the sensor beside a reference thermometer, let both settle, and note what each reads.
        ASTM C511 asks for this at least every {CALIBRATION_INTERVAL_MONTHS} months.
      </p>
      <form
        className="mt-4 grid gap-4 sm:grid-cols-2"
        onSubmit={form.handleSubmit(save)}
        noValidate
      >
        <div className="sm:col-span-2">
          <TextField
            id={fid("checked_at")}
            label="Checked at"
            error={errors.checked_at?.message}
            hint={`The plant's time (${timeZone}).`}
            type="datetime-local"
            {...form.register("checked_at")}
          />
        </div>
        <TextField
          id={fid("reference")}
          label={`Reference thermometer (${unit})`}
          error={errors.reference?.message}
          className="input figure"
          inputMode="decimal"
          autoComplete="off"
          {...form.register("reference")}
        />
        <TextField
          id={fid("reading")}
          label={`Sensor's own reading (${unit})`}
          error={errors.reading?.message}
          describedBy={[fid("reading-hint")]}
          className="input figure"
          inputMode="decimal"
          autoComplete="off"
          {...form.register("reading")}
        />
        <p id={fid("reading-hint")} className="hint sm:col-span-2">
          The sensor's own figure, before Plinth's correction (now{" "}
          {offsetText(sensor.temp_offset_c, units)}): take it from the sensor's display, or take
          Plinth's figure and remove the correction.
        </p>
        <TextField
          id={fid("offset")}
          label={`Correction (${unit}, optional)`}
          error={errors.offset?.message}
          hint={`Empty: reference minus the sensor's reading. At most ${units === "us" ? `${deltaCToF(MAX_TEMP_OFFSET_C)} °F` : `${MAX_TEMP_OFFSET_C} °C`} either way.`}
          className="input figure"
          autoComplete="off"
          {...form.register("offset")}
        />
        {hasHumidity && (
          <TextField
            id={fid("rh_offset")}
            label="Humidity correction (% RH)"
            error={errors.rh_offset?.message}
            hint={`Now ${sensor.rh_offset_pct} % RH. Empty sets 0. At most ${MAX_RH_OFFSET_PCT} either way.`}
            className="input figure"
            autoComplete="off"
            {...form.register("rh_offset")}
          />
        )}
        <TextField
          id={fid("next_due")}
          label="Next check due (optional)"
          error={errors.next_due?.message}
          hint={`Empty: ${CALIBRATION_INTERVAL_MONTHS} months after this check.`}
          type="date"
          {...form.register("next_due")}
        />
        <Field id={fid("note")} label="Note (optional)" error={errors.note?.message}>
          <textarea
            id={fid("note")}
            rows={2}
            className="input py-2"
            aria-describedby={errors.note ? `${fid("note")}-err` : undefined}
            {...form.register("note")}
          />
        </Field>
        <div className="rounded-lg bg-info-bg p-3 text-sm sm:col-span-2" aria-live="polite">
          <p className="font-semibold">
            {previewC === null
              ? "Enter both readings to see the correction."
              : `Readings will be corrected by ${offsetText(previewC, units)}.`}
          </p>
          <p className="mt-1">
            The correction applies to readings received from now on. Readings already stored keep
            the values they were stored with.
          </p>
        </div>
        {error && (
          <p role="alert" className="error-text sm:col-span-2">
            {error}
          </p>
        )}
        <div className="flex flex-wrap gap-2 sm:col-span-2">
          <SubmitButton busy={isSubmitting} busyLabel="Recording…">
            Record check
          </SubmitButton>
          <button type="button" className="btn btn-quiet" onClick={onClose}>
            Cancel
          </button>
        </div>
      </form>
    </Modal>
  );
}

// ---------------------------------------------------------------------------------------
// The page

function CalibrationCell({
  s,
  standing,
  timeZone,
}: {
  s: SensorItem;
  standing: CalibrationStanding;
  timeZone: string;
}) {
  const date = (iso: string | null) =>
    iso ? new Date(iso).toLocaleDateString("en-US", { dateStyle: "medium", timeZone }) : "";
  switch (standing) {
    case "never":
      return <Badge tone="warn" label="No check on record" />;
    case "overdue":
      return (
        <span className="grid justify-items-start gap-0.5">
          <Badge tone="warn" label="Check overdue" />
          <span className="text-xs text-muted">was due {date(s.next_check_due_at)}</span>
        </span>
      );
    case "due_soon":
      return (
        <span className="grid justify-items-start gap-0.5">
          <Badge tone="info" label="Check due soon" />
          <span className="text-xs text-muted">by {date(s.next_check_due_at)}</span>
        </span>
      );
    case "current":
      return (
        <span className="text-sm">
          Checked {date(s.last_checked_at)}
          <span className="block text-xs text-muted">next by {date(s.next_check_due_at)}</span>
        </span>
      );
    default:
      return (
        <span className="text-sm text-muted">
          {s.last_checked_at
            ? `Checked ${date(s.last_checked_at)}`
            : s.kind === "bin"
              ? "Optional for bins"
              : "—"}
        </span>
      );
  }
}

type Filters = { q: string; area: string; kind: string; status: string; dueOnly: boolean };
const NONE = "__none";

/**
 * Every sensor with its last reading and status; the queue of new sensors to name and place;
 * calibration checks. Managers name, place, edit and retire; QC and managers record checks.
 */
export default function SensorManager({
  initialSensors,
  areas,
  units,
  timeZone,
  nowMs: initialNowMs,
  canAdmin,
  canCalibrate,
}: Props) {
  const [sensors, setSensors] = useState(initialSensors);
  const [nowMs, setNowMs] = useState(initialNowMs);
  const [filters, setFilters] = useState<Filters>({
    q: "",
    area: "",
    kind: "",
    status: "",
    dueOnly: false,
  });
  const [dialog, setDialog] = useState<{ mode: "edit" | "calibrate"; id: string } | null>(null);
  const [notice, setNotice] = useState<Notice | null>(null);
  const [busy, setBusy] = useState<string | null>(null);

  // Keep "last seen" and the figures current: the clock every 30 s, the list every minute.
  useEffect(() => {
    const tick = setInterval(() => setNowMs(Date.now()), 30_000);
    const poll = setInterval(async () => {
      try {
        const res = await fetch("/api/v1/sensors", { headers: { accept: "application/json" } });
        if (!res.ok) return;
        type Listed = Omit<SensorItem, "last_checked_at" | "next_check_due_at">;
        const body = (await res.json()) as Listed[] | { sensors: Listed[] };
        const fresh = Array.isArray(body) ? body : body.sensors;
        setSensors((list) => {
          const known = new Map(list.map((s) => [s.id, s]));
          return fresh.map((f) => ({
            last_checked_at: null,
            next_check_due_at: null,
            ...known.get(f.id),
            ...f,
          }));
        });
      } catch {
        // Offline for a moment: keep what is shown; the next poll tries again.
      }
    }, 60_000);
    return () => {
      clearInterval(tick);
      clearInterval(poll);
    };
  }, []);

  const rows = useMemo(
    () => sensors.map((s) => ({ s, status: liveStatus(s, nowMs), standing: standingOf(s, nowMs) })),
    [sensors, nowMs],
  );
  const queue = rows.filter((r) => r.status === "new");
  const due = rows.filter((r) => needsCheck(r.standing));
  const neverChecked = due.filter((r) => r.standing === "never").length;

  const q = filters.q.trim().toLowerCase();
  const shown = rows.filter(({ s, status, standing }) => {
    if (q && !s.id.toLowerCase().includes(q) && !(s.label ?? "").toLowerCase().includes(q))
      return false;
    if (filters.area && (filters.area === NONE ? s.area !== null : s.area !== filters.area))
      return false;
    if (filters.kind && (filters.kind === NONE ? s.kind !== null : s.kind !== filters.kind))
      return false;
    if (filters.status && status !== filters.status) return false;
    if (filters.dueOnly && !needsCheck(standing)) return false;
    return true;
  });
  const filtered =
    filters.q !== "" ||
    filters.area !== "" ||
    filters.kind !== "" ||
    filters.status !== "" ||
    filters.dueOnly;

  const open = dialog ? sensors.find((s) => s.id === dialog.id) : undefined;
  const replace = (updated: SensorItem, text: string) => {
    setSensors((list) => list.map((x) => (x.id === updated.id ? updated : x)));
    setDialog(null);
    setNotice({ tone: "ok", text });
  };

  async function setInService(s: SensorItem, inService: boolean) {
    if (
      !inService &&
      !window.confirm(
        `Retire ${s.id}${s.label ? ` (${s.label})` : ""}? It leaves the live floor; its readings are kept. You can return it to service later.`,
      )
    )
      return;
    setBusy(s.id);
    const res = await api(`/api/v1/sensors/${encodeURIComponent(s.id)}`, "PATCH", {
      status: inService ? "active" : "retired",
    });
    setBusy(null);
    if (!res.ok) {
      setNotice({ tone: "error", text: (await readProblem(res)).message });
      return;
    }
    const updated = (await res.json()) as Omit<SensorItem, "last_checked_at" | "next_check_due_at">;
    setSensors((list) => list.map((x) => (x.id === s.id ? { ...x, ...updated } : x)));
    setNotice({
      tone: "ok",
      text: inService ? `${s.id} is back in service.` : `${s.id} is retired.`,
    });
  }

  const name = (s: SensorItem) => (
    <a href={`/sensors/${encodeURIComponent(s.id)}`} className="group">
      <span className="figure font-bold text-accent group-hover:underline">{s.id}</span>
      <span className="block text-sm font-semibold text-ink">
        {s.label ?? <span className="font-normal text-muted">Not named yet</span>}
      </span>
    </a>
  );

  const reading = (s: SensorItem) => (
    <span className="figure whitespace-nowrap">
      <span className="text-base font-semibold">{tempText(s.last_temp_c, units)}</span>
      {s.last_rh !== null && (
        <span className="ml-2 text-sm text-muted">{Math.round(s.last_rh)} % RH</span>
      )}
    </span>
  );

  const battery = (s: SensorItem) =>
    s.battery_pct === null ? (
      <span className="text-muted">—</span>
    ) : s.battery_pct < 20 ? (
      <Badge tone="warn" label={`${Math.round(s.battery_pct)} % low`} />
    ) : (
      <span className="figure">{Math.round(s.battery_pct)} %</span>
    );

  const actions = (s: SensorItem, status: Status) => {
    // The first step for a new sensor is the primary button, never held back by a busy row.
    const act = (key: string, label: string, of: string, onClick: () => void, first = false) => (
      <button
        key={key}
        type="button"
        className={`btn ${first ? "btn-primary" : "btn-quiet"} text-sm`}
        disabled={first ? undefined : busy === s.id}
        onClick={onClick}
      >
        {label}
        <span className="sr-only"> {of}</span>
      </button>
    );
    const edit = () => setDialog({ mode: "edit", id: s.id });
    const out: ReactNode[] = [];
    if (canAdmin && status === "new") out.push(act("place", "Name and place", s.id, edit, true));
    else if (canAdmin) out.push(act("edit", "Edit", s.id, edit));
    if (canCalibrate && status !== "new")
      out.push(
        act("check", "Record check", `of ${s.id}`, () =>
          setDialog({ mode: "calibrate", id: s.id }),
        ),
      );
    if (canAdmin && status !== "new")
      out.push(
        act(
          "service",
          status === "retired" ? "Return to service" : "Retire",
          s.id,
          () => void setInService(s, status === "retired"),
        ),
      );
    return out.length ? <div className="flex flex-wrap gap-2">{out}</div> : null;
  };

  const set = <K extends keyof Filters>(k: K, v: Filters[K]) =>
    setFilters((f) => ({ ...f, [k]: v }));
  const filterSelect = (
    k: "area" | "kind" | "status",
    label: string,
    options: [value: string, label: string][],
  ) => (
    <SelectField
      id={`f-${k}`}
      label={label}
      value={filters[k]}
      onChange={(e) => set(k, e.target.value)}
      options={options}
    />
  );

  return (
    <div className="grid gap-6">
      {notice && (
        <NoticeCard tone={notice.tone} className="flex items-start justify-between gap-3">
          <p className="font-semibold">{notice.text}</p>
          <button
            type="button"
            className="btn btn-quiet shrink-0 px-3 text-sm"
            onClick={() => setNotice(null)}
          >
            Dismiss
          </button>
        </NoticeCard>
      )}

      <section aria-labelledby="queue-h" className="card p-4">
        <div className="flex flex-wrap items-baseline justify-between gap-2">
          <h2 id="queue-h" className="text-lg font-bold">
            New sensors{" "}
            <span className="text-muted" data-testid="queue-count">
              ({queue.length})
            </span>
          </h2>
          <p className="hint">Seen by a gateway, not yet named and placed.</p>
        </div>
        {queue.length === 0 ? (
          <p className="mt-2 text-sm text-muted">
            None waiting: every sensor that has reported is named and placed.
          </p>
        ) : (
          <ul
            className="mt-3 grid gap-3 sm:grid-cols-2 xl:grid-cols-3"
            data-testid="new-sensor-queue"
          >
            {queue.map(({ s }) => (
              <li key={s.id} className="rounded-lg border-2 border-accent/60 bg-info-bg p-3">
                <div className="flex items-start justify-between gap-2">
                  <a
                    href={`/sensors/${encodeURIComponent(s.id)}`}
                    className="figure text-lg font-bold text-accent hover:underline"
                  >
                    {s.id}
                  </a>
                  <Badge tone="info" label="New" />
                </div>
                <p className="mt-1 text-sm">
                  {reading(s)} <span className="text-muted">· {ago(s.last_seen_at, nowMs)}</span>
                </p>
                {canAdmin ? (
                  <button
                    type="button"
                    className="btn btn-primary mt-3 w-full"
                    onClick={() => setDialog({ mode: "edit", id: s.id })}
                  >
                    Name and place<span className="sr-only"> {s.id}</span>
                  </button>
                ) : (
                  <p className="hint mt-2">A manager names and places it.</p>
                )}
              </li>
            ))}
          </ul>
        )}
      </section>

      {due.length > 0 && (
        <section
          aria-labelledby="due-h"
          className="card flex flex-wrap items-center justify-between gap-3 border-warn p-4"
        >
          <div>
            <h2 id="due-h" className="font-bold text-warn">
              <span aria-hidden="true">▲ </span>
              {due.length} {due.length === 1 ? "sensor is" : "sensors are"} due a calibration check
            </h2>
            <p className="text-sm">
              {neverChecked} with no check on record, {due.length - neverChecked} overdue. ASTM C511
              asks that recording thermometers be checked against a reference at least every{" "}
              {CALIBRATION_INTERVAL_MONTHS} months. Aggregate-bin sensors are not held to it.
            </p>
          </div>
          <button
            type="button"
            className="btn btn-quiet text-sm"
            aria-pressed={filters.dueOnly}
            onClick={() => set("dueOnly", !filters.dueOnly)}
          >
            {filters.dueOnly ? "Show all sensors" : "Show only these"}
          </button>
        </section>
      )}

      <section aria-labelledby="all-h" className="grid gap-3">
        <div className="flex flex-wrap items-baseline justify-between gap-2">
          <h2 id="all-h" className="text-lg font-bold">
            All sensors
          </h2>
          <p className="text-sm text-muted" aria-live="polite" data-testid="shown-count">
            {filtered ? `${shown.length} of ${rows.length} shown` : `${rows.length} sensors`}
          </p>
        </div>

        <div className="card grid grid-cols-2 gap-3 p-3 sm:grid-cols-3 lg:grid-cols-[2fr_1fr_1fr_1fr_auto] lg:items-end">
          <div className="field col-span-2 sm:col-span-3 lg:col-span-1">
            <label htmlFor="f-q">Search</label>
            <input
              id="f-q"
              type="search"
              className="input"
              placeholder="Sensor id or name"
              value={filters.q}
              onChange={(e) => set("q", e.target.value)}
            />
          </div>
          {filterSelect("area", "Area", [
            ["", "All areas"],
            ...areas.map((a): [string, string] => [a, a]),
            [NONE, "Not in an area"],
          ])}
          {filterSelect("kind", "Kind", [
            ["", "All kinds"],
            ...kinds.map((k): [string, string] => [k, kindLabels[k]]),
            [NONE, "Not set"],
          ])}
          {filterSelect("status", "Status", [["", "All"], ...Object.entries(statusLabels)])}
          <label className="flex min-h-11 items-center gap-2 self-end text-sm font-semibold">
            <input
              type="checkbox"
              className="h-5 w-5"
              checked={filters.dueOnly}
              onChange={(e) => set("dueOnly", e.target.checked)}
            />
            Check due
          </label>
        </div>

        {shown.length === 0 ? (
          <p className="card p-4 text-muted">No sensor matches these filters.</p>
        ) : (
          <>
            {/* Phones and tablets: one card per sensor. */}
            <ul className="grid gap-3 sm:grid-cols-2 lg:hidden" data-testid="sensor-cards">
              {shown.map(({ s, status, standing }) => (
                <li
                  key={s.id}
                  className={`card grid gap-2 p-3 ${status === "retired" ? "opacity-80" : ""}`}
                >
                  <div className="flex items-start justify-between gap-2">
                    {name(s)}
                    <Badge tone={statusTones[status]} label={statusLabels[status]} />
                  </div>
                  <p className="text-sm text-muted">
                    {s.kind ? kindLabels[s.kind] : "Kind not set"} · {s.area ?? "Not in an area"}
                  </p>
                  <div className="flex flex-wrap items-baseline justify-between gap-x-3">
                    {reading(s)}
                    <span className="text-sm text-muted">{ago(s.last_seen_at, nowMs)}</span>
                  </div>
                  <div className="flex flex-wrap items-center justify-between gap-2 text-sm">
                    <CalibrationCell s={s} standing={standing} timeZone={timeZone} />
                    {s.battery_pct !== null && (
                      <span className="flex items-center gap-1">
                        <span className="text-muted">Battery</span> {battery(s)}
                      </span>
                    )}
                  </div>
                  {actions(s, status)}
                </li>
              ))}
            </ul>

            {/* Desks: one table. */}
            <div className="card hidden overflow-x-auto lg:block">
              <table className="w-full text-left text-sm" data-testid="sensor-table">
                <caption className="sr-only">Sensors</caption>
                <TableHead
                  columns={[
                    "Sensor",
                    "Kind and area",
                    "Last reading",
                    "Last seen",
                    "Battery",
                    "Status",
                    "Calibration",
                    (canAdmin || canCalibrate) && "Actions",
                  ]}
                />
                <tbody>
                  {shown.map(({ s, status, standing }) => (
                    <tr
                      key={s.id}
                      className={`border-b border-line align-top last:border-0 ${status === "retired" ? "text-muted" : ""}`}
                    >
                      <th scope="row" className="p-3 font-normal">
                        {name(s)}
                      </th>
                      <td className="p-3">
                        {s.kind ? kindLabels[s.kind] : <span className="text-muted">Not set</span>}
                        <span className="block text-xs text-muted">
                          {s.area ?? "Not in an area"}
                        </span>
                      </td>
                      <td className="p-3">{reading(s)}</td>
                      <td className="whitespace-nowrap p-3">
                        {ago(s.last_seen_at, nowMs)}
                        {s.last_seen_at && (
                          <span className="block text-xs text-muted">
                            {formatDateTime(Date.parse(s.last_seen_at), timeZone, "short")}
                          </span>
                        )}
                      </td>
                      <td className="p-3">{battery(s)}</td>
                      <td className="p-3">
                        <Badge tone={statusTones[status]} label={statusLabels[status]} />
                      </td>
                      <td className="p-3">
                        <CalibrationCell s={s} standing={standing} timeZone={timeZone} />
                      </td>
                      {(canAdmin || canCalibrate) && <td className="p-3">{actions(s, status)}</td>}
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          </>
        )}
      </section>

      {open && dialog?.mode === "edit" && (
        <EditDialog sensor={open} areas={areas} onDone={replace} onClose={() => setDialog(null)} />
      )}
      {open && dialog?.mode === "calibrate" && (
        <CalibrateDialog
          sensor={open}
          units={units}
          timeZone={timeZone}
          onDone={replace}
          onClose={() => setDialog(null)}
        />
      )}
    </div>
  );
}
