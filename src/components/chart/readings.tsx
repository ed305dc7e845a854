import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import type { ComponentType } from "react";

/** One reading as the readings endpoint sends it (SI). */
export interface Reading {
  ts: string;
  temp_c: number;
  rh: number | null;
}

/** A sensor's readings from `fromMs` to `toMs`, thinned by the server to at most `maxPoints`. */
export async function fetchReadings(
  sensorId: string,
  fromMs: number,
  toMs: number,
  maxPoints: number,
): Promise<Reading[]> {
  const res = await fetch(
    `/api/v1/sensors/${encodeURIComponent(sensorId)}/readings?from=${fromMs}&to=${toMs}&max_points=${maxPoints}`,
  );
  if (!res.ok) throw new Error(`The server answered ${res.status}.`);
  return ((await res.json()) as { readings: Reading[] }).readings;
}

/**
 * An island that asks for readings: `Inner` with its own query cache, where an answer stays
 * fresh for `staleTimeMs` and is not fetched again when the window regains focus.
 */
export function withReadingsQuery<P extends object>(Inner: ComponentType<P>, staleTimeMs: number) {
  const queryClient = new QueryClient({
    defaultOptions: { queries: { refetchOnWindowFocus: false, staleTime: staleTimeMs } },
  });
  return function WithReadingsQuery(props: P) {
    return (
      <QueryClientProvider client={queryClient}>
        <Inner {...props} />
      </QueryClientProvider>
    );
  };
}
