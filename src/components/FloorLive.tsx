import { useEffect, useMemo, useState } from "react";
import { compareForAttention } from "@/domain/alerts/episodeWords";
import { tileAdvice, tileLabels, tileState, type TileState } from "@/domain/floor";
import { formatDuration } from "@/domain/sensorState";
import { displayTemp, type UnitSystem } from "@/domain/units";
import Sparkline from "./Sparkline";

export interface FloorTile {
  id: string;
  label: string | null;
  kind: "bag" | "embedded" | "bin" | "ambient" | null;
  pourCode: string | null;
  tempC: number | null;
  rhPct: number | null;
  lastSeenAtMs: number | null;
  spark: [number, number][];
}

export interface FloorArea {
  name: string;
  tiles: FloorTile[];
}

/** An alert episode not yet cleared, as the floor shows it on its sensor's tile. */
export interface FloorAlert {
  id: number;
  sensor: string | null;
  rule: string;
  state: "open" | "acknowledged" | "cleared";
  severity: "info" | "warning" | "critical";
  opened_at: string;
}

interface Props {
  areas: FloorArea[];
  alerts: FloorAlert[];
  units: UnitSystem;
  nowMs: number;
}

/** The alerts not yet cleared, from the API (the floor refetches them on every alert event). */
async function fetchActiveAlerts(): Promise<FloorAlert[] | null> {
  try {
    const res = await fetch("/api/v1/alerts?state=active&limit=1000", {
      headers: { accept: "application/json" },
    });
    if (!res.ok) return null;
    return ((await res.json()) as FloorAlert[]).map((e) => ({
      id: e.id,
      sensor: e.sensor,
      rule: e.rule,
      state: e.state,
      severity: e.severity,
      opened_at: e.opened_at,
    }));
  } catch {
    return null;
  }
}

const byAttention = (a: FloorAlert, b: FloorAlert) =>
  compareForAttention(
    { ...a, openedAtMs: Date.parse(a.opened_at) },
    { ...b, openedAtMs: Date.parse(b.opened_at) },
  );

const SPARK_WINDOW_MS = 3 * 3_600_000;

const tone: Record<TileState, { band: string; badge: string; mark: string }> = {
  ok: { band: "border-l-ok", badge: "bg-ok-bg text-ok", mark: "●" },
  dry: { band: "border-l-warn", badge: "bg-warn-bg text-warn", mark: "▲" },
  cold: { band: "border-l-alarm", badge: "bg-alarm-bg text-alarm", mark: "■" },
  hot: { band: "border-l-alarm", badge: "bg-alarm-bg text-alarm", mark: "■" },
  silent: { band: "border-l-alarm", badge: "bg-alarm-bg text-alarm", mark: "✕" },
  waiting: { band: "border-l-line", badge: "bg-surface-2 text-muted", mark: "○" },
};
const attention = new Set<TileState>(["dry", "cold", "hot", "silent"]);
const kindNames = { bag: "Cure bag", embedded: "In concrete", bin: "Bin", ambient: "Air" } as const;

interface LiveReading {
  sensor: string;
  ts: number;
  temp_c: number;
  rh: number | null;
  latest: boolean;
}

/**
 * The live cure floor: one tile per sensor, grouped by area, updated by server-sent events
 * as readings are committed. EventSource reconnects by itself; the header says when it is.
 */
