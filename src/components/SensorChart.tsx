import { useQuery } from "@tanstack/react-query";
import { useEffect, useMemo, useState } from "react";
import { CURE_MAX_TEMP_C, CURE_MIN_TEMP_C } from "@/domain/floor";
import { MOIST_CURE_MIN_RH_PCT } from "@/domain/sensorState";
import { cToF, type UnitSystem } from "@/domain/units";
import ChartCanvas from "./chart/ChartCanvas";
import {
  axisTooltip,
  chartBase,
  limitLine,
  markLines,
  plantTimeFormat,
  readChartTheme,
  timeAxis,
  valueAxis,
} from "./chart/echartsBase";
import { fetchReadings, withReadingsQuery, type Reading } from "./chart/readings";
import { topLegend, zoomControls } from "./chart/zoomable";

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

const SensorChart = withReadingsQuery(Chart, 30_000);
export default SensorChart;

function Chart({ sensorId, kind, units, timeZone }: Props) {
  const [range, setRange] = useState<(typeof ranges)[number]>(ranges[1]);
  const [live, setLive] = useState<Reading[]>([]);
  const [anchor, setAnchor] = useState(() => Date.now());
  const query = useQuery({
    queryKey: ["readings", sensorId, range.key, anchor],
    queryFn: () => fetchReadings(sensorId, anchor - range.ms, anchor, 1500),
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

  const theme = readChartTheme();
  const watched = kind === "bag" || kind === "embedded";
  const short = range.ms <= 24 * 3_600_000;
  const fmt = plantTimeFormat(
    timeZone,
    short ? { hour: "numeric", minute: "2-digit" } : { month: "short", day: "numeric" },
  );

  const option = {
    ...chartBase(theme),
    grid: { left: 48, right: 44, top: 64, bottom: 70 },
    legend: topLegend(theme),
    tooltip: axisTooltip(timeZone, (v) => (typeof v === "number" ? v.toFixed(1) : String(v))),
    xAxis: timeAxis(theme, fmt, { splitNumber: 4 }),
    yAxis: [
      valueAxis(
        theme,
        unit,
        // Keep the cold limit in view: it is the one a night shift must see coming.
        watched
          ? { min: (v: { min: number }) => Math.floor(Math.min(v.min, t(CURE_MIN_TEMP_C)) - 2) }
          : {},
      ),
      valueAxis(theme, "% RH", { scale: false, min: 0, max: 100, splitLine: { show: false } }),
    ],
    dataZoom: zoomControls(theme, { bottom: 12 }),
    series: [
      {
        name: `Temperature (${unit})`,
        type: "line",
        showSymbol: false,
        lineStyle: { width: 2, color: theme.accent },
        itemStyle: { color: theme.accent },
        data: data.map((r) => [Date.parse(r.ts), Number(t(r.temp_c).toFixed(2))]),
        markLine: watched
          ? markLines(
              [
                limitLine(
                  `min ${t(CURE_MIN_TEMP_C).toFixed(0)} ${unit}`,
                  t(CURE_MIN_TEMP_C),
                  theme.alarm,
                  { position: "insideEndTop" },
                ),
                limitLine(
                  `max ${t(CURE_MAX_TEMP_C).toFixed(0)} ${unit}`,
                  t(CURE_MAX_TEMP_C),
                  theme.alarm,
                  { position: "insideEndTop" },
                ),
              ],
              { silent: false },
            )
          : undefined,
      },
      {
        name: "Humidity (% RH)",
        type: "line",
        yAxisIndex: 1,
        showSymbol: false,
        lineStyle: { width: 1.5, color: theme.warn, type: "solid" },
        itemStyle: { color: theme.warn },
        data: data.filter((r) => r.rh !== null).map((r) => [Date.parse(r.ts), r.rh]),
        markLine:
          kind === "bag"
            ? markLines(
                [
                  limitLine(
                    `moist ≥ ${MOIST_CURE_MIN_RH_PCT} %`,
                    MOIST_CURE_MIN_RH_PCT,
                    theme.warn,
                    { position: "insideStartTop" },
                  ),
                ],
                { silent: false },
              )
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
      <ChartCanvas option={option} height={380} testId="sensor-chart" />
      <p className="hint mt-2">
        Drag the slider or pinch to zoom. Dashed lines are the limits that apply to this sensor.
      </p>
    </div>
  );
}
