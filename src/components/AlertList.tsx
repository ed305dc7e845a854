import {
  QueryClient,
  QueryClientProvider,
  useInfiniteQuery,
  useQuery,
  useQueryClient,
} from "@tanstack/react-query";
import { useEffect, useMemo, useState } from "react";
import { ackViaWords, compareForAttention, stateLook } from "@/domain/alerts/episodeWords";
import { formatDuration } from "@/domain/sensorState";
import type { UnitSystem } from "@/domain/units";
import { formatDateTime } from "@/lib/format";
import { fromPlantInput } from "@/lib/plantTime";
import {
  AckForm,
  EpisodeStateBadge,
  SeverityBadge,
  sensorName,
  whatOf,
  type AlertItem,
  type RuleLimits,
} from "./AlertParts";
import { SelectField, TextField } from "./Field";

/** The history's filters, as the page's query string holds them. */
export interface AlertFilters {
  state: "" | "open" | "acknowledged" | "cleared" | "active";
  severity: "" | "critical" | "warning" | "info";
  sensor: string;
  pour_id: string;
  /** A date (YYYY-MM-DD) in the plant's time zone: opened on or after its midnight. */
  since: string;
}

export const emptyFilters: AlertFilters = {
  state: "",
  severity: "",
  sensor: "",
  pour_id: "",
  since: "",
};

export const HISTORY_PAGE = 25;

interface Props {
  initialActive: AlertItem[];
  initialHistory: AlertItem[];
  initialFilters: AlertFilters;
  limits: RuleLimits;
  units: UnitSystem;
  timeZone: string;
  canAck: boolean;
  nowMs: number;
  sensors: { id: string; label: string | null }[];
  pours: { id: number; code: string }[];
}

const queryClient = new QueryClient({
  defaultOptions: { queries: { refetchOnWindowFocus: true, staleTime: 15_000, retry: 2 } },
});

export default function AlertList(props: Props) {
  return (
    <QueryClientProvider client={queryClient}>
      <Alerts {...props} />
    </QueryClientProvider>
  );
}

async function getAlerts(query: string): Promise<AlertItem[]> {
  const res = await fetch(`/api/v1/alerts?${query}`, { headers: { accept: "application/json" } });
  if (!res.ok) throw new Error(`The server answered ${res.status}.`);
  return (await res.json()) as AlertItem[];
}

function historyQuery(f: AlertFilters, timeZone: string, beforeId?: number): string {
  const q = new URLSearchParams();
  if (f.state) q.set("state", f.state);
  if (f.severity) q.set("severity", f.severity);
  if (f.sensor) q.set("sensor", f.sensor);
  if (f.pour_id) q.set("pour_id", f.pour_id);
  if (f.since) {
    const ms = fromPlantInput(`${f.since}T00:00`, timeZone);
    if (ms !== null) q.set("since", String(ms));
  }
  if (beforeId !== undefined) q.set("before_id", String(beforeId));
  q.set("limit", String(HISTORY_PAGE));
  return q.toString();
}

const sameFilters = (a: AlertFilters, b: AlertFilters) =>
  (Object.keys(a) as (keyof AlertFilters)[]).every((k) => a[k] === b[k]);

/**
 * The alerts page: what needs someone now as large cards (open, critical first, then the
 * acknowledged ones not yet cleared), and the history below with filters, paged. Follows
 * the live feed: any episode that opens, worsens, is acknowledged or clears refetches both.
 */
