/**
 * The ECharts that Plinth's chart islands share: `echarts/core` with only the parts every one of
 * them draws with (line series, grid, axis tooltip, mark lines, canvas), and the pieces of an
 * option that look the same on every chart: the colours of the page's theme, the font, the time
 * and value axes, the axis tooltip and the dashed limit lines.
 *
 * A part only some charts use is registered beside them, so a page loads no more than it draws:
 * zooming and the legend in ./zoomable, the shaded span in EpisodeChart.
 */
import { LineChart } from "echarts/charts";
import { GridComponent, MarkLineComponent, TooltipComponent } from "echarts/components";
import * as echarts from "echarts/core";
import { CanvasRenderer } from "echarts/renderers";

echarts.use([LineChart, GridComponent, TooltipComponent, MarkLineComponent, CanvasRenderer]);

export { echarts };

/** The theme's colours for a canvas, which cannot read CSS tokens by itself. */
export interface ChartTheme {
  ink: string;
  muted: string;
  line: string;
  accent: string;
  warn: string;
  alarm: string;
  alarmBg: string;
}

function cssVar(name: string, fallback: string): string {
  if (typeof window === "undefined") return fallback;
  return getComputedStyle(document.documentElement).getPropertyValue(name).trim() || fallback;
}

/**
 * The colours the page shows now, from the tokens in global.css (light or dark, by the person's
 * choice or the system's); the light values stand in where there is no page.
 */
export function readChartTheme(): ChartTheme {
  return {
    ink: cssVar("--c-text", "#1d1f21"),
    muted: cssVar("--c-muted", "#55595e"),
    line: cssVar("--c-border", "#d6d3cc"),
    accent: cssVar("--c-accent", "#1f4f8f"),
    warn: cssVar("--c-warn", "#8a4b00"),
    alarm: cssVar("--c-alarm", "#a1121b"),
    alarmBg: cssVar("--c-alarm-bg", "#fbe3e3"),
  };
}

/** What every chart's option starts with: no animation, the page's font and ink. */
export function chartBase(theme: ChartTheme) {
  return {
    animation: false,
    textStyle: { fontFamily: "Public Sans Variable, system-ui, sans-serif", color: theme.ink },
  };
}

/** A date formatter in the plant's time zone, with the parts given. */
export function plantTimeFormat(timeZone: string, parts: Intl.DateTimeFormatOptions) {
  return new Intl.DateTimeFormat("en-US", { timeZone, ...parts });
}

/**
 * The tooltip of a chart over time: every series at the pointer, the moment named in the plant's
 * time zone (month, day, hour and minute), each value as `valueText` writes it.
 */
export function axisTooltip(
  timeZone: string,
  valueText: (v: number) => string,
  extra: { confine?: boolean } = {},
) {
  const fmtTip = plantTimeFormat(timeZone, {
    month: "short",
    day: "numeric",
    hour: "numeric",
    minute: "2-digit",
  });
  return {
    trigger: "axis",
    ...extra,
    valueFormatter: valueText,
    axisPointer: {
      type: "line",
      label: { formatter: (p: { value: number }) => fmtTip.format(p.value) },
    },
  };
}

/** The time axis along the bottom, labelled by `format`, its span fixed where given. */
export function timeAxis(
  theme: ChartTheme,
  format: Intl.DateTimeFormat,
  o: { splitNumber: number; minMs?: number; maxMs?: number },
) {
  return {
    type: "time",
    ...(o.minMs !== undefined ? { min: o.minMs } : {}),
    ...(o.maxMs !== undefined ? { max: o.maxMs } : {}),
    splitNumber: o.splitNumber,
    axisLabel: {
      color: theme.muted,
      hideOverlap: true,
      formatter: (v: number) => format.format(v),
    },
    axisLine: { lineStyle: { color: theme.line } },
  };
}

/**
 * A value axis named by its unit, fitted to the data (not to zero) with light grid lines;
 * `extra` overrides any of it (a fixed range, a bound that keeps a limit in view).
 */
export function valueAxis(theme: ChartTheme, name: string, extra: object = {}) {
  return {
    type: "value",
    name,
    scale: true,
    nameTextStyle: { color: theme.muted },
    axisLabel: { color: theme.muted },
    splitLine: { lineStyle: { color: theme.line } },
    ...extra,
  };
}

/** Where a mark line's label sits along its line. */
export type MarkLabelPosition =
  "end" | "insideStartTop" | "insideMiddleTop" | "insideEndTop" | "insideEndBottom";

/** A dashed level across the chart (a limit, a strength to reach), labelled with its name. */
export function limitLine(
  name: string,
  yAxis: number,
  color: string,
  o: { position: MarkLabelPosition; width?: number },
) {
  return {
    name,
    yAxis,
    lineStyle: { color, type: "dashed", ...(o.width !== undefined ? { width: o.width } : {}) },
    label: { formatter: "{b}", color, position: o.position },
  };
}

/** A series' mark lines: plain lines, no arrow heads; silent ones do not answer the pointer. */
export function markLines(data: object[], o: { silent: boolean } = { silent: true }) {
  return { symbol: "none", ...(o.silent ? { silent: true } : {}), data };
}
