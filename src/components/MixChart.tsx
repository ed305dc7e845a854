import { LineChart, ScatterChart } from "echarts/charts";
import {
  GridComponent,
  LegendComponent,
  MarkLineComponent,
  TooltipComponent,
} from "echarts/components";
import * as echarts from "echarts/core";
import { CanvasRenderer } from "echarts/renderers";
import ReactEChartsCore from "echarts-for-react/esm/core";
import { useEffect, useState } from "react";
import type { UnitSystem } from "@/domain/units";
import {
  strengthText,
  strengthUnit,
  strengthValue,
  ttfText,
  type FitItem,
  type PointItem,
} from "./MixShared";

echarts.use([
  LineChart,
  ScatterChart,
  GridComponent,
  TooltipComponent,
  LegendComponent,
  MarkLineComponent,
  CanvasRenderer,
]);

interface Props {
  fit: FitItem | null;
  /** The mix's stored breaks; those not in the fit are drawn apart. */
  points: PointItem[];
  units: UnitSystem;
  stripPsi: number;
  shipPsi: number;
  mixName: string;
}

function cssVar(name: string, fallback: string): string {
  if (typeof window === "undefined") return fallback;
  return getComputedStyle(document.documentElement).getPropertyValue(name).trim() || fallback;
}

/** Redraws when the theme changes, so the chart's colours follow the page's. */
function useThemeKey(): string {
  const [key, setKey] = useState("");
  useEffect(() => {
    const read = () =>
      setKey(
        `${document.documentElement.dataset.theme ?? ""}|${window.matchMedia("(prefers-color-scheme: dark)").matches}`,
      );
    read();
    const mo = new MutationObserver(read);
    mo.observe(document.documentElement, { attributes: true, attributeFilter: ["data-theme"] });
    const mq = window.matchMedia("(prefers-color-scheme: dark)");
    mq.addEventListener("change", read);
    return () => {
      mo.disconnect();
      mq.removeEventListener("change", read);
    };
  }, []);
  return key;
}

const sameBreak = (a: { ttf_c_h: number; strength_psi: number }, b: PointItem) =>
  Math.abs(a.ttf_c_h - b.ttf_c_h) < 0.51 && Math.abs(a.strength_psi - b.strength_psi) < 0.51;

/**
 * The calibration chart: the breaks against their temperature-time factor, the fitted curve with
 * its band of ± one RMSE, and the strip and ship strengths as dashed lines, in the person's
 * strength unit. Breaks stored since the fit are drawn as hollow squares.
 */
