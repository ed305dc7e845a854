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
import { MOIST_CURE_MIN_RH_PCT } from "@/domain/sensorState";
import { cToF, mpaToPsi, type UnitSystem } from "@/domain/units";

echarts.use([
  LineChart,
  GridComponent,
  TooltipComponent,
  DataZoomComponent,
  LegendComponent,
  MarkLineComponent,
  CanvasRenderer,
]);

/** What the history page embeds for its charts (SI, epoch ms; thinned on the server). */
export interface PourHistoryChartData {
  units: UnitSystem;
  timeZone: string;
  castAtMs: number;
  endMs: number;
  calibrated: boolean;
  stripMpa: number;
  shipMpa: number;
  releases: { kind: "strip" | "ship"; atMs: number; override: boolean }[];
  sensors: {
    sensor: string;
    temps: { tsMs: number[]; tempC: number[]; rhPct: (number | null)[] };
    maturity: { tsMs: number[]; ttfCH: number[]; strengthMpa: (number | null)[] };
  }[];
  governing: { tsMs: number[]; ttfCH: number[]; strengthMpa: (number | null)[] };
}

interface Props {
  /** The id of the <script type="application/json"> holding the chart data. */
  dataId: string;
}

const GROUP = "pour-history";
const PALETTE = [
  "#3a78c9",
  "#d0692e",
  "#3c9a5f",
  "#9b59c0",
  "#b8930a",
  "#1e9aab",
  "#d64550",
  "#6b7a8a",
];
const DASHES = ["solid", "dashed", "dotted"] as const;

function cssVar(name: string, fallback: string): string {
  if (typeof window === "undefined") return fallback;
  return getComputedStyle(document.documentElement).getPropertyValue(name).trim() || fallback;
}

function readData(id: string): PourHistoryChartData | null {
  const el = document.getElementById(id);
  if (!el?.textContent) return null;
  try {
    return JSON.parse(el.textContent) as PourHistoryChartData;
  } catch {
    return null;
  }
}

/** Follows the page's theme (the switch, or the system's dark mode) so the canvas matches. */
function useThemeKey(): string {
  const [key, setKey] = useState("");
  useEffect(() => {
    const read = () =>
      setKey(
        `${document.documentElement.dataset.theme ?? ""}-${window.matchMedia("(prefers-color-scheme: dark)").matches}`,
      );
    read();
    const mq = window.matchMedia("(prefers-color-scheme: dark)");
    mq.addEventListener("change", read);
    const obs = new MutationObserver(read);
    obs.observe(document.documentElement, { attributes: true, attributeFilter: ["data-theme"] });
    return () => {
      mq.removeEventListener("change", read);
      obs.disconnect();
    };
  }, []);
  return key;
}

function useNarrow(): boolean {
  const [narrow, setNarrow] = useState(false);
  useEffect(() => {
    const mq = window.matchMedia("(max-width: 640px)");
    const read = () => setNarrow(mq.matches);
    read();
    mq.addEventListener("change", read);
    return () => mq.removeEventListener("change", read);
  }, []);
  return narrow;
}