function Alerts({
  initialActive,
  initialHistory,
  initialFilters,
  limits,
  units,
  timeZone,
  canAck,
  nowMs,
  sensors,
  pours,
}: Props) {
  const qc = useQueryClient();
  const [now, setNow] = useState(nowMs);
  const [link, setLink] = useState<"connecting" | "live" | "retrying">("connecting");
  const [filters, setFilters] = useState<AlertFilters>(initialFilters);
  const [said, setSaid] = useState<string | null>(null);

  const active = useQuery({
    queryKey: ["alerts", "active"],
    queryFn: () => getAlerts("state=active&limit=500"),
    initialData: initialActive,
    initialDataUpdatedAt: nowMs,
  });

  const history = useInfiniteQuery({
    queryKey: ["alerts", "history", filters],
    queryFn: ({ pageParam }) => getAlerts(historyQuery(filters, timeZone, pageParam)),
    initialPageParam: undefined as number | undefined,
    getNextPageParam: (last: AlertItem[]) =>
      last.length < HISTORY_PAGE ? undefined : Math.min(...last.map((e) => e.id)),
    ...(sameFilters(filters, initialFilters)
      ? {
          initialData: { pages: [initialHistory], pageParams: [undefined] },
          initialDataUpdatedAt: nowMs,
        }
      : {}),
  });

  // Episodes change on the server: the live feed says so, and the lists are fetched again.
  // EventSource reconnects by itself; after a gap the lists are fetched too (events missed).
  useEffect(() => {
    let es: EventSource | null = null;
    let retry: ReturnType<typeof setTimeout> | undefined;
    let stopped = false;
    let missed = false;
    const refresh = () => void qc.invalidateQueries({ queryKey: ["alerts"] });
    const connect = () => {
      es = new EventSource("/api/v1/live");
      es.addEventListener("open", () => {
        setLink("live");
        if (missed) refresh();
        missed = false;
      });
      es.addEventListener("error", () => {
        setLink("retrying");
        missed = true;
        // A closed stream (the server restarted and refused once) is not retried by the
        // browser: open a new one after a pause.
        if (es?.readyState === EventSource.CLOSED && !stopped) {
          es.close();
          retry = setTimeout(connect, 5_000);
        }
      });
      es.addEventListener("alert", refresh);
    };
    connect();
    const tick = setInterval(() => setNow(Date.now()), 30_000);
    return () => {
      stopped = true;
      es?.close();
      clearTimeout(retry);
      clearInterval(tick);
    };
  }, [qc]);

  // The filters live in the address too, so a filtered history can be shared or reloaded.
  useEffect(() => {
    const q = new URLSearchParams();
    for (const [k, v] of Object.entries(filters)) if (v) q.set(k, v);
    const next = `${window.location.pathname}${q.size ? `?${q}` : ""}`;
    if (next !== `${window.location.pathname}${window.location.search}`)
      window.history.replaceState(null, "", next);
  }, [filters]);

  const needs = useMemo(
    () =>
      [...(active.data ?? [])].sort((a, b) =>
        compareForAttention(
          { ...a, openedAtMs: Date.parse(a.opened_at) },
          { ...b, openedAtMs: Date.parse(b.opened_at) },
        ),
      ),
    [active.data],
  );
  const open = needs.filter((e) => e.state === "open");
  const inHand = needs.filter((e) => e.state === "acknowledged");

  const rows = useMemo(() => {
    const seen = new Set<number>();
    const out: AlertItem[] = [];
    for (const page of history.data?.pages ?? [])
      for (const e of page) {
        if (seen.has(e.id)) continue;
        seen.add(e.id);
        out.push(e);
      }
    return out;
  }, [history.data]);

  function acknowledged(item: AlertItem) {
    qc.setQueryData<AlertItem[]>(["alerts", "active"], (list) =>
      (list ?? []).map((e) => (e.id === item.id ? item : e)),
    );
    setSaid(
      `Acknowledged: ${item.rule} on ${sensorName(item)}. Thank you; it stays on this page until it clears.`,
    );
    void qc.invalidateQueries({ queryKey: ["alerts"] });
  }

  const when = (iso: string) => formatDateTime(Date.parse(iso), timeZone, "short");
  const set = <K extends keyof AlertFilters>(k: K, v: AlertFilters[K]) =>
    setFilters((f) => ({ ...f, [k]: v }));
  const cardProps = { limits, units, nowMs: now, when, onAck: acknowledged };

  return (
    <div className="grid gap-8">
      <section aria-labelledby="needs-h">
        <div className="mb-3 flex flex-wrap items-center gap-3">
          <h2 id="needs-h" className="text-xl font-bold sm:text-2xl">
            Needs someone now
          </h2>
          <p
            role="status"
            aria-live="polite"
            className={`rounded-full px-3 py-1 text-sm font-bold ${link === "live" ? "bg-ok-bg text-ok" : "bg-warn-bg text-warn"}`}
          >
            <span aria-hidden="true">{link === "live" ? "● " : "◌ "}</span>
            {link === "live" ? "Live" : link === "connecting" ? "Connecting…" : "Reconnecting…"}
          </p>
        </div>
        <p className="sr-only" role="status" aria-live="polite">
          {said ?? ""}
        </p>
        {said && (
          <p className="card mb-3 bg-ok-bg p-3 font-semibold text-ok" data-testid="ack-said">
            <span aria-hidden="true">● </span>
            {said}
          </p>
        )}
        {active.isError && (
          <p role="alert" className="card mb-3 bg-warn-bg p-3 font-semibold text-warn">
            <span aria-hidden="true">▲ </span>Could not refresh the alerts: {active.error.message}{" "}
            Showing what was last known.
          </p>
        )}
        {open.length === 0 && (
          <p
            className="card border-l-[8px] border-l-ok p-4 text-lg font-semibold"
            data-testid="none-open"
          >
            <span aria-hidden="true" className="text-ok">
              ●{" "}
            </span>
            Nothing needs anyone now.
            {inHand.length > 0 &&
              ` ${inHand.length} acknowledged ${inHand.length === 1 ? "alert is" : "alerts are"} not yet cleared.`}
          </p>
        )}
        <AlertCards
          label="Open alerts"
          testId="open-alerts"
          items={open}
          canAck={canAck}
          onConflict={() => void qc.invalidateQueries({ queryKey: ["alerts"] })}
          {...cardProps}
        />
        {inHand.length > 0 && (
          <>
            <h3 className="mt-6 mb-2 text-lg font-bold">Acknowledged, not yet cleared</h3>
            <AlertCards
              label="Acknowledged alerts not yet cleared"
              testId="acknowledged-alerts"
              items={inHand}
              canAck={false}
              {...cardProps}
            />
          </>
        )}
        {!canAck && open.length > 0 && (
          <p className="hint mt-3">
            Operators, QC and managers acknowledge alerts; you may read them.
          </p>
        )}
      </section>

      <section aria-labelledby="history-h">
        <h2 id="history-h" className="mb-3 text-xl font-bold sm:text-2xl">
          History
        </h2>
        <form
          className="card mb-3 grid grid-cols-2 gap-3 p-3 sm:grid-cols-3 lg:grid-cols-6"
          aria-label="Filter the history"
          onSubmit={(e) => e.preventDefault()}
        >
          <SelectField
            id="f-state"
            label="State"
            value={filters.state}
            onChange={(e) => set("state", e.target.value as AlertFilters["state"])}
          >
            <option value="">Any</option>
            <option value="active">Not yet cleared</option>
            <option value="open">{stateLook.open.word}</option>
            <option value="acknowledged">{stateLook.acknowledged.word}</option>
            <option value="cleared">{stateLook.cleared.word}</option>
          </SelectField>
          <SelectField
            id="f-severity"
            label="Severity"
            value={filters.severity}
            onChange={(e) => set("severity", e.target.value as AlertFilters["severity"])}
          >
            <option value="">Any</option>
            <option value="critical">Critical</option>
            <option value="warning">Warning</option>
            <option value="info">Note</option>
          </SelectField>
          <SelectField
            id="f-sensor"
            label="Sensor"
            value={filters.sensor}
            onChange={(e) => set("sensor", e.target.value)}
          >
            <option value="">Any</option>
            {filters.sensor && !sensors.some((s) => s.id === filters.sensor) && (
              <option value={filters.sensor}>{filters.sensor}</option>
            )}
            {sensors.map((s) => (
              <option key={s.id} value={s.id}>
                {s.label ? `${s.id} · ${s.label}` : s.id}
              </option>
            ))}
          </SelectField>
          <SelectField
            id="f-pour"
            label="Pour"
            value={filters.pour_id}
            onChange={(e) => set("pour_id", e.target.value)}
          >
            <option value="">Any</option>
            {filters.pour_id && !pours.some((p) => String(p.id) === filters.pour_id) && (
              <option value={filters.pour_id}>Pour {filters.pour_id}</option>
            )}
            {pours.map((p) => (
              <option key={p.id} value={String(p.id)}>
                {p.code}
              </option>
            ))}
          </SelectField>
          <TextField
            id="f-since"
            label="Opened on or after"
            type="date"
            value={filters.since}
            onChange={(e) => set("since", e.target.value)}
          />
          <div className="flex items-end">
            <button
              type="button"
              className="btn btn-quiet w-full"
              disabled={sameFilters(filters, emptyFilters)}
              onClick={() => setFilters(emptyFilters)}
            >
              Clear filters
            </button>
          </div>
        </form>
        <p className="mb-2 text-sm text-muted" role="status" aria-live="polite">
          {history.isPending
            ? "Loading alerts…"
            : history.isError
              ? `Could not load: ${history.error.message}`
              : history.isFetching && !history.isFetchingNextPage
                ? "Updating…"
                : `${rows.length} ${rows.length === 1 ? "alert" : "alerts"} shown, newest first. Times in ${timeZone}.`}
        </p>
        {rows.length === 0 && !history.isPending ? (
          <p className="card p-4 text-muted">No alerts match these filters.</p>
        ) : (
          <ul className="card divide-y divide-line" data-testid="alert-history">
            {rows.map((e) => (
              <HistoryRow key={e.id} e={e} limits={limits} units={units} when={when} nowMs={now} />
            ))}
          </ul>
        )}
        {history.hasNextPage && (
          <button
            type="button"
            className="btn btn-quiet mt-3 w-full sm:w-auto"
            disabled={history.isFetchingNextPage}
            onClick={() => void history.fetchNextPage()}
          >
            {history.isFetchingNextPage ? "Loading older alerts…" : "Older"}
          </button>
        )}
      </section>
    </div>
  );
}

