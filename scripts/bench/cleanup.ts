/**
 * Everything the bench starts that must not outlive it: child processes and temporary
 * folders. On a normal exit, an error, Ctrl-C or SIGTERM the children are killed (by their
 * own ids) and the folders removed.
 */
import type { ChildProcess } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";

const children = new Set<ChildProcess>();
const folders = new Set<string>();
let stopping = false;

/** Tracks a child until it exits. Once the bench is stopping, a new child is killed at once. */
export function track(child: ChildProcess): ChildProcess {
  if (stopping) {
    child.kill("SIGKILL");
    throw new Error("the bench is stopping");
  }
  children.add(child);
  child.once("exit", () => children.delete(child));
  return child;
}

/** A new temporary folder, removed when the bench ends. */
export function tempFolder(prefix: string): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), `plinth-bench-${prefix}-`));
  folders.add(dir);
  return dir;
}

/** Removes a temporary folder now (its database files with it). */
export function removeFolder(dir: string): void {
  fs.rmSync(dir, { recursive: true, force: true });
  folders.delete(dir);
}

function killAll(): void {
  for (const child of children) {
    if (child.exitCode === null && child.signalCode === null) child.kill("SIGKILL");
  }
  children.clear();
}

function removeAll(): void {
  for (const dir of folders) fs.rmSync(dir, { recursive: true, force: true });
  folders.clear();
}

/** Asks every child to stop (SIGTERM: Plinth closes its database), waiting up to `graceMs`. */
async function stopAll(graceMs: number): Promise<void> {
  const running = [...children].filter((c) => c.exitCode === null && c.signalCode === null);
  const exits = running.map((c) => new Promise<void>((resolve) => c.once("exit", () => resolve())));
  for (const c of running) c.kill("SIGTERM");
  await Promise.race([Promise.all(exits), new Promise((resolve) => setTimeout(resolve, graceMs))]);
}

/** Installs the exit and signal handlers. Call once, first. */
export function installCleanup(): void {
  process.once("exit", () => {
    killAll();
    removeAll();
  });
  for (const signal of ["SIGINT", "SIGTERM"] as const) {
    process.once(signal, () => {
      stopping = true;
      process.stderr.write(`\nbench: ${signal}, stopping the processes it started…\n`);
      void stopAll(3_000).finally(() => process.exit(signal === "SIGINT" ? 130 : 143));
    });
  }
}
