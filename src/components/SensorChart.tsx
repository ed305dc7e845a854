import { QueryClient, QueryClientProvider, useQuery } from "@tanstack/react-query";
import { LineChart } from "echarts/charts";
import {
  DataZoomComponent,
  GridComponent,
  LegendComponent,
  MarkLineComponent,
  TooltipComponent,
} from "echarts/components";
import * as echarts from "echarts/core";
import { CanvasRenderer } from "echarts/renderers";
import ReactEChartsCore from "echarts-for-react/esm/core";
import { useEffect, useMemo, useState } from "react";
import { CURE_MAX_TEMP_C, CURE_MIN_TEMP_C } from "@/domain/floor";
import { MOIST_CURE_MIN_RH_PCT } from "@/domain/sensorState";
import { cToF, type UnitSystem } from "@/domain/units";

echarts.use([
  LineChart,
  GridComponent,
  TooltipComponent,
  DataZoomComponent,
  LegendComponent,
  MarkLineComponent,
  CanvasRenderer,
]);

interface Props {
  sensorId: string;
  kind: "bag" | "embedded" | "bin" | "ambient" | null;
  units: UnitSystem;
  timeZone: string;
}

const ranges = [
  { key: "6h", label: "6 h", ms: 6 * 3_600_000 },
  { key: "24h", label: "24 h", ms: 24 * 3_600_000 },
  { key: "3d", label: "3 days", ms: 3 * 86_400_000 },
  { key: "7d", label: "7 days", ms: 7 * 86_400_000 },
  { key: "30d", label: "30 days", ms: 30 * 86_400_000 },
] as const;

interface Reading {
  ts: string;
  temp_c: number;
  rh: number | null;
}

const queryClient = new QueryClient({
  defaultOptions: { queries: { refetchOnWindowFocus: false, staleTime: 30_000 } },
});

export default function SensorChart(props: Props) {
  return (
    <QueryClientProvider client={queryClient}>
      <Chart {...props} />
    </QueryClientProvider>
  );
}

function cssVar(name: string, fallback: string): string {
  if (typeof window === "undefined") return fallback;
  return getComputedStyle(document.documentElement).getPropertyValue(name).trim() || fallback;
}

