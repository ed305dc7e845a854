import { useEffect, useState } from "react";
import type { PourStatus, RecordGap, ReleaseKind } from "@/domain/release";
import { formatDuration } from "@/domain/sensorState";
import type { UnitSystem } from "@/domain/units";
import type { Milestone, PourStrength } from "@/lib/server/strength/pourStrength";
import ReleaseBadge from "./ReleaseBadge";
import TableHead from "./TableHead";
import { datumText, relativeText, strengthText, whenText, whenWithRelative } from "./ReleaseFormat";

export interface MissingStretch {
  sensor: string;
  kind: RecordGap["kind"];
  from: string;
  to: string;
}

export interface ReleasedMark {
  at: string;
  by: string;
  override: boolean;
}

/** Sent by the release panel when a release is recorded, so the bars show it at once. */
export interface ReleaseRecordedDetail extends ReleasedMark {
  kind: ReleaseKind;
  pourStatus: PourStatus;
}

export const pourStatusLabels: Record<PourStatus, string> = {
  curing: "Curing",
  stripped: "Stripped",
  ready_to_ship: "Ready to ship",
  shipped: "Shipped",
  void: "Void",
};
export const RELEASE_RECORDED_EVENT = "plinth:release-recorded";

interface Props {
  pourId: number;
  initial: PourStrength;
  status: PourStatus;
  units: UnitSystem;
  timeZone: string;
  nowMs: number;
  datumC: number;
  missing: MissingStretch[];
  released: Record<ReleaseKind, ReleasedMark | null>;
  /** How often to refresh the figures, ms. */
  refreshMs?: number;
}

const H = 3_600_000;

function missingText(m: MissingStretch, tz: string, now: number): string {
  const from = Date.parse(m.from);
  const to = Date.parse(m.to);
  switch (m.kind) {
    case "gap":
      return `no reading from ${whenText(from, tz, now)} to ${whenText(to, tz, now)} (${formatDuration(to - from)}); that time adds no maturity`;
    case "late-start":
      return `first reading ${whenText(to, tz, now)}, ${formatDuration(to - from)} after cast`;
    case "silent":
      return `silent since ${whenText(from, tz, now)} (${formatDuration(to - from)})`;
    case "no-readings":
      return "no reading since cast";
  }
}

function MilestoneCard({
  kind,
  m,
  strengthPsi,
  calibrated,
  released,
  units,
  timeZone,
  now,
}: {
  kind: ReleaseKind;
  m: Milestone;
  strengthPsi: number | null;
  calibrated: boolean;
  released: ReleasedMark | null;
  units: UnitSystem;
  timeZone: string;
  now: number;
}) {
  const title = kind === "strip" ? "Strip" : "Ship";
  const reached = m.reached_at !== null;
  const pct =
    strengthPsi === null || m.threshold_psi <= 0
      ? 0
      : Math.min(100, Math.floor((strengthPsi / m.threshold_psi) * 100));
  const id = `milestone-${kind}`;
  return (
    <section aria-labelledby={id} className="card p-4 sm:p-5" data-testid={id}>
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <h2 id={id} className="text-xl font-bold">
          {title}
        </h2>
        <p className="text-sm text-muted">
          needs{" "}
          <span className="figure font-semibold text-ink">
            {strengthText(m.threshold_psi, units)}
          </span>
        </p>
      </div>
      <p className="figure mt-2 text-4xl font-bold leading-tight sm:text-5xl">
        {calibrated ? strengthText(strengthPsi, units) : "—"}
      </p>
      <div
        role="progressbar"
        aria-label={`${title} progress`}
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={pct}
        aria-valuetext={
          calibrated
            ? `${strengthText(strengthPsi, units)} of ${strengthText(m.threshold_psi, units)}, ${pct} %`
            : "No estimate"
        }
        className="mt-3 h-5 w-full overflow-hidden rounded-full border border-line bg-surface-2"
      >
        <div
          className={`h-full rounded-full ${reached ? "bg-ok" : "bg-accent"}`}
          style={{ width: `${pct}%` }}
        />
      </div>
      {calibrated && (
        <p className="mt-1 text-sm text-muted">
          <span className="figure">{pct} %</span> of the {kind} strength
        </p>
      )}
      <div className="mt-3 flex flex-col items-start gap-2">
        {!calibrated ? (
          <ReleaseBadge tone="alarm" large label="Cannot estimate: mix not calibrated" />
        ) : reached ? (
          <ReleaseBadge
            tone="ok"
            large
            label={`Reached ${whenWithRelative(Date.parse(m.reached_at!), timeZone, now)}`}
          />
        ) : m.forecast_at ? (
          <>
            <ReleaseBadge
              tone="info"
              large
              label={`Forecast ${whenWithRelative(Date.parse(m.forecast_at), timeZone, now)}`}
            />
            <span className="hint">If the last 6 hours’ mean temperature holds.</span>
          </>
        ) : (
          <ReleaseBadge
            tone="warn"
            large
            label="No forecast: the last 6 hours were too cold or had no readings"
          />
        )}
        {released ? (
          <ReleaseBadge
            tone={released.override ? "warn" : "ok"}
            large
            label={`${title} released by ${released.by}, ${whenText(Date.parse(released.at), timeZone, now)}${released.override ? " (override)" : ""}`}
          />
        ) : (
          <ReleaseBadge tone="muted" label={`No ${kind} release yet`} />
        )}
      </div>
    </section>
  );
}