export default function PourHistoryCharts({ dataId }: Props) {
  const [data] = useState(() => readData(dataId));
  const themeKey = useThemeKey();
  const narrow = useNarrow();

  const options = useMemo(() => {
    if (!data) return null;
    const ink = cssVar("--c-text", "#1d1f21");
    const muted = cssVar("--c-muted", "#55595e");
    const line = cssVar("--c-border", "#d6d3cc");
    const warn = cssVar("--c-warn", "#8a4b00");
    const alarm = cssVar("--c-alarm", "#a1121b");
    const accent = cssVar("--c-accent", "#1f4f8f");
    const us = data.units === "us";
    const tempUnit = us ? "°F" : "°C";
    const strengthUnit = us ? "psi" : "MPa";
    const ttfUnit = us ? "°F·h" : "°C·h";
    const t = (c: number) => Number((us ? cToF(c) : c).toFixed(2));
    const s = (mpa: number) => (us ? Math.round(mpaToPsi(mpa)) : Number(mpa.toFixed(2)));
    const ttf = (v: number) => Math.round(us ? v * 1.8 : v);
    const spanH = (data.endMs - data.castAtMs) / 3_600_000;
    const fmtAxis = new Intl.DateTimeFormat(
      "en-US",
      spanH <= 36
        ? { timeZone: data.timeZone, hour: "numeric", minute: "2-digit" }
        : { timeZone: data.timeZone, month: "short", day: "numeric", hour: "numeric" },
    );
    const fmtTip = new Intl.DateTimeFormat("en-US", {
      timeZone: data.timeZone,
      month: "short",
      day: "numeric",
      hour: "numeric",
      minute: "2-digit",
    });
    const styleOf = (i: number) => ({
      color: PALETTE[i % PALETTE.length]!,
      type: DASHES[Math.floor(i / PALETTE.length) % DASHES.length]!,
    });

    const base = (yName: string) => ({
      animation: false,
      textStyle: { fontFamily: "Public Sans Variable, system-ui, sans-serif", color: ink },
      grid: { left: narrow ? 44 : 56, right: narrow ? 12 : 24, top: narrow ? 64 : 48, bottom: 64 },
      legend: { type: "scroll", top: 0, textStyle: { color: ink }, pageTextStyle: { color: ink } },
      tooltip: {
        trigger: "axis",
        confine: true,
        valueFormatter: (v: unknown) => (typeof v === "number" ? v.toLocaleString("en-US") : "—"),
        axisPointer: {
          type: "line",
          label: { formatter: (p: { value: number }) => fmtTip.format(p.value) },
        },
      },
      xAxis: {
        type: "time",
        min: data.castAtMs,
        max: data.endMs,
        axisLabel: {
          color: muted,
          hideOverlap: true,
          formatter: (v: number) => fmtAxis.format(v),
        },
        splitNumber: narrow ? 3 : 6,
        axisLine: { lineStyle: { color: line } },
      },
      yAxis: {
        type: "value",
        // On a phone the caption names the unit, leaving the space above the plot to the labels.
        name: narrow ? "" : yName,
        scale: true,
        nameTextStyle: { color: muted, align: "left" },
        axisLabel: { color: muted },
        splitLine: { lineStyle: { color: line } },
      },
      dataZoom: [
        { type: "inside" },
        { type: "slider", height: 22, bottom: 10, textStyle: { color: muted }, labelFormatter: "" },
      ],
    });

    const releaseMarks = data.releases.map((r) => ({
      name: `${r.kind === "strip" ? "Strip" : "Ship"} released${r.override ? " (override)" : ""}`,
      xAxis: r.atMs,
      lineStyle: { color: r.override ? alarm : accent, type: "solid" as const, width: 2 },
      // Above the plot, level, where the threshold labels inside it cannot cover it.
      label: {
        formatter: "{b}",
        color: r.override ? alarm : accent,
        position: "end" as const,
        fontWeight: "bold" as const,
      },
    }));

    const temperature = {
      ...base(tempUnit),
      series: data.sensors.map((x, i) => ({
        name: x.sensor,
        type: "line",
        showSymbol: false,
        lineStyle: { width: 1.5, ...styleOf(i) },
        itemStyle: { color: styleOf(i).color },
        data: x.temps.tsMs.map((ts, k) => [ts, t(x.temps.tempC[k]!)]),
      })),
    };

    const withRh = data.sensors
      .map((x, i) => ({ x, i }))
      .filter(({ x }) => x.temps.rhPct.some((v) => v !== null));
    let lowestRh = MOIST_CURE_MIN_RH_PCT - 10;
    for (const { x } of withRh)
      for (const v of x.temps.rhPct) if (v !== null && v < lowestRh) lowestRh = v;
    const rhMin = Math.max(0, Math.floor(lowestRh / 5) * 5);
    const rhStep = 100 - rhMin <= 30 ? 5 : 100 - rhMin <= 60 ? 10 : 20;
    const humidity = withRh.length
      ? {
          ...base("% RH"),
          // Keep the moist-cure level in view, and room below it to see a bag drying out.
          yAxis: { ...base("% RH").yAxis, scale: false, min: rhMin, max: 100, interval: rhStep },
          series: withRh.map(({ x, i }, n) => ({
            name: x.sensor,
            type: "line",
            showSymbol: false,
            lineStyle: { width: 1.5, ...styleOf(i) },
            itemStyle: { color: styleOf(i).color },
            data: x.temps.tsMs.flatMap((ts, k) =>
              x.temps.rhPct[k] === null ? [] : [[ts, x.temps.rhPct[k]]],
            ),
            markLine:
              n === 0
                ? {
                    symbol: "none",
                    silent: true,
                    label: { formatter: "{b}", color: warn, position: "insideStartTop" },
                    lineStyle: { color: warn, type: "dashed" },
                    data: [
                      {
                        name: `moist cure ≥ ${MOIST_CURE_MIN_RH_PCT} %`,
                        yAxis: MOIST_CURE_MIN_RH_PCT,
                      },
                    ],
                  }
                : undefined,
          })),
        }
      : null;

    const governingName = "Governing (weakest)";
    const strength = data.calibrated
      ? {
          ...base(strengthUnit),
          yAxis: { ...base(strengthUnit).yAxis, scale: false, min: 0 },
          series: [
            ...data.sensors.map((x, i) => ({
              name: x.sensor,
              type: "line",
              showSymbol: false,
              lineStyle: { width: 1, opacity: 0.8, ...styleOf(i) },
              itemStyle: { color: styleOf(i).color },
              data: x.maturity.tsMs.map((ts, k) => [ts, s(x.maturity.strengthMpa[k] ?? 0)]),
            })),
            {
              name: governingName,
              type: "line",
              showSymbol: false,
              z: 5,
              lineStyle: { width: 3, color: ink },
              itemStyle: { color: ink },
              data: data.governing.tsMs.map((ts, k) => [ts, s(data.governing.strengthMpa[k] ?? 0)]),
              markLine: {
                symbol: "none",
                silent: true,
                data: [
                  {
                    name: `strip ${s(data.stripMpa).toLocaleString("en-US")} ${strengthUnit}`,
                    yAxis: s(data.stripMpa),
                    lineStyle: { color: warn, type: "dashed", width: 2 },
                    label: { formatter: "{b}", color: warn, position: "insideMiddleTop" },
                  },
                  {
                    name: `ship ${s(data.shipMpa).toLocaleString("en-US")} ${strengthUnit}`,
                    yAxis: s(data.shipMpa),
                    lineStyle: { color: alarm, type: "dashed", width: 2 },
                    label: { formatter: "{b}", color: alarm, position: "insideMiddleTop" },
                  },
                  ...releaseMarks,
                ],
              },
            },
          ],
        }
      : {
          ...base(ttfUnit),
          yAxis: { ...base(ttfUnit).yAxis, scale: false, min: 0 },
          series: [
            ...data.sensors.map((x, i) => ({
              name: x.sensor,
              type: "line",
              showSymbol: false,
              lineStyle: { width: 1.5, ...styleOf(i) },
              itemStyle: { color: styleOf(i).color },
              data: x.maturity.tsMs.map((ts, k) => [ts, ttf(x.maturity.ttfCH[k]!)]),
            })),
            {
              name: governingName,
              type: "line",
              showSymbol: false,
              z: 5,
              lineStyle: { width: 3, color: ink },
              itemStyle: { color: ink },
              data: data.governing.tsMs.map((ts, k) => [ts, ttf(data.governing.ttfCH[k]!)]),
              markLine: releaseMarks.length
                ? { symbol: "none", silent: true, data: releaseMarks }
                : undefined,
            },
          ],
        };
    return { temperature, humidity, strength, tempUnit, strengthUnit, ttfUnit, themeKey };
  }, [data, themeKey, narrow]);

  if (!data || !options) {
    return (
      <p className="error-text">
        The chart data could not be read. The tables below hold the record.
      </p>
    );
  }
  const height = narrow ? 280 : 340;
  const chart = (option: object, testId: string) => (
    <div className="card p-2" data-testid={testId}>
      <ReactEChartsCore
        echarts={echarts}
        option={option}
        notMerge
        style={{ height, width: "100%" }}
        opts={{ renderer: "canvas" }}
        onChartReady={(instance: echarts.ECharts) => {
          // Zooming one chart zooms the others: the same stretch of the cure, three ways.
          instance.group = GROUP;
          echarts.connect(GROUP);
        }}
      />
    </div>
  );
  return (
    <div className="grid gap-6">
      <figure>
        <figcaption className="mb-2">
          <span className="font-bold">Temperature</span>{" "}
          <span className="text-sm text-muted">every sensor on the pour, {options.tempUnit}</span>
        </figcaption>
        {chart(options.temperature, "history-temp-chart")}
      </figure>
      {options.humidity ? (
        <figure>
          <figcaption className="mb-2">
            <span className="font-bold">Humidity</span>{" "}
            <span className="text-sm text-muted">sensors that report it, % RH</span>
          </figcaption>
          {chart(options.humidity, "history-rh-chart")}
        </figure>
      ) : (
        <p className="text-sm text-muted">No sensor on this pour reports humidity.</p>
      )}
      <figure>
        <figcaption className="mb-2">
          <span className="font-bold">
            {data.calibrated ? "Estimated strength" : "Temperature-time factor"}
          </span>{" "}
          <span className="text-sm text-muted">
            {data.calibrated
              ? `by the maturity method (ASTM C1074), ${options.strengthUnit}; dashed lines are the strip and ship strengths, solid upright lines the releases`
              : `${options.ttfUnit}: the mix is not calibrated, so strength cannot be estimated`}
          </span>
        </figcaption>
        {chart(options.strength, "history-strength-chart")}
      </figure>
      <p className="hint">
        Drag the slider or pinch to zoom; the three charts move together. The thick line is the
        governing (weakest) sensor, which decisions follow.
      </p>
    </div>
  );
}
