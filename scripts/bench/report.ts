/** The bench table on standard output, and bench-results/latest.json. */
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { resultsDir } from "./chart-db";
import { root } from "./plinth";
import { formatFigure, type BenchResult } from "./result";

const header = ["benchmark", "figure", "limit (same run)", "ratio", "target", "pass"] as const;

function cells(r: BenchResult): string[] {
  const limit = Number.isFinite(r.limit)
    ? `${formatFigure(r.limit, r.unit)} (${r.limitLabel})`
    : "n/a";
  const ratio = Number.isFinite(r.ratio) ? r.ratio.toFixed(3) : "n/a";
  return [r.name, formatFigure(r.figure, r.unit), limit, ratio, r.target, r.pass ? "yes" : "NO"];
}

/** The results as a Markdown-style table. */
export function table(results: readonly BenchResult[]): string {
  const rows = [[...header], ...results.map(cells)];
  const widths = header.map((_, i) => Math.max(...rows.map((r) => r[i]!.length)));
  const line = (r: string[]) => `| ${r.map((c, i) => c.padEnd(widths[i]!)).join(" | ")} |`;
  const rule = `| ${widths.map((w) => "-".repeat(w)).join(" | ")} |`;
  return [line(rows[0]!), rule, ...rows.slice(1).map(line)].join("\n");
}

/** Notes under the table: what failed and why, and each Plinth's peak memory. */
export function notes(results: readonly BenchResult[]): string {
  const out: string[] = [];
  for (const r of results) {
    if (typeof r.details.error === "string")
      out.push(`${r.name}: failed to run: ${r.details.error.split("\n")[0]}`);
    if (typeof r.details.note === "string") out.push(`${r.name}: ${r.details.note}`);
    if (typeof r.details.warning === "string") out.push(`${r.name}: ${r.details.warning}`);
  }
  const busy = results.filter(
    (r) => typeof r.details.other_work_cpus === "number" && r.details.other_work_cpus > 0.25,
  );
  if (busy.length > 0) {
    const worst = Math.max(...busy.map((r) => r.details.other_work_cpus as number));
    out.push(
      `note: other work on this ${os.cpus().length}-CPU machine kept up to ${worst.toFixed(2)} CPUs busy during ${[...new Set(busy.map((r) => r.name.replace(/-(median|worst)$/, "")))].join(", ")}; ` +
        "wall-clock figures are noisy (CPU-time cross-checks are in the JSON)",
    );
  }
  const seen = new Set<string>();
  for (const r of results) {
    const peak = r.details.plinth_peak_rss_mib;
    const start = r.details.plinth_rss_at_start_mib;
    const key = r.name.replace(/-(median|worst)$/, "");
    if (typeof peak === "number" && Number.isFinite(peak) && !seen.has(key)) {
      seen.add(key);
      const after =
        typeof start === "number" && Number.isFinite(start)
          ? `${start.toFixed(0)} MiB once started, `
          : "";
      out.push(`${key}: Plinth resident memory ${after}${peak.toFixed(0)} MiB at peak`);
    }
  }
  return out.join("\n");
}

function gitCommit(): string | null {
  try {
    return execFileSync("git", ["rev-parse", "--short", "HEAD"], {
      cwd: root,
      encoding: "utf8",
      stdio: ["ignore", "pipe", "ignore"],
    }).trim();
  } catch {
    return null;
  }
}

/** Writes bench-results/latest.json; returns its path. */
export function writeJson(
  results: readonly BenchResult[],
  run: { quick: boolean; startedAt: Date; only: readonly string[] },
): string {
  fs.mkdirSync(resultsDir, { recursive: true });
  const file = path.join(resultsDir, "latest.json");
  const finite = (v: number) => (Number.isFinite(v) ? v : null);
  const body = {
    started_at: run.startedAt.toISOString(),
    finished_at: new Date().toISOString(),
    mode: run.quick ? "quick" : "full",
    only: run.only,
    commit: gitCommit(),
    node: process.version,
    cpus: os.cpus().length,
    cpu_model: os.cpus()[0]?.model ?? null,
    memory_gib: Math.round(os.totalmem() / 2 ** 30),
    all_pass: results.every((r) => r.pass),
    results: results.map((r) => ({
      ...r,
      figure: finite(r.figure),
      limit: finite(r.limit),
      ratio: finite(r.ratio),
    })),
  };
  fs.writeFileSync(file, `${JSON.stringify(body, null, 2)}\n`);
  return file;
}
