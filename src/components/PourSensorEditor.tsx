import { useState, type SyntheticEvent } from "react";
import { tileAdvice, tileLabels, tileState } from "@/domain/floor";
import { formatDuration, sensorState } from "@/domain/sensorState";
import { displayTemp, type UnitSystem } from "@/domain/units";
import { formatDateTime, readProblem } from "@/lib/format";
import { fromPlantInput, toPlantInput } from "@/lib/plantTime";
import { SelectField, SubmitButton, TextField } from "./Field";
import FormCard from "./FormCard";
import { Banner, type Notice } from "./Notice";
import type { SensorOption } from "./PourNewForm";

/** One assignment as GET /api/v1/pours/{id}/sensors shows it. */
export interface AssignmentItem {
  id: number;
  sensor: string;
  label: string | null;
  kind: "bag" | "embedded" | "bin" | "ambient" | null;
  area: string | null;
  location: string | null;
  from: string;
  to: string | null;
  on_pour: boolean;
  last_seen_at: string | null;
  last_temp_c: number | null;
  last_rh: number | null;
}

interface Props {
  pourId: number;
  code: string;
  initial: AssignmentItem[];
  /** Sensors that could be put on (not retired, not bins), with the pour holding each. */
  pickable: SensorOption[];
  units: UnitSystem;
  timeZone: string;
  nowMs: number;
  /** The floor may edit, and the pour is still open. */
  canEdit: boolean;
}

const kindNames = { bag: "Cure bag", embedded: "In concrete", bin: "Bin", ambient: "Air" } as const;

/**
 * The sensors watching a pour, with their last reading and their time on the pour; the floor
 * takes sensors off and puts others on (moving one from another pour only when told to).
 */
