/**
 * Benchmarks that time Plinth's own functions in-process (strength, history) run them in a
 * worker: a child `node --import tsx` with DATABASE_PATH on a fresh file in a temporary
 * folder, so Plinth's one database handle, its caches and its environment belong to that run
 * alone. The worker's progress lines come through to the bench's; its figures come back as
 * JSON in a file.
 */
import { spawn } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { removeFolder, tempFolder, track } from "./cleanup";
import { root } from "./plinth";
import { say } from "./progress";

const KEEP_OUTPUT_CHARS = 8_000;

/**
 * Runs `scripts/bench/<name>.ts` as a worker with `input` as its job; resolves with what it
 * answered. The folder (database and all) is removed afterwards.
 */
export async function runWorker<In, Out>(name: string, input: In): Promise<Out> {
  const dir = tempFolder(name);
  const outFile = path.join(dir, "answer.json");
  const child = track(
    spawn(
      process.execPath,
      [
        // The worker collects garbage before each timed step, so neither side pays for the
        // other's leftovers.
        "--expose-gc",
        "--import",
        "tsx",
        path.join(root, "scripts", "bench", `${name}.ts`),
        outFile,
      ],
      {
        cwd: root,
        env: {
          ...process.env,
          NODE_ENV: "production",
          DATABASE_PATH: path.join(dir, "plinth.db"),
          LOG_LEVEL: "warn",
        },
        stdio: ["pipe", "pipe", "pipe"],
      },
    ),
  );
  let tail = "";
  let partial = "";
  const keep = (text: string) => {
    tail = (tail + text).slice(-KEEP_OUTPUT_CHARS);
  };
  child.stdout!.on("data", (d: Buffer) => keep(d.toString("utf8")));
  child.stderr!.on("data", (d: Buffer) => {
    const text = d.toString("utf8");
    keep(text);
    const lines = (partial + text).split("\n");
    partial = lines.pop() ?? "";
    for (const line of lines) if (line.trim()) say(`  ${line}`);
  });
  child.stdin!.end(JSON.stringify(input));
  try {
    const code = await new Promise<number | null>((resolve) => child.once("exit", resolve));
    if (code !== 0 || !fs.existsSync(outFile))
      throw new Error(`the ${name} worker failed (exit ${code}):\n${tail}`);
    return JSON.parse(fs.readFileSync(outFile, "utf8")) as Out;
  } finally {
    removeFolder(dir);
  }
}

/** In a worker: a full garbage collection before a timed step (a no-op without --expose-gc). */
export function collectGarbage(): void {
  (globalThis as { gc?: () => void }).gc?.();
}

/** In a worker: one progress line (the bench shows it with its own clock). */
export function tell(message: string): void {
  process.stderr.write(`${message}\n`);
}

/**
 * In a worker: reads the job from standard input, runs it, writes the answer where the bench
 * asked, and exits (1 with the error on standard error when the job threw).
 */
export async function workerMain<In, Out>(job: (input: In) => Promise<Out>): Promise<void> {
  const outFile = process.argv[2];
  if (!outFile) throw new Error("a bench worker needs the answer file as its argument");
  let text = "";
  for await (const chunk of process.stdin) text += String(chunk);
  try {
    const answer = await job(JSON.parse(text) as In);
    fs.writeFileSync(outFile, JSON.stringify(answer));
    process.exit(0);
  } catch (err) {
    process.stderr.write(`${err instanceof Error ? (err.stack ?? err.message) : String(err)}\n`);
    process.exit(1);
  }
}
