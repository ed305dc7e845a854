import { useQuery } from "@tanstack/react-query";
import { MarkAreaComponent } from "echarts/components";
import { alertValueText } from "@/domain/alerts/episodeWords";
import type { RuleKind } from "@/domain/alerts/episode";
import { cToF, type UnitSystem } from "@/domain/units";
import ChartCanvas from "./chart/ChartCanvas";
import {
  axisTooltip,
  chartBase,
  echarts,
  limitLine,
  markLines,
  plantTimeFormat,
  readChartTheme,
  timeAxis,
  valueAxis,
} from "./chart/echartsBase";
import { fetchReadings, withReadingsQuery } from "./chart/readings";

// The shaded span of the episode: only this chart draws one.
echarts.use([MarkAreaComponent]);

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

const EpisodeChart = withReadingsQuery(Chart, 60_000);
export default EpisodeChart;

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
    queryFn: () => fetchReadings(p.sensorId, p.fromMs, p.toMs, 800),
  });

  const rh = p.kind === "rh_low";
  const unit = rh ? "% RH" : p.units === "us" ? "°F" : "°C";
  const level = (v: number) => (rh ? v : p.units === "us" ? cToF(v) : v);
  const data = (query.data ?? [])
    .filter((r) => (rh ? r.rh !== null : true))
    .map((r) => [Date.parse(r.ts), Number(level(rh ? r.rh! : r.temp_c).toFixed(2))]);
  const limits = levelLimits(p.kind, p.threshold, p.thresholdHigh);

  const theme = readChartTheme();
  const { alarm, warn } = theme;
  const fmt = plantTimeFormat(p.timeZone, { hour: "numeric", minute: "2-digit" });
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
    ...chartBase(theme),
    grid: { left: 48, right: 16, top: 36, bottom: 36 },
    tooltip: axisTooltip(p.timeZone, (v) =>
      typeof v === "number" ? `${v.toFixed(1)} ${unit}` : String(v),
    ),
    xAxis: timeAxis(theme, fmt, { splitNumber: 4, minMs: p.fromMs, maxMs: p.toMs }),
    yAxis: valueAxis(
      theme,
      unit,
      limits.length
        ? {
            min: (v: { min: number }) => Math.floor(Math.min(v.min, ...limits.map(level)) - 1),
            max: (v: { max: number }) =>
              rh ? 100 : Math.ceil(Math.max(v.max, ...limits.map(level)) + 1),
          }
        : {},
    ),
    series: [
      {
        name: rh ? "Humidity" : "Temperature",
        type: "line",
        showSymbol: false,
        lineStyle: { width: 2, color: theme.accent },
        itemStyle: { color: theme.accent },
        data,
        markArea: {
          silent: true,
          itemStyle: { color: theme.alarmBg, opacity: 0.6 },
          label: { color: alarm, fontWeight: "bold", position: "insideBottom" },
          data: [
            [
              { name: p.clearedAtMs === null ? "alert, ongoing" : "alert", xAxis: p.startedAtMs },
              { xAxis: endMs },
            ],
          ],
        },
        markLine: markLines([
          ...limits.map((v) =>
            limitLine(`limit ${alertValueText(p.kind, v, p.units)}`, level(v), alarm, {
              position: "insideEndTop",
              width: 2,
            }),
          ),
          ...moments.map((m) => ({
            name: m.name,
            xAxis: m.xAxis,
            lineStyle: { color: m.color, type: "dotted", width: 1.5 },
            label: { formatter: "{b}", color: m.color, position: m.position },
          })),
        ]),
      },
    ],
  };

  return (
    <div>
      <ChartCanvas option={option} height={280} testId="episode-chart" />
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