export default function FloorLive({ areas: initial, alerts: initialAlerts, units, nowMs }: Props) {
  const [areas, setAreas] = useState(initial);
  const [alerts, setAlerts] = useState(initialAlerts);
  const [now, setNow] = useState(nowMs);
  const [link, setLink] = useState<"connecting" | "live" | "retrying">("connecting");
  const [filter, setFilter] = useState<string>("all");
  const [onlyProblems, setOnlyProblems] = useState(false);

  useEffect(() => {
    const es = new EventSource("/api/v1/live");
    // Alerts change on the server (opened, worsened, acknowledged, cleared): fetch the list
    // again, newest answer wins. After a reconnect too, as events may have been missed.
    let asked = 0;
    let missed = false;
    const refreshAlerts = () => {
      const mine = ++asked;
      void fetchActiveAlerts().then((list) => {
        if (list && mine === asked) setAlerts(list);
      });
    };
    es.addEventListener("open", () => {
      setLink("live");
      if (missed) refreshAlerts();
      missed = false;
    });
    es.addEventListener("error", () => {
      setLink("retrying");
      missed = true;
    });
    es.addEventListener("alert", refreshAlerts);
    es.addEventListener("readings", (ev) => {
      const batch = JSON.parse((ev as MessageEvent<string>).data) as LiveReading[];
      const bySensor = new Map<string, LiveReading[]>();
      for (const r of batch) bySensor.set(r.sensor, [...(bySensor.get(r.sensor) ?? []), r]);
      setAreas((prev) =>
        prev.map((a) => ({
          ...a,
          tiles: a.tiles.map((t) => {
            const rs = bySensor.get(t.id);
            if (!rs) return t;
            let next = t;
            for (const r of rs) {
              if (r.latest && (next.lastSeenAtMs === null || r.ts >= next.lastSeenAtMs)) {
                next = { ...next, tempC: r.temp_c, rhPct: r.rh, lastSeenAtMs: r.ts };
              }
            }
            const spark = [...next.spark, ...rs.map((r) => [r.ts, r.temp_c] as [number, number])]
              .sort((p, q) => p[0] - q[0])
              .filter((p) => p[0] >= Date.now() - SPARK_WINDOW_MS);
            return { ...next, spark };
          }),
        })),
      );
    });
    const tick = setInterval(() => setNow(Date.now()), 5_000);
    return () => {
      es.close();
      clearInterval(tick);
    };
  }, []);

  const states = useMemo(() => {
    const m = new Map<string, TileState>();
    for (const a of areas) {
      for (const t of a.tiles) {
        m.set(
          t.id,
          tileState(
            {
              kind: t.kind,
              tempC: t.tempC,
              rhPct: t.rhPct,
              lastSeenAtMs: t.lastSeenAtMs,
              onPour: t.pourCode !== null,
            },
            now,
          ),
        );
      }
    }
    return m;
  }, [areas, now]);

  const alertsBySensor = useMemo(() => {
    const m = new Map<string, FloorAlert[]>();
    for (const e of [...alerts].filter((x) => x.state !== "cleared").sort(byAttention))
      if (e.sensor) m.set(e.sensor, [...(m.get(e.sensor) ?? []), e]);
    return m;
  }, [alerts]);
  // Notes (strip or ship strength reached) are open too, but they do not call anyone out.
  const openAlerts = alerts.filter((e) => e.state === "open" && e.severity !== "info").length;
  const openNotes = alerts.filter((e) => e.state === "open" && e.severity === "info").length;
  const inHandAlerts = alerts.filter((e) => e.state === "acknowledged").length;
  const needsLook = (id: string) => attention.has(states.get(id)!) || alertsBySensor.has(id);
  const problems = [...states.keys()].filter(needsLook).length;

  const shown = areas
    .filter((a) => filter === "all" || a.name === filter)
    .map((a) => ({
      ...a,
      tiles: onlyProblems ? a.tiles.filter((t) => needsLook(t.id)) : a.tiles,
    }))
    .filter((a) => a.tiles.length > 0);

  return (
    <div>
      <a
        href="/alerts"
        data-testid="alert-strip"
        className={`card mb-4 flex min-h-14 items-center gap-3 border-l-[8px] p-3 text-lg font-bold hover:bg-surface-2 ${
          openAlerts > 0
            ? "border-l-alarm bg-alarm-bg text-alarm"
            : inHandAlerts > 0
              ? "border-l-warn"
              : "border-l-ok"
        }`}
      >
        <span aria-hidden="true">{openAlerts > 0 ? "■" : inHandAlerts > 0 ? "▲" : "●"}</span>
        <span className={openAlerts > 0 ? "" : "text-ink"}>
          {openAlerts > 0
            ? `${openAlerts} ${openAlerts === 1 ? "alert needs" : "alerts need"} someone`
            : "No open alerts"}
          {(inHandAlerts > 0 || openNotes > 0) && (
            <span className="font-semibold">
              {inHandAlerts > 0 &&
                ` · ${inHandAlerts} acknowledged${openAlerts === 0 ? ", not yet cleared" : ""}`}
              {openNotes > 0 && ` · ${openNotes} ${openNotes === 1 ? "note" : "notes"}`}
            </span>
          )}
        </span>
        <span className="ml-auto text-base font-semibold text-accent underline">Alerts</span>
      </a>
      <div className="mb-4 flex flex-wrap items-center gap-3">
        <p
          role="status"
          aria-live="polite"
          className={`rounded-full px-3 py-1 text-sm font-bold ${link === "live" ? "bg-ok-bg text-ok" : "bg-warn-bg text-warn"}`}
        >
          <span aria-hidden="true">{link === "live" ? "● " : "◌ "}</span>
          {link === "live" ? "Live" : link === "connecting" ? "Connecting…" : "Reconnecting…"}
        </p>
        <p
          className={`rounded-full px-3 py-1 text-sm font-bold ${problems ? "bg-alarm-bg text-alarm" : "bg-surface-2 text-muted"}`}
          data-testid="problem-count"
        >
          {problems === 0
            ? "Nothing needs you"
            : `${problems} need${problems === 1 ? "s" : ""} you`}
        </p>
        <div className="ml-auto flex flex-wrap items-center gap-3">
          <label className="flex items-center gap-2 text-sm font-semibold">
            Area
            <select
              className="input min-h-11 w-auto"
              value={filter}
              onChange={(e) => setFilter(e.target.value)}
            >
              <option value="all">All areas</option>
              {areas.map((a) => (
                <option key={a.name} value={a.name}>
                  {a.name}
                </option>
              ))}
            </select>
          </label>
          <label className="flex min-h-11 items-center gap-2 text-sm font-semibold">
            <input
              type="checkbox"
              className="h-5 w-5"
              checked={onlyProblems}
              onChange={(e) => setOnlyProblems(e.target.checked)}
            />
            Only what needs me
          </label>
        </div>
      </div>

      {shown.length === 0 && (
        <p className="card p-4 text-muted">Nothing to show with these choices.</p>
      )}
      {shown.map((a) => (
        <section key={a.name} aria-labelledby={`area-${a.name}`} className="mb-6">
          <h2 id={`area-${a.name}`} className="mb-2 text-lg font-bold">
            {a.name}
          </h2>
          <ul className="grid grid-cols-2 gap-2 sm:grid-cols-3 lg:grid-cols-4 xl:grid-cols-6">
            {a.tiles.map((t) => {
              const st = states.get(t.id)!;
              const temp = t.tempC === null ? null : displayTemp(t.tempC, units);
              const ago = t.lastSeenAtMs === null ? null : formatDuration(now - t.lastSeenAtMs);
              const tileAlerts = alertsBySensor.get(t.id) ?? [];
              const alert = tileAlerts[0];
              const alertOpen = alert?.state === "open";
              return (
                <li
                  key={t.id}
                  data-sensor={t.id}
                  data-state={st}
                  data-alert={alert ? alert.state : undefined}
                >
                  <a
                    href={`/sensors/${encodeURIComponent(t.id)}`}
                    className={`card block h-full border-l-[6px] p-3 hover:bg-surface-2 ${
                      alertOpen
                        ? "border-2 border-alarm border-l-[10px] border-l-alarm"
                        : alert
                          ? "border-l-warn"
                          : tone[st].band
                    }`}
                  >
                    {alert && (
                      <p
                        className={`-mx-1 -mt-1 mb-2 rounded-md px-2 py-1 text-sm font-extrabold leading-tight ${
                          alertOpen ? "bg-alarm text-bg" : "bg-warn-bg text-warn"
                        }`}
                        data-testid="tile-alert"
                      >
                        <span className="whitespace-nowrap">
                          <span aria-hidden="true">{alertOpen ? "■ " : "▲ "}</span>
                          {alertOpen ? "ALERT" : "ACKNOWLEDGED"}
                        </span>{" "}
                        · {alert.rule}
                        {tileAlerts.length > 1 && (
                          <span className="font-semibold"> (+{tileAlerts.length - 1} more)</span>
                        )}
                      </p>
                    )}
                    <div className="flex items-start justify-between gap-1">
                      <span className="figure text-sm font-bold">{t.id}</span>
                      {/* An "OK" beside an alert would contradict it: the alert speaks alone. */}
                      {!(alert && st === "ok") && (
                        <span
                          className={`rounded-full px-2 py-0.5 text-xs font-bold ${tone[st].badge}`}
                        >
                          <span aria-hidden="true">{tone[st].mark} </span>
                          {tileLabels[st]}
                        </span>
                      )}
                    </div>
                    <p
                      className="figure mt-1 text-3xl font-bold leading-tight"
                      data-testid="tile-temp"
                    >
                      {temp ? temp.value : "—"}
                      <span className="text-base font-semibold text-muted"> {temp?.unit}</span>
                    </p>
                    <p className="figure text-lg font-semibold">
                      {t.rhPct === null ? (
                        <span className="text-sm text-muted">no humidity</span>
                      ) : (
                        `${t.rhPct.toFixed(0)} % RH`
                      )}
                    </p>
                    <div className="my-1 text-accent">
                      <Sparkline
                        points={t.spark}
                        label={`${t.id}, temperature over the last 3 hours`}
                      />
                    </div>
                    <p className="truncate text-xs text-muted">
                      {t.pourCode
                        ? `Pour ${t.pourCode}`
                        : t.kind
                          ? kindNames[t.kind]
                          : "Not placed"}
                      {t.label ? ` · ${t.label}` : ""}
                    </p>
                    <p
                      className={`text-xs ${attention.has(st) ? "font-semibold text-ink" : "text-muted"}`}
                    >
                      {attention.has(st)
                        ? tileAdvice(st, units)
                        : ago
                          ? `${ago} ago`
                          : tileAdvice(st, units)}
                    </p>
                  </a>
                </li>
              );
            })}
          </ul>
        </section>
      ))}
    </div>
  );
}