/**
 * A pour's strength by the maturity method, for everyone: progress to strip and to ship, the
 * forecast, the record's completeness and what is missing, and each sensor's figures with the
 * governing (coldest) one marked. Refreshes from GET /api/v1/pours/{id}/strength every minute.
 */
export default function PourStrengthView({
  pourId,
  initial,
  status: initialStatus,
  units,
  timeZone,
  nowMs,
  datumC,
  missing,
  released: initialReleased,
  refreshMs = 60_000,
}: Props) {
  const [view, setView] = useState(initial);
  const [now, setNow] = useState(nowMs);
  const [stale, setStale] = useState(false);
  const [released, setReleased] = useState(initialReleased);
  const [status, setStatus] = useState(initialStatus);

  useEffect(() => {
    let alive = true;
    const tick = async () => {
      try {
        const res = await fetch(`/api/v1/pours/${pourId}/strength`);
        if (!res.ok) throw new Error(String(res.status));
        const next = (await res.json()) as PourStrength;
        if (!alive) return;
        setView(next);
        setNow(Date.parse(next.as_of));
        setStale(false);
      } catch {
        if (alive) setStale(true);
      }
    };
    const timer = window.setInterval(tick, refreshMs);
    const onRelease = (e: Event) => {
      const d = (e as CustomEvent<ReleaseRecordedDetail>).detail;
      setReleased((r) => ({ ...r, [d.kind]: { at: d.at, by: d.by, override: d.override } }));
      setStatus(d.pourStatus);
    };
    window.addEventListener(RELEASE_RECORDED_EVENT, onRelease);
    return () => {
      alive = false;
      window.clearInterval(timer);
      window.removeEventListener(RELEASE_RECORDED_EVENT, onRelease);
    };
  }, [pourId, refreshMs]);

  const governing = view.sensors.find((s) => s.sensor === view.governing_sensor) ?? null;
  const strengthPsi = governing?.strength_psi ?? null;
  // What is missing: the stretches found at page load, and any sensor that went silent since.
  const known = new Set(missing.map((m) => m.sensor));
  const allMissing: { sensor: string; text: string }[] = [
    ...missing
      .filter((m) => view.sensors.some((s) => s.sensor === m.sensor))
      .map((m) => ({ sensor: m.sensor, text: missingText(m, timeZone, now) })),
    ...view.sensors
      .filter((s) => !s.complete_record && !known.has(s.sensor))
      .map((s) => ({
        sensor: s.sensor,
        text:
          s.last_reading_at === null
            ? "no reading since cast"
            : now - Date.parse(s.last_reading_at) > 2 * H
              ? missingText(
                  { sensor: s.sensor, kind: "silent", from: s.last_reading_at, to: view.as_of },
                  timeZone,
                  now,
                )
              : "a gap of over 2 hours in its record",
      })),
  ];
  const recordState = (complete: boolean) =>
    complete ? (
      <ReleaseBadge tone="ok" label="Complete" />
    ) : (
      <ReleaseBadge tone="warn" label="Incomplete" />
    );

  return (
    <div className="grid gap-5">
      <div className="flex flex-wrap items-center gap-3">
        <span data-testid="pour-status">
          <ReleaseBadge
            tone={
              status === "curing"
                ? "info"
                : status === "void"
                  ? "warn"
                  : status === "shipped"
                    ? "muted"
                    : "ok"
            }
            large
            label={pourStatusLabels[status]}
          />
        </span>
        <p role="status" className="text-sm text-muted">
          Figures as of {whenText(Date.parse(view.as_of), timeZone, now)}
          {stale ? " · could not refresh; these may be out of date" : " · refreshed every minute"}
        </p>
      </div>

      <div className="grid gap-4 md:grid-cols-2">
        {(["strip", "ship"] as const).map((k) => (
          <MilestoneCard
            key={k}
            kind={k}
            m={view[k]}
            strengthPsi={strengthPsi}
            calibrated={view.calibrated}
            released={released[k]}
            units={units}
            timeZone={timeZone}
            now={now}
          />
        ))}
      </div>
      {view.calibrated && governing && (
        <p className="text-sm text-muted">
          The estimate shown is the governing sensor’s,{" "}
          <span className="figure font-semibold text-ink">{governing.sensor}</span>: the lowest
          strength in the pour, so decisions follow its coldest place.
        </p>
      )}

      <section
        aria-labelledby="record"
        className={`card border-l-[6px] p-4 ${view.complete_record ? "border-l-ok" : "border-l-warn"}`}
        data-testid="record-completeness"
      >
        <div className="flex flex-wrap items-center gap-3">
          <h2 id="record" className="text-lg font-bold">
            Temperature record
          </h2>
          {view.complete_record ? (
            <ReleaseBadge tone="ok" large label="Complete" />
          ) : (
            <ReleaseBadge tone="warn" large label="Incomplete: the estimate errs low" />
          )}
        </div>
        {view.sensors.length === 0 ? (
          <p className="mt-2">No sensor is on this pour, so there is no record to estimate from.</p>
        ) : view.complete_record ? (
          <p className="mt-2 text-muted">
            Every sensor has reported at least every 2 hours since cast, up to now.
          </p>
        ) : (
          <>
            <p className="mt-2 text-muted">
              A stretch over 2 hours without a reading adds no maturity, so the estimate can only be
              too low, never too high. What is missing:
            </p>
            <ul className="mt-2 grid gap-1">
              {allMissing.map((m, i) => (
                <li key={`${m.sensor}-${i}`}>
                  <span className="figure font-bold">{m.sensor}</span>: {m.text}
                </li>
              ))}
            </ul>
          </>
        )}
      </section>

      <section aria-labelledby="sensors" className="card">
        <div className="p-4 pb-2">
          <h2 id="sensors" className="text-lg font-bold">
            Sensors ({view.sensors.length})
          </h2>
          <p className="hint">
            Temperature-time factor in °C·h, the trade’s unit (Nurse-Saul, ASTM C1074), above a
            datum of {datumText(datumC, units)}
            {units === "us" ? "; multiply by 1.8 for °F·h" : ""}. Equivalent age in hours at 20 °C
            (Arrhenius).
          </p>
        </div>
        {/* Phones: one card per sensor. */}
        <ul className="grid gap-2 p-2 sm:hidden">
          {view.sensors.map((s) => (
            <li
              key={s.sensor}
              className={`rounded-lg border p-3 ${s.sensor === view.governing_sensor ? "border-accent bg-info-bg" : "border-line"}`}
            >
              <div className="flex flex-wrap items-center justify-between gap-2">
                <span className="figure text-lg font-bold">{s.sensor}</span>
                {s.sensor === view.governing_sensor && (
                  <ReleaseBadge tone="info" label="Governing (coldest)" />
                )}
              </div>
              <dl className="mt-2 grid grid-cols-2 gap-x-3 gap-y-1 text-sm">
                <dt className="text-muted">Strength</dt>
                <dd className="figure text-right text-base font-bold">
                  {strengthText(s.strength_psi, units)}
                </dd>
                <dt className="text-muted">Temp.-time factor</dt>
                <dd className="figure text-right">{s.ttf_c_h.toFixed(1)} °C·h</dd>
                <dt className="text-muted">Equivalent age</dt>
                <dd className="figure text-right">{s.equivalent_age_h.toFixed(2)} h</dd>
                <dt className="text-muted">Record</dt>
                <dd className="text-right">{recordState(s.complete_record)}</dd>
                <dt className="text-muted">Last reading</dt>
                <dd className="text-right">
                  {s.last_reading_at ? relativeText(Date.parse(s.last_reading_at), now) : "none"}
                </dd>
              </dl>
            </li>
          ))}
        </ul>
        <div className="hidden overflow-x-auto sm:block">
          <table className="w-full text-left text-sm">
            <TableHead
              columns={[
                "Sensor",
                { label: "Temperature-time factor (°C·h)", className: "text-right" },
                { label: "Equivalent age (h at 20 °C)", className: "text-right" },
                { label: "Estimated strength", className: "text-right" },
                "Record",
                "Last reading",
              ]}
            />
            <tbody>
              {view.sensors.map((s) => {
                const gov = s.sensor === view.governing_sensor;
                return (
                  <tr
                    key={s.sensor}
                    className={`border-b border-line last:border-0 ${gov ? "bg-info-bg font-semibold" : ""}`}
                    data-governing={gov ? "true" : undefined}
                  >
                    <th scope="row" className="p-3">
                      <span className="figure text-base font-bold">{s.sensor}</span>{" "}
                      {gov && <ReleaseBadge tone="info" label="Governing (coldest)" />}
                    </th>
                    <td className="figure p-3 text-right">{s.ttf_c_h.toFixed(1)}</td>
                    <td className="figure p-3 text-right">{s.equivalent_age_h.toFixed(2)}</td>
                    <td className="figure p-3 text-right text-base">
                      {strengthText(s.strength_psi, units)}
                    </td>
                    <td className="p-3">{recordState(s.complete_record)}</td>
                    <td className="p-3">
                      {s.last_reading_at
                        ? `${whenText(Date.parse(s.last_reading_at), timeZone, now)} (${relativeText(Date.parse(s.last_reading_at), now)})`
                        : "none"}
                    </td>
                  </tr>
                );
              })}
            </tbody>
          </table>
        </div>
      </section>
    </div>
  );
}
