/** One row of the bench table, and how figures are shown. */

export interface BenchResult {
  /** Short id, e.g. "ingest-http". */
  name: string;
  /** What is measured, in words. */
  title: string;
  figure: number;
  unit: string;
  /** The same work without Plinth, measured in the same run. */
  limit: number;
  limitLabel: string;
  /** figure / limit. For a rate, the share of the bare rate reached; for a time, how many times the bare time. */
  ratio: number;
  /** The target in words, e.g. "ratio >= 0.5". */
  target: string;
  pass: boolean;
  /** Everything else worth keeping (samples, counts, memory). */
  details: Record<string, unknown>;
}

export function formatFigure(value: number, unit: string): string {
  if (!Number.isFinite(value)) return "n/a";
  if (unit === "ms") return `${value.toFixed(value < 10 ? 2 : 1)} ms`;
  return `${Math.round(value).toLocaleString("en-US")} ${unit}`;
}

/** A failed benchmark (it threw) as a table row. */
export function failedResult(name: string, title: string, err: unknown): BenchResult {
  const message = err instanceof Error ? err.message : String(err);
  return {
    name,
    title,
    figure: Number.NaN,
    unit: "",
    limit: Number.NaN,
    limitLabel: "",
    ratio: Number.NaN,
    target: "ran to the end",
    pass: false,
    details: { error: message.slice(0, 4_000) },
  };
}