export default function PourSensorEditor({
  pourId,
  code,
  initial,
  pickable,
  units,
  timeZone,
  nowMs,
  canEdit,
}: Props) {
  const [items, setItems] = useState(initial);
  const [others, setOthers] = useState(pickable);
  const [busy, setBusy] = useState<string | null>(null);
  const [notice, setNotice] = useState<Notice | null>(null);
  const [adding, setAdding] = useState(false);
  const [sensor, setSensor] = useState("");
  const [location, setLocation] = useState("");
  const [from, setFrom] = useState(() => toPlantInput(nowMs, timeZone));
  const [moveOk, setMoveOk] = useState(false);
  const [fieldError, setFieldError] = useState<string | null>(null);

  const onPour = new Set(items.filter((a) => a.on_pour).map((a) => a.sensor));
  const byArea = new Map<string, SensorOption[]>();
  for (const s of others) {
    if (onPour.has(s.id)) continue;
    const key = s.area ?? "Not placed";
    byArea.set(key, [...(byArea.get(key) ?? []), s]);
  }
  const choices = [...byArea.entries()];
  const chosen = others.find((s) => s.id === sensor);
  const t = (c: number | null) => {
    if (c === null) return "—";
    const d = displayTemp(c, units);
    return `${d.value} ${d.unit}`;
  };

  async function post(body: unknown, what: string): Promise<boolean> {
    setNotice(null);
    const res = await fetch(`/api/v1/pours/${pourId}/sensors`, {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify(body),
    });
    if (!res.ok) {
      const p = await readProblem(res);
      setNotice({ tone: "error", text: p.message });
      return false;
    }
    const next = (await res.json()) as { assignments: AssignmentItem[] };
    setItems(next.assignments);
    setNotice({ tone: "ok", text: what });
    return true;
  }

  async function takeOff(a: AssignmentItem) {
    if (
      !window.confirm(`Take ${a.sensor} off ${code} now? Its readings stop counting for this pour.`)
    )
      return;
    setBusy(a.sensor);
    const ok = await post({ end: [{ sensor: a.sensor }] }, `${a.sensor} is off ${code}.`);
    setBusy(null);
    if (ok)
      setOthers((list) => list.map((s) => (s.id === a.sensor ? { ...s, pour_code: null } : s)));
  }

  async function add(e: SyntheticEvent) {
    e.preventDefault();
    setFieldError(null);
    if (!sensor) {
      setFieldError("Pick a sensor");
      return;
    }
    const fromMs = fromPlantInput(from, timeZone);
    if (fromMs === null) {
      setFieldError("Enter when the sensor went on");
      return;
    }
    if (chosen?.pour_code && !moveOk) {
      setFieldError(`${sensor} is on ${chosen.pour_code}: tick “Move it here” to move it.`);
      return;
    }
    setBusy("add");
    const ok = await post(
      {
        add: [
          {
            sensor,
            from: new Date(fromMs).toISOString(),
            ...(location.trim() && { location: location.trim() }),
          },
        ],
        ...(chosen?.pour_code && { move: true }),
      },
      `${sensor} is on ${code}${chosen?.pour_code ? ` (moved from ${chosen.pour_code})` : ""}.`,
    );
    setBusy(null);
    if (ok) {
      setOthers((list) => list.map((s) => (s.id === sensor ? { ...s, pour_code: code } : s)));
      setSensor("");
      setLocation("");
      setMoveOk(false);
      setAdding(false);
    }
  }

  const current = items.filter((a) => a.on_pour);
  const past = items.filter((a) => !a.on_pour);

  return (
    <div className="grid gap-3">
      {notice && <Banner {...notice} look="card" />}
      {current.length === 0 ? (
        <p className="card bg-warn-bg p-3 font-semibold text-warn">
          <span aria-hidden="true">▲ </span>No sensor is on this pour now: nothing adds to its
          maturity.
        </p>
      ) : (
        <ul
          className="grid gap-2 sm:grid-cols-2 lg:grid-cols-1"
          aria-label="Sensors on the pour now"
        >
          {current.map((a) => {
            const lastMs = a.last_seen_at ? Date.parse(a.last_seen_at) : null;
            const live = sensorState(lastMs, nowMs);
            // The live floor's plain limits (src/domain/floor.ts): drying bag, cold or hot concrete.
            const state = tileState(
              {
                kind: a.kind,
                tempC: a.last_temp_c,
                rhPct: a.last_rh,
                lastSeenAtMs: lastMs,
                onPour: true,
              },
              nowMs,
            );
            return (
              <li
                key={a.id}
                className="card flex items-start justify-between gap-3 p-3"
                data-sensor={a.sensor}
              >
                <div className="min-w-0">
                  <a
                    href={`/sensors/${a.sensor}`}
                    className="figure text-lg font-bold text-accent underline-offset-2 hover:underline"
                  >
                    {a.sensor}
                  </a>
                  <p className="text-sm text-muted">
                    {a.label ?? (a.kind ? kindNames[a.kind] : "unnamed")}
                    {a.area ? ` · ${a.area}` : ""}
                  </p>
                  {a.location && <p className="text-sm">At: {a.location}</p>}
                  <p className="text-xs text-muted">
                    On since {formatDateTime(Date.parse(a.from), timeZone, "short")}
                  </p>
                </div>
                <div className="flex flex-col items-end gap-1 text-right">
                  <span className="figure text-2xl font-bold whitespace-nowrap">
                    {t(a.last_temp_c)}
                  </span>
                  {a.last_rh !== null && (
                    <span className="figure text-sm">{a.last_rh.toFixed(0)} % RH</span>
                  )}
                  {live === "reporting" ? (
                    <span className="text-xs text-muted">
                      {nowMs - lastMs! < 60_000
                        ? "just now"
                        : `${formatDuration(nowMs - lastMs!)} ago`}
                    </span>
                  ) : (
                    <span className="inline-flex items-center gap-1 rounded-full bg-alarm-bg px-2 py-0.5 text-xs font-bold text-alarm">
                      <span aria-hidden="true">✕</span>
                      {live === "never"
                        ? "No reading yet"
                        : `Silent ${formatDuration(nowMs - lastMs!)}`}
                    </span>
                  )}
                  {(state === "dry" || state === "cold" || state === "hot") && (
                    <span
                      className={`inline-flex items-start gap-1 rounded-md px-2 py-1 text-left text-xs font-bold ${state === "dry" ? "bg-warn-bg text-warn" : "bg-alarm-bg text-alarm"}`}
                      data-state={state}
                    >
                      <span aria-hidden="true">{state === "dry" ? "▲" : "■"}</span>
                      <span>
                        {tileLabels[state]}. {tileAdvice(state, units)}
                      </span>
                    </span>
                  )}
                  {canEdit && (
                    <button
                      type="button"
                      className="btn btn-quiet mt-1 min-h-10 px-3 text-sm"
                      disabled={busy !== null}
                      onClick={() => void takeOff(a)}
                    >
                      {busy === a.sensor ? "Taking off…" : "Take off"}
                      <span className="sr-only"> {a.sensor}</span>
                    </button>
                  )}
                </div>
              </li>
            );
          })}
        </ul>
      )}

      {past.length > 0 && (
        <details className="card p-3">
          <summary className="cursor-pointer font-semibold">
            Earlier sensors ({past.length})
          </summary>
          <ul className="mt-2 divide-y divide-line text-sm">
            {past.map((a) => (
              <li key={a.id} className="flex flex-wrap justify-between gap-2 py-2">
                <span>
                  <span className="figure font-semibold">{a.sensor}</span>{" "}
                  {a.location && `· ${a.location}`}
                </span>
                <span className="text-muted">
                  {formatDateTime(Date.parse(a.from), timeZone, "short")} to{" "}
                  {formatDateTime(Date.parse(a.to!), timeZone, "short")}
                </span>
              </li>
            ))}
          </ul>
        </details>
      )}

      {canEdit && (
        <FormCard
          open={adding}
          openLabel="Put a sensor on"
          onOpen={() => setAdding(true)}
          onCancel={() => setAdding(false)}
          onSubmit={add}
          className="sm:grid-cols-3 sm:items-start"
          span="sm:col-span-3"
          submit={
            <SubmitButton busy={busy === "add"} busyLabel="Putting on…" disabled={busy !== null}>
              Put on this pour
            </SubmitButton>
          }
        >
          <SelectField
            id="ps-sensor"
            label="Sensor"
            error={fieldError ?? undefined}
            value={sensor}
            onChange={(e) => {
              setSensor(e.target.value);
              setMoveOk(false);
            }}
          >
            <option value="">Pick a sensor…</option>
            {choices.map(([area, list]) => (
              <optgroup key={area} label={area}>
                {list.map((s) => (
                  <option key={s.id} value={s.id}>
                    {s.id} · {s.label ?? "unnamed"} · {s.pour_code ? `on ${s.pour_code}` : "free"}
                  </option>
                ))}
              </optgroup>
            ))}
          </SelectField>
          <TextField
            id="ps-location"
            label="Where on the pour (optional)"
            value={location}
            onChange={(e) => setLocation(e.target.value)}
            maxLength={80}
            autoComplete="off"
          />
          <TextField
            id="ps-from"
            label="On since"
            hint={`Plant time (${timeZone})`}
            type="datetime-local"
            className="input min-w-0"
            value={from}
            onChange={(e) => setFrom(e.target.value)}
          />
          {chosen?.pour_code && (
            <label className="card flex min-h-11 items-center gap-3 bg-warn-bg p-3 text-sm text-warn sm:col-span-3">
              <input
                type="checkbox"
                className="h-5 w-5"
                checked={moveOk}
                onChange={(e) => setMoveOk(e.target.checked)}
              />
              <span>
                <span aria-hidden="true">▲ </span>
                {chosen.id} is on {chosen.pour_code}. Move it here (its time there ends at “On
                since”)
              </span>
            </label>
          )}
        </FormCard>
      )}
    </div>
  );
}
