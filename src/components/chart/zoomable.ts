/**
 * The parts of a long chart: a legend naming its series and zooming (pinch or wheel on the plot,
 * a slider along the bottom). Registered here, apart from the shared base, so the charts without
 * them do not load them.
 */
import { DataZoomComponent, LegendComponent } from "echarts/components";
import { echarts, type ChartTheme } from "./echartsBase";

echarts.use([DataZoomComponent, LegendComponent]);

/** The legend along the top; `scroll` pages it when the series do not fit on a line. */
export function topLegend(theme: ChartTheme, o: { scroll: boolean } = { scroll: false }) {
  return o.scroll
    ? {
        type: "scroll",
        top: 0,
        textStyle: { color: theme.ink },
        pageTextStyle: { color: theme.ink },
      }
    : { top: 0, textStyle: { color: theme.ink } };
}

/**
 * Zoom inside the plot and by a slider `bottom` px above the chart's foot; `hideLabels` leaves
 * the slider's handles without their dates.
 */
export function zoomControls(theme: ChartTheme, o: { bottom: number; hideLabels?: boolean }) {
  return [
    { type: "inside" },
    {
      type: "slider",
      height: 22,
      bottom: o.bottom,
      textStyle: { color: theme.muted },
      ...(o.hideLabels ? { labelFormatter: "" } : {}),
    },
  ];
}