export default function MixChart({ fit, points, units, stripPsi, shipPsi, mixName }: Props) {
  const [logScale, setLogScale] = useState(true);
  const themeKey = useThemeKey();
  const ink = cssVar("--c-text", "#1d1f21");
  const muted = cssVar("--c-muted", "#55595e");
  const line = cssVar("--c-border", "#d6d3cc");
  const accent = cssVar("--c-accent", "#1f4f8f");
  const warn = cssVar("--c-warn", "#8a4b00");
  const ok = cssVar("--c-ok", "#1d6b3a");
  const alarm = cssVar("--c-alarm", "#a1121b");
  const sUnit = strengthUnit(units);
  const y = (psi: number) => Number(strengthValue(psi, units).toFixed(units === "us" ? 0 : 2));

  const fitted = fit?.points ?? [];
  const curve = fit?.curve ?? [];
  const band = fit?.band_psi ?? null;
  const unfitted = points.filter((p) => !fitted.some((f) => sameBreak(f, p)));
  const xs = [
    ...fitted.map((p) => p.ttf_c_h),
    ...unfitted.map((p) => p.ttf_c_h),
    ...curve.map((c) => c.ttf_c_h),
  ].filter((v) => v > 0);
  const xMin = xs.length ? Math.min(...xs) : 100;
  const xMax = xs.length ? Math.max(...xs) : 10_000;

  const series: Record<string, unknown>[] = [];
  if (curve.length > 0 && band !== null) {
    const lower = curve.map((c) => Math.max(0, c.strength_psi - band));
    series.push(
      {
        name: "band-lower",
        type: "line",
        stack: "band",
        silent: true,
        symbol: "none",
        lineStyle: { opacity: 0 },
        tooltip: { show: false },
        data: curve.map((c, i) => [c.ttf_c_h, y(lower[i]!)]),
      },
      {
        name: "Band: ± one RMSE",
        type: "line",
        stack: "band",
        silent: true,
        symbol: "none",
        lineStyle: { opacity: 0 },
        itemStyle: { color: accent },
        areaStyle: { color: accent, opacity: 0.3 },
        tooltip: { show: false },
        data: curve.map((c, i) => [c.ttf_c_h, y(c.strength_psi + band) - y(lower[i]!)]),
      },
    );
  }
  if (curve.length > 0) {
    series.push({
      name: "Fitted curve",
      type: "line",
      symbol: "none",
      lineStyle: { width: 2.5, color: accent },
      itemStyle: { color: accent },
      data: curve.map((c) => [c.ttf_c_h, y(c.strength_psi)]),
      markLine: {
        symbol: "none",
        silent: true,
        data: [
          {
            name: `ship ${strengthText(shipPsi, units)}`,
            yAxis: y(shipPsi),
            lineStyle: { color: ok, type: "dashed", width: 1.5 },
            label: { formatter: "{b}", color: ink, position: "insideStartTop" },
          },
          {
            name: `strip ${strengthText(stripPsi, units)}`,
            yAxis: y(stripPsi),
            lineStyle: { color: warn, type: [8, 4, 2, 4], width: 1.5 },
            label: { formatter: "{b}", color: ink, position: "insideStartTop" },
          },
        ],
      },
    });
  }
  if (fitted.length > 0) {
    series.push({
      name: "Breaks in this fit",
      type: "scatter",
      symbol: "circle",
      symbolSize: 11,
      itemStyle: { color: ink, borderColor: cssVar("--c-surface", "#fff"), borderWidth: 1.5 },
      data: fitted.map((p) => ({
        value: [p.ttf_c_h, y(p.strength_psi)],
        tip: `${ttfText(p.ttf_c_h)}: ${strengthText(p.strength_psi, units)}, fitted ${strengthText(p.fitted_psi, units)}`,
      })),
    });
  }
  if (unfitted.length > 0) {
    series.push({
      name: fit ? "Breaks not in this fit" : "Breaks",
      type: "scatter",
      symbol: fit ? "rect" : "circle",
      symbolSize: 11,
      itemStyle: fit
        ? { color: "transparent", borderColor: alarm, borderWidth: 2 }
        : { color: ink },
      data: unfitted.map((p) => ({
        value: [p.ttf_c_h, y(p.strength_psi)],
        tip: `${ttfText(p.ttf_c_h)}: ${strengthText(p.strength_psi, units)}`,
      })),
    });
  }
  if (curve.length === 0 && fitted.length + unfitted.length > 0) {
    // Without a fit the thresholds still belong on the chart.
    series.push({
      name: "thresholds",
      type: "line",
      data: [],
      markLine: {
        symbol: "none",
        silent: true,
        data: [
          {
            name: `ship ${strengthText(shipPsi, units)}`,
            yAxis: y(shipPsi),
            lineStyle: { color: ok, type: "dashed" },
          },
          {
            name: `strip ${strengthText(stripPsi, units)}`,
            yAxis: y(stripPsi),
            lineStyle: { color: warn, type: [8, 4, 2, 4] },
          },
        ],
        label: { formatter: "{b}", color: ink, position: "insideStartTop" },
      },
    });
  }

  const option = {
    animation: false,
    textStyle: { fontFamily: "Public Sans Variable, system-ui, sans-serif", color: ink },
    grid: { left: 56, right: 20, top: 72, bottom: 56 },
    legend: {
      top: 0,
      textStyle: { color: ink },
      data: series
        .map((s) => s.name as string)
        .filter((n) => n !== "band-lower" && n !== "thresholds"),
    },
    tooltip: {
      trigger: "item",
      formatter: (p: { data?: { tip?: string } }) => p.data?.tip ?? "",
    },
    xAxis: {
      type: logScale ? "log" : "value",
      name: "Temperature-time factor (°C·h)",
      nameLocation: "middle",
      nameGap: 32,
      nameTextStyle: { color: muted },
      min: logScale ? undefined : 0,
      ...(logScale && {
        min: 10 ** Math.floor(Math.log10(xMin)),
        max: 10 ** Math.ceil(Math.log10(xMax)),
      }),
      axisLabel: {
        color: muted,
        hideOverlap: true,
        formatter: (v: number) => v.toLocaleString("en-US"),
      },
      axisLine: { lineStyle: { color: line } },
      splitLine: { lineStyle: { color: line } },
    },
    yAxis: {
      type: "value",
      name: `Strength (${sUnit})`,
      min: 0,
      nameTextStyle: { color: muted, align: "left" },
      axisLabel: { color: muted, formatter: (v: number) => v.toLocaleString("en-US") },
      splitLine: { lineStyle: { color: line } },
    },
    series,
  };

  const summary = fit
    ? `Chart of ${mixName}'s calibration: ${fitted.length} breaks in the fit${unfitted.length ? ` and ${unfitted.length} not in it` : ""}, the fitted curve with a band of ± one RMSE, and the strip and ship strengths. The breaks are listed in the table below.`
    : `Chart of ${mixName}'s ${unfitted.length} breaks, not yet fitted. They are listed in the table below.`;

  return (
    <div>
      <div className="mb-2 flex flex-wrap items-center justify-between gap-2">
        <label className="flex min-h-11 items-center gap-2 text-sm font-semibold">
          <input
            type="checkbox"
            className="h-5 w-5"
            checked={logScale}
            onChange={(e) => setLogScale(e.target.checked)}
          />
          Log scale of maturity
        </label>
        <span className="text-sm text-muted">
          {band !== null &&
            `Band: ± ${strengthText(band, units)} (one RMSE of the breaks about the curve)`}
        </span>
      </div>
      <div className="card p-2" data-testid="calibration-chart" role="img" aria-label={summary}>
        <ReactEChartsCore
          key={themeKey}
          echarts={echarts}
          option={option}
          notMerge
          style={{ height: 360, width: "100%" }}
          opts={{ renderer: "canvas" }}
        />
      </div>
    </div>
  );
}
