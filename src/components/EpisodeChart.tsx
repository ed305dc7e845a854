import { QueryClient, QueryClientProvider, useQuery } from "@tanstack/react-query";
import { LineChart } from "echarts/charts";
import {
  GridComponent,
  MarkAreaComponent,
  MarkLineComponent,
  TooltipComponent,
} from "echarts/components";
import * as echarts from "echarts/core";
import { CanvasRenderer } from "echarts/renderers";
import ReactEChartsCore from "echarts-for-react/esm/core";
import { alertValueText } from "@/domain/alerts/episodeWords";
import type { RuleKind } from "@/domain/alerts/episode";
import { cToF, type UnitSystem } from "@/domain/units";

echarts.use([
  LineChart,
  GridComponent,
  TooltipComponent,
  MarkLineComponent,
  MarkAreaComponent,
  CanvasRenderer,
]);

interface Props {
  sensorId: string;
  kind: RuleKind;
  /** The rule's limits, SI. */
  threshold: number | null;
  thresholdHigh: number | null;
  /** The chart's window and the episode's moments, epoch ms. */
  fromMs: number;
  toMs: number;
  startedAtMs: number;
  openedAtMs: number;
  acknowledgedAtMs: number | null;
  clearedAtMs: number | null;
  units: UnitSystem;
  timeZone: string;
}

interface Reading {
  ts: string;
  temp_c: number;
  rh: number | null;
}

const queryClient = new QueryClient({
  defaultOptions: { queries: { refetchOnWindowFocus: false, staleTime: 60_000 } },
});

