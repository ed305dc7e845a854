import ReactEChartsCore from "echarts-for-react/esm/core";
import { echarts } from "./echartsBase";

interface Props {
  option: object;
  /** The canvas's height in px; it takes the card's full width. */
  height: number;
  /** The card's data-testid, by which the tests find the chart. */
  testId: string;
  onChartReady?: (instance: echarts.ECharts) => void;
}

/** One chart on a card: the option drawn on a canvas, replaced whole when it changes. */
export default function ChartCanvas({ option, height, testId, onChartReady }: Props) {
  return (
    <div className="card p-2" data-testid={testId}>
      <ReactEChartsCore
        echarts={echarts}
        option={option}
        notMerge
        style={{ height, width: "100%" }}
        opts={{ renderer: "canvas" }}
        {...(onChartReady ? { onChartReady } : {})}
      />
    </div>
  );
}
