import { useEffect, useMemo, useState } from "react";
import { MOIST_CURE_MIN_RH_PCT } from "@/domain/sensorState";
import { cToF, mpaToPsi, type UnitSystem } from "@/domain/units";
import ChartCanvas from "./chart/ChartCanvas";
import {
  axisTooltip,
  chartBase,
  echarts,
  limitLine,
  markLines,
  plantTimeFormat,
  timeAxis,
  valueAxis,
} from "./chart/echartsBase";
import { useChartTheme } from "./chart/useChartTheme";
import { topLegend, zoomControls } from "./chart/zoomable";

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

function readData(id: string): PourHistoryChartData | null {
  const el = document.getElementById(id);
  if (!el?.textContent) return null;
  try {
    return JSON.parse(el.textContent) as PourHistoryChartData;
  } catch {
    return null;
  }
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

/**
 * A value axis from zero tall enough for `top` (with a little headroom), on a round step of
 * 1, 2 or 5 times a power of ten with about five steps, as ECharts would pick for the data.
 */
function roomFor(top: number): { max: number; interval: number } | object {
  if (!(top > 0) || !Number.isFinite(top)) return {};
  const want = (top * 1.05) / 5;
  const magnitude = 10 ** Math.floor(Math.log10(want));
  const interval = ([1, 2, 5, 10].find((m) => m * magnitude >= want) ?? 10) * magnitude;
  return { max: Math.ceil((top * 1.05) / interval) * interval, interval };
}

export default function PourHistoryCharts({ dataId }: Props) {
  const [data] = useState(() => readData(dataId));
  const theme = useChartTheme();
  const narrow = useNarrow();

  const options = useMemo(() => {
    if (!data) return null;
    const { ink, warn, alarm, accent } = theme;
    const us = data.units === "us";
    const tempUnit = us ? "°F" : "°C";
    const strengthUnit = us ? "psi" : "MPa";
    const ttfUnit = us ? "°F·h" : "°C·h";
    const t = (c: number) => Number((us ? cToF(c) : c).toFixed(2));
    const s = (mpa: number) => (us ? Math.round(mpaToPsi(mpa)) : Number(mpa.toFixed(2)));
    const ttf = (v: number) => Math.round(us ? v * 1.8 : v);
    const spanH = (data.endMs - data.castAtMs) / 3_600_000;
    const fmtAxis = plantTimeFormat(
      data.timeZone,
      spanH <= 36
        ? { hour: "numeric", minute: "2-digit" }
        : { month: "short", day: "numeric", hour: "numeric" },
    );
    const styleOf = (i: number) => ({
      color: PALETTE[i % PALETTE.length]!,
      type: DASHES[Math.floor(i / PALETTE.length) % DASHES.length]!,
    });
    /** The i-th sensor's line, in its own colour and dash on every chart. */
    const sensorLine = (
      name: string,
      i: number,
      points: unknown[],
      line: { width: number; opacity?: number } = { width: 1.5 },
    ) => ({
      name,
      type: "line",
      showSymbol: false,
      lineStyle: { ...line, ...styleOf(i) },
      itemStyle: { color: styleOf(i).color },
      data: points,
    });
    /** The governing (weakest) sensor's line, drawn over the others: decisions follow it. */
    const governingLine = (points: unknown[], markLine: object | undefined) => ({
      name: "Governing (weakest)",
      type: "line",
      showSymbol: false,
      z: 5,
      lineStyle: { width: 3, color: ink },
      itemStyle: { color: ink },
      data: points,
      markLine,
    });

    const base = (yName: string) => ({
      ...chartBase(theme),
      grid: { left: narrow ? 44 : 56, right: narrow ? 12 : 24, top: narrow ? 64 : 48, bottom: 64 },
      legend: topLegend(theme, { scroll: true }),
      tooltip: axisTooltip(
        data.timeZone,
        (v: unknown) => (typeof v === "number" ? v.toLocaleString("en-US") : "—"),
        { confine: true },
      ),
      xAxis: timeAxis(theme, fmtAxis, {
        splitNumber: narrow ? 3 : 6,
        minMs: data.castAtMs,
        maxMs: data.endMs,
      }),
      // On a phone the caption names the unit, leaving the space above the plot to the labels.
      yAxis: valueAxis(theme, narrow ? "" : yName, {
        nameTextStyle: { color: theme.muted, align: "left" },
      }),
      dataZoom: zoomControls(theme, { bottom: 10, hideLabels: true }),
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
      series: data.sensors.map((x, i) =>
        sensorLine(
          x.sensor,
          i,
          x.temps.tsMs.map((ts, k) => [ts, t(x.temps.tempC[k]!)]),
        ),
      ),
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
            ...sensorLine(
              x.sensor,
              i,
              x.temps.tsMs.flatMap((ts, k) =>
                x.temps.rhPct[k] === null ? [] : [[ts, x.temps.rhPct[k]]],
              ),
            ),
            markLine:
              n === 0
                ? markLines([
                    limitLine(
                      `moist cure ≥ ${MOIST_CURE_MIN_RH_PCT} %`,
                      MOIST_CURE_MIN_RH_PCT,
                      warn,
                      { position: "insideStartTop" },
                    ),
                  ])
                : undefined,
          })),
        }
      : null;

    // Strength (or, for a mix not calibrated, the temperature-time factor) from zero up.
    const fromZero = (yName: string, series: object[], axis: object = {}) => ({
      ...base(yName),
      yAxis: { ...base(yName).yAxis, scale: false, min: 0, ...axis },
      series,
    });
    const strength = data.calibrated
      ? fromZero(
          strengthUnit,
          [
            ...data.sensors.map((x, i) =>
              sensorLine(
                x.sensor,
                i,
                x.maturity.tsMs.map((ts, k) => [ts, s(x.maturity.strengthMpa[k] ?? 0)]),
                { width: 1, opacity: 0.8 },
              ),
            ),
            governingLine(
              data.governing.tsMs.map((ts, k) => [ts, s(data.governing.strengthMpa[k] ?? 0)]),
              markLines([
                limitLine(
                  `strip ${s(data.stripMpa).toLocaleString("en-US")} ${strengthUnit}`,
                  s(data.stripMpa),
                  warn,
                  { position: "insideMiddleTop", width: 2 },
                ),
                limitLine(
                  `ship ${s(data.shipMpa).toLocaleString("en-US")} ${strengthUnit}`,
                  s(data.shipMpa),
                  alarm,
                  { position: "insideMiddleTop", width: 2 },
                ),
                ...releaseMarks,
              ]),
            ),
          ],
          // A dashed level does not stretch the axis: make room for the ship strength.
          roomFor(
            [data.governing.strengthMpa, ...data.sensors.map((x) => x.maturity.strengthMpa)].reduce(
              (top, values) =>
                values.reduce<number>((t, v) => (v === null ? t : Math.max(t, s(v))), top),
              Math.max(s(data.shipMpa), s(data.stripMpa)),
            ),
          ),
        )
      : fromZero(ttfUnit, [
          ...data.sensors.map((x, i) =>
            sensorLine(
              x.sensor,
              i,
              x.maturity.tsMs.map((ts, k) => [ts, ttf(x.maturity.ttfCH[k]!)]),
            ),
          ),
          governingLine(
            data.governing.tsMs.map((ts, k) => [ts, ttf(data.governing.ttfCH[k]!)]),
            releaseMarks.length ? markLines(releaseMarks) : undefined,
          ),
        ]);
    return { temperature, humidity, strength, tempUnit, strengthUnit, ttfUnit };
  }, [data, theme, narrow]);

  if (!data || !options) {
    return (
      <p className="error-text">
        The chart data could not be read. The tables below hold the record.
      </p>
    );
  }
  const height = narrow ? 280 : 340;
  const chart = (option: object, testId: string) => (
    <ChartCanvas
      option={option}
      height={height}
      testId={testId}
      onChartReady={(instance) => {
        // Zooming one chart zooms the others: the same stretch of the cure, three ways.
        instance.group = GROUP;
        echarts.connect(GROUP);
      }}
    />
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