function Chart({ sensorId, kind, units, timeZone }: Props) {
  const [range, setRange] = useState<(typeof ranges)[number]>(ranges[1]);
  const [live, setLive] = useState<Reading[]>([]);
  const [anchor, setAnchor] = useState(() => Date.now());
  const query = useQuery({
    queryKey: ["readings", sensorId, range.key, anchor],
    queryFn: async () => {
      const to = anchor;
      const from = to - range.ms;
      const res = await fetch(
        `/api/v1/sensors/${encodeURIComponent(sensorId)}/readings?from=${from}&to=${to}&max_points=1500`,
      );
      if (!res.ok) throw new Error(`The server answered ${res.status}.`);
      return ((await res.json()) as { readings: Reading[] }).readings;
    },
  });

  // New readings of this sensor arrive by server-sent events and extend the chart.
  useEffect(() => {
    const es = new EventSource("/api/v1/live");
    es.addEventListener("readings", (ev) => {
      const batch = JSON.parse((ev as MessageEvent<string>).data) as {
        sensor: string;
        ts: number;
        temp_c: number;
        rh: number | null;
      }[];
      const mine = batch
        .filter((r) => r.sensor === sensorId)
        .map((r) => ({ ts: new Date(r.ts).toISOString(), temp_c: r.temp_c, rh: r.rh }));
      if (mine.length) setLive((l) => [...l, ...mine].slice(-5_000));
    });
    return () => es.close();
  }, [sensorId]);

  const t = (c: number) => (units === "us" ? cToF(c) : c);
  const unit = units === "us" ? "°F" : "°C";
  const data = useMemo(() => {
    const base = query.data ?? [];
    const last = base.length ? Date.parse(base[base.length - 1]!.ts) : 0;
    return [...base, ...live.filter((r) => Date.parse(r.ts) > last)];
  }, [query.data, live]);

  const ink = cssVar("--c-text", "#1d1f21");
  const muted = cssVar("--c-muted", "#55595e");
  const line = cssVar("--c-border", "#d6d3cc");
  const accent = cssVar("--c-accent", "#1f4f8f");
  const warn = cssVar("--c-warn", "#8a4b00");
  const alarm = cssVar("--c-alarm", "#a1121b");
  const watched = kind === "bag" || kind === "embedded";
  const short = range.ms <= 24 * 3_600_000;
  const fmt = new Intl.DateTimeFormat(
    "en-US",
    short
      ? { timeZone, hour: "numeric", minute: "2-digit" }
      : { timeZone, month: "short", day: "numeric" },
  );
  const fmtTip = new Intl.DateTimeFormat("en-US", {
    timeZone,
    month: "short",
    day: "numeric",
    hour: "numeric",
    minute: "2-digit",
  });

  const option = {
    animation: false,
    textStyle: { fontFamily: "Public Sans Variable, system-ui, sans-serif", color: ink },
    grid: { left: 48, right: 44, top: 64, bottom: 70 },
    legend: { top: 0, textStyle: { color: ink } },
    tooltip: {
      trigger: "axis",
      valueFormatter: (v: number) => (typeof v === "number" ? v.toFixed(1) : String(v)),
      axisPointer: {
        type: "line",
        label: { formatter: (p: { value: number }) => fmtTip.format(p.value) },
      },
    },
    xAxis: {
      type: "time",
      axisLabel: { color: muted, hideOverlap: true, formatter: (v: number) => fmt.format(v) },
      splitNumber: 4,
      axisLine: { lineStyle: { color: line } },
    },
    yAxis: [
      {
        type: "value",
        name: unit,
        scale: true,
        // Keep the cold limit in view: it is the one a night shift must see coming.
        ...(watched
          ? { min: (v: { min: number }) => Math.floor(Math.min(v.min, t(CURE_MIN_TEMP_C)) - 2) }
          : {}),
        nameTextStyle: { color: muted },
        axisLabel: { color: muted },
        splitLine: { lineStyle: { color: line } },
      },
      {
        type: "value",
        name: "% RH",
        min: 0,
        max: 100,
        nameTextStyle: { color: muted },
        axisLabel: { color: muted },
        splitLine: { show: false },
      },
    ],
    dataZoom: [
      { type: "inside" },
      { type: "slider", height: 22, bottom: 12, textStyle: { color: muted } },
    ],
    series: [
      {
        name: `Temperature (${unit})`,
        type: "line",
        showSymbol: false,
        lineStyle: { width: 2, color: accent },
        itemStyle: { color: accent },
        data: data.map((r) => [Date.parse(r.ts), Number(t(r.temp_c).toFixed(2))]),
        markLine: watched
          ? {
              symbol: "none",
              label: { formatter: "{b}", color: alarm, position: "insideEndTop" },
              lineStyle: { color: alarm, type: "dashed" },
              data: [
                { name: `min ${t(CURE_MIN_TEMP_C).toFixed(0)} ${unit}`, yAxis: t(CURE_MIN_TEMP_C) },
                { name: `max ${t(CURE_MAX_TEMP_C).toFixed(0)} ${unit}`, yAxis: t(CURE_MAX_TEMP_C) },
              ],
            }
          : undefined,
      },
      {
        name: "Humidity (% RH)",
        type: "line",
        yAxisIndex: 1,
        showSymbol: false,
        lineStyle: { width: 1.5, color: warn, type: "solid" },
        itemStyle: { color: warn },
        data: data.filter((r) => r.rh !== null).map((r) => [Date.parse(r.ts), r.rh]),
        markLine:
          kind === "bag"
            ? {
                symbol: "none",
                label: { formatter: "{b}", color: warn, position: "insideStartTop" },
                lineStyle: { color: warn, type: "dashed" },
                data: [
                  { name: `moist ≥ ${MOIST_CURE_MIN_RH_PCT} %`, yAxis: MOIST_CURE_MIN_RH_PCT },
                ],
              }
            : undefined,
      },
    ],
  };

  return (
    <div>
      <div className="mb-3 flex flex-wrap items-center gap-2" role="group" aria-label="Time range">
        {ranges.map((r) => (
          <button
            key={r.key}
            type="button"
            aria-pressed={r.key === range.key}
            className={`btn text-sm ${r.key === range.key ? "btn-primary" : "btn-quiet"}`}
            onClick={() => {
              setRange(r);
              setAnchor(Date.now());
              setLive([]);
            }}
          >
            {r.label}
          </button>
        ))}
        <span className="ml-auto text-sm text-muted" role="status" aria-live="polite">
          {query.isFetching
            ? "Loading readings…"
            : query.isError
              ? `Could not load: ${(query.error as Error).message}`
              : `${data.length.toLocaleString("en-US")} points shown`}
        </span>
      </div>
      <div className="card p-2" data-testid="sensor-chart">
        <ReactEChartsCore
          echarts={echarts}
          option={option}
          notMerge
          style={{ height: 380, width: "100%" }}
          opts={{ renderer: "canvas" }}
        />
      </div>
      <p className="hint mt-2">
        Drag the slider or pinch to zoom. Dashed lines are the limits that apply to this sensor.
      </p>
    </div>
  );
}