export default function EpisodeChart(props: Props) {
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

/** Which limits are a level on the chart's own axis (a rate, a silence or a battery is not). */
function levelLimits(kind: RuleKind, threshold: number | null, thresholdHigh: number | null) {
  switch (kind) {
    case "temp_low":
    case "temp_high":
    case "rh_low":
      return threshold === null ? [] : [threshold];
    case "bin_range":
      return [threshold, thresholdHigh].filter((v): v is number => v !== null);
    default:
      return [];
  }
}

/**
 * The sensor's readings around one episode: the span it lasted shaded, the rule's limit drawn
 * where it is a level (temperature or humidity), and the moments it opened and was acknowledged.
 */
function Chart(p: Props) {
  const query = useQuery({
    queryKey: ["episode-readings", p.sensorId, p.fromMs, p.toMs],
    queryFn: async () => {
      const res = await fetch(
        `/api/v1/sensors/${encodeURIComponent(p.sensorId)}/readings?from=${p.fromMs}&to=${p.toMs}&max_points=800`,
      );
      if (!res.ok) throw new Error(`The server answered ${res.status}.`);
      return ((await res.json()) as { readings: Reading[] }).readings;
    },
  });

  const rh = p.kind === "rh_low";
  const unit = rh ? "% RH" : p.units === "us" ? "°F" : "°C";
  const level = (v: number) => (rh ? v : p.units === "us" ? cToF(v) : v);
  const data = (query.data ?? [])
    .filter((r) => (rh ? r.rh !== null : true))
    .map((r) => [Date.parse(r.ts), Number(level(rh ? r.rh! : r.temp_c).toFixed(2))]);
  const limits = levelLimits(p.kind, p.threshold, p.thresholdHigh);

  const ink = cssVar("--c-text", "#1d1f21");
  const muted = cssVar("--c-muted", "#55595e");
  const line = cssVar("--c-border", "#d6d3cc");
  const accent = cssVar("--c-accent", "#1f4f8f");
  const alarm = cssVar("--c-alarm", "#a1121b");
  const alarmBg = cssVar("--c-alarm-bg", "#fbe3e3");
  const warn = cssVar("--c-warn", "#8a4b00");
  const fmt = new Intl.DateTimeFormat("en-US", {
    timeZone: p.timeZone,
    hour: "numeric",
    minute: "2-digit",
  });
  const fmtTip = new Intl.DateTimeFormat("en-US", {
    timeZone: p.timeZone,
    month: "short",
    day: "numeric",
    hour: "numeric",
    minute: "2-digit",
  });
  const endMs = p.clearedAtMs ?? p.toMs;
  // Labels run along their lines, on either side, so moments close together stay readable.
  const moments = [
    { name: "opened", xAxis: p.openedAtMs, color: alarm, position: "insideEndTop" },
    ...(p.acknowledgedAtMs !== null
      ? [
          {
            name: "acknowledged",
            xAxis: p.acknowledgedAtMs,
            color: warn,
            position: "insideEndBottom",
          },
        ]
      : []),
  ];

  const option = {
    animation: false,
    textStyle: { fontFamily: "Public Sans Variable, system-ui, sans-serif", color: ink },
    grid: { left: 48, right: 16, top: 36, bottom: 36 },
    tooltip: {
      trigger: "axis",
      valueFormatter: (v: number) =>
        typeof v === "number" ? `${v.toFixed(1)} ${unit}` : String(v),
      axisPointer: {
        type: "line",
        label: { formatter: (x: { value: number }) => fmtTip.format(x.value) },
      },
    },
    xAxis: {
      type: "time",
      min: p.fromMs,
      max: p.toMs,
      splitNumber: 4,
      axisLabel: { color: muted, hideOverlap: true, formatter: (v: number) => fmt.format(v) },
      axisLine: { lineStyle: { color: line } },
    },
    yAxis: {
      type: "value",
      name: unit,
      scale: true,
      ...(limits.length
        ? {
            min: (v: { min: number }) => Math.floor(Math.min(v.min, ...limits.map(level)) - 1),
            max: (v: { max: number }) =>
              rh ? 100 : Math.ceil(Math.max(v.max, ...limits.map(level)) + 1),
          }
        : {}),
      nameTextStyle: { color: muted },
      axisLabel: { color: muted },
      splitLine: { lineStyle: { color: line } },
    },
    series: [
      {
        name: rh ? "Humidity" : "Temperature",
        type: "line",
        showSymbol: false,
        lineStyle: { width: 2, color: accent },
        itemStyle: { color: accent },
        data,
        markArea: {
          silent: true,
          itemStyle: { color: alarmBg, opacity: 0.6 },
          label: { color: alarm, fontWeight: "bold", position: "insideBottom" },
          data: [
            [
              { name: p.clearedAtMs === null ? "alert, ongoing" : "alert", xAxis: p.startedAtMs },
              { xAxis: endMs },
            ],
          ],
        },
        markLine: {
          symbol: "none",
          silent: true,
          data: [
            ...limits.map((v) => ({
              name: `limit ${alertValueText(p.kind, v, p.units)}`,
              yAxis: level(v),
              lineStyle: { color: alarm, type: "dashed", width: 2 },
              label: { formatter: "{b}", color: alarm, position: "insideEndTop" },
            })),
            ...moments.map((m) => ({
              name: m.name,
              xAxis: m.xAxis,
              lineStyle: { color: m.color, type: "dotted", width: 1.5 },
              label: { formatter: "{b}", color: m.color, position: m.position },
            })),
          ],
        },
      },
    ],
  };

  return (
    <div>
      <div className="card p-2" data-testid="episode-chart">
        <ReactEChartsCore
          echarts={echarts}
          option={option}
          notMerge
          style={{ height: 280, width: "100%" }}
          opts={{ renderer: "canvas" }}
        />
      </div>
      <p className="hint mt-1" role="status" aria-live="polite">
        {query.isPending
          ? "Loading readings…"
          : query.isError
            ? `Could not load the readings: ${query.error.message}`
            : data.length === 0
              ? "No readings in this window."
              : `${rh ? "Humidity" : "Temperature"} of ${p.sensorId}, ${data.length} points. The shaded span is the alert${limits.length ? "; the dashed line is the limit" : ""}.`}
      </p>
    </div>
  );
}
