import { useEffect, useMemo, useState } from "react";
import { readChartTheme, type ChartTheme } from "./echartsBase";

/**
 * The theme's colours, read again when the page's theme changes (the switch sets data-theme;
 * "Auto" follows the system's dark mode), so a chart drawn once can follow it.
 */
export function useChartTheme(): ChartTheme {
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
  // The key names the theme in force: a new one means new colours.
  return useMemo(() => readChartTheme(), [key]);
}