const band = {
  critical: "border-l-alarm",
  warning: "border-l-warn",
  info: "border-l-accent",
} as const;

type CardProps = {
  limits: RuleLimits;
  units: UnitSystem;
  nowMs: number;
  when: (iso: string) => string;
  canAck: boolean;
  onAck: (item: AlertItem) => void;
  onConflict?: () => void;
};

/** One list of alert cards, two abreast on a desk. */
function AlertCards({
  label,
  testId,
  items,
  ...card
}: CardProps & { label: string; testId: string; items: AlertItem[] }) {
  return (
    <ul className="grid gap-3 lg:grid-cols-2" aria-label={label} data-testid={testId}>
      {items.map((e) => (
        <AlertCard key={e.id} e={e} {...card} />
      ))}
    </ul>
  );
}

function AlertCard({
  e,
  limits,
  units,
  nowMs,
  when,
  canAck,
  onAck,
  onConflict,
}: CardProps & { e: AlertItem }) {
  const startedMs = Date.parse(e.started_at);
  const worst = whatOf(e, limits, units, "worst");
  const now = whatOf(e, limits, units, "last");
  const titleId = `alert-${e.id}-title`;
  return (
    <li data-episode={e.id} data-state={e.state}>
      <article
        aria-labelledby={titleId}
        className={`card h-full border-l-[8px] p-4 ${e.state === "open" ? band[e.severity] : "border-l-line"}`}
      >
        <div className="flex flex-wrap items-center gap-2">
          <SeverityBadge severity={e.severity} large />
          {e.state !== "open" && <EpisodeStateBadge state={e.state} large />}
        </div>
        <h3 id={titleId} className="mt-2 text-xl font-bold">
          <a className="underline-offset-4 hover:underline" href={`/alerts/${e.id}`}>
            {e.rule}
          </a>
        </h3>
        <p
          className="mt-1 text-xl font-bold leading-snug tabular-nums sm:text-2xl"
          data-testid="alert-what"
        >
          {now}
        </p>
        {worst !== now && <p className="text-muted">Worst: {worst}</p>}
        <dl className="mt-3 grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 text-base">
          <dt className="text-muted">Sensor</dt>
          <dd className="font-semibold">
            {e.sensor ? (
              <a
                className="text-accent underline"
                href={`/sensors/${encodeURIComponent(e.sensor)}`}
              >
                {sensorName(e)}
              </a>
            ) : (
              "Whole pour"
            )}
          </dd>
          <dt className="text-muted">Pour</dt>
          <dd className="font-semibold">
            {e.pour_id !== null ? (
              <a className="figure text-accent underline" href={`/pours/${e.pour_id}`}>
                {e.pour_code ?? `#${e.pour_id}`}
              </a>
            ) : (
              <span className="font-normal text-muted">not on a pour</span>
            )}
          </dd>
          <dt className="text-muted">Since</dt>
          <dd>
            <span className="font-semibold">{when(e.started_at)}</span>{" "}
            <span className="text-muted">({formatDuration(nowMs - startedMs)})</span>
          </dd>
        </dl>
        {e.acknowledged_at && (
          <p className="mt-3 rounded-lg bg-warn-bg p-3 text-ink" data-testid="ack-line">
            <span aria-hidden="true" className="text-warn">
              ▲{" "}
            </span>
            Acknowledged by <strong>{e.acknowledged_by ?? "someone"}</strong> at{" "}
            <strong>{when(e.acknowledged_at)}</strong>
            {e.ack_via ? ` ${ackViaWords[e.ack_via]}` : ""}
            {e.ack_note ? (
              <>
                : <q>{e.ack_note}</q>
              </>
            ) : (
              "."
            )}
          </p>
        )}
        {canAck && e.state === "open" && (
          <AckForm
            episodeId={e.id}
            subject={`${e.rule}, ${sensorName(e)}`}
            onDone={onAck}
            {...(onConflict ? { onConflict } : {})}
          />
        )}
      </article>
    </li>
  );
}

function HistoryRow({
  e,
  limits,
  units,
  when,
  nowMs,
}: {
  e: AlertItem;
  limits: RuleLimits;
  units: UnitSystem;
  when: (iso: string) => string;
  nowMs: number;
}) {
  const startedMs = Date.parse(e.started_at);
  const lasted =
    e.cleared_at !== null
      ? `lasted ${formatDuration(Date.parse(e.cleared_at) - startedMs)}`
      : `${formatDuration(nowMs - startedMs)} so far`;
  return (
    <li
      className="grid gap-1 p-3 sm:grid-cols-[minmax(0,2fr)_minmax(0,2fr)_14rem] sm:items-start sm:gap-4"
      data-episode={e.id}
    >
      <div className="min-w-0">
        <a className="font-bold text-accent underline underline-offset-2" href={`/alerts/${e.id}`}>
          {e.rule}
        </a>
        <p className="text-sm">{whatOf(e, limits, units, "worst")}</p>
        <p className="text-sm text-muted">
          {sensorName(e)}
          {e.pour_code ? ` · pour ${e.pour_code}` : ""}
        </p>
      </div>
      <div className="text-sm">
        <p>
          Opened <span className="font-semibold">{when(e.opened_at)}</span>{" "}
          <span className="text-muted">({lasted})</span>
        </p>
        {e.acknowledged_at ? (
          <p className="text-muted">
            Acknowledged by {e.acknowledged_by ?? "someone"}, {when(e.acknowledged_at)}
            {e.ack_note ? `: “${e.ack_note}”` : ""}
          </p>
        ) : e.state === "cleared" ? (
          <p className="text-muted">Cleared before anyone acknowledged it.</p>
        ) : null}
      </div>
      <div className="flex flex-wrap gap-1 sm:justify-end">
        <SeverityBadge severity={e.severity} />
        <EpisodeStateBadge state={e.state} />
      </div>
    </li>
  );
}
