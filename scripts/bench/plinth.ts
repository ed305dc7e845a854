/**
 * Starting the built Plinth for a benchmark: its own process (scripts/start.mjs, demo mode
 * only when asked), free loopback ports, a database the benchmark chose. Also the accounts a benchmark
 * needs, made the way an installer would: the first manager with scripts/user-create.ts,
 * then a gateway through the API.
 */
import { spawn } from "node:child_process";
import path from "node:path";
import { call, freePort, signIn } from "../../tests/helpers/server";
import { track } from "./cleanup";
import { cpuSeconds, peakRssMib, rssMib } from "./proc";
import { say } from "./progress";

export const root = path.resolve(import.meta.dirname, "..", "..");

export interface Manager {
  email: string;
  password: string;
}

export interface Gateway {
  name: string;
  key: string;
}

export interface BenchPlinth {
  url: string;
  mqttPort: number;
  pid: number;
  dbPath: string;
  /** The last lines Plinth wrote (for error reports). */
  output: () => string;
  /** The process's peak resident memory so far, in MiB (from /proc; NaN where absent). */
  peakRssMib: () => number;
  /** Resident memory once healthy, before the benchmark's work, in MiB. */
  rssAtStartMib: number;
  /** CPU seconds the process has used so far (from /proc; NaN where absent). */
  cpuSeconds: () => number;
  /** True until the process exits. */
  alive: () => boolean;
  /** SIGTERM, then wait for the exit (Plinth checkpoints the WAL and closes the database). */
  stop: () => Promise<void>;
}

const KEEP_OUTPUT_CHARS = 16_000;

/** The manager account every bench database has. The databases are throwaway and local. */
export const benchManager: Manager = {
  email: "bench-manager@example.com",
  password: "bench-plinth-pass-0001",
};

/**
 * Runs one of the project's own TypeScript scripts (scripts/<name>.ts, as `npm run` would
 * through tsx) on the database at `dbPath`, in a child process the bench tracks, so Ctrl-C
 * meanwhile still cleans up. Throws with its output when it fails.
 */
async function runProjectScript(
  name: string,
  args: string[],
  dbPath: string,
  input = "",
): Promise<void> {
  const script = path.join(root, "scripts", `${name}.ts`);
  const child = track(
    spawn(process.execPath, ["--import", "tsx", script, ...args], {
      cwd: root,
      env: { ...process.env, DATABASE_PATH: dbPath, LOG_LEVEL: "warn" },
      stdio: ["pipe", "pipe", "pipe"],
    }),
  );
  let out = "";
  child.stdout!.on("data", (d: Buffer) => (out += d.toString("utf8")));
  child.stderr!.on("data", (d: Buffer) => (out += d.toString("utf8")));
  child.stdin!.end(input);
  const code = await new Promise<number | null>((resolve) => child.once("exit", resolve));
  if (code !== 0) throw new Error(`scripts/${name}.ts failed (${code}):\n${out}`);
}

/** Creates a manager in the database at `dbPath` (migrating it first) with scripts/user-create.ts. */
export function createManager(dbPath: string, manager: Manager = benchManager): Promise<void> {
  const args = ["--email", manager.email, "--role", "manager", "--password-stdin"];
  return runProjectScript("user-create", args, dbPath, `${manager.password}\n`);
}

/** Applies Plinth's pending migrations to the database at `dbPath` with scripts/migrate.ts. */
export function migrate(dbPath: string): Promise<void> {
  return runProjectScript("migrate", [], dbPath);
}

async function waitHealthy(
  url: string,
  isAlive: () => boolean,
  output: () => string,
): Promise<void> {
  const deadline = Date.now() + 120_000;
  for (;;) {
    if (!isAlive()) throw new Error(`Plinth exited while starting:\n${output()}`);
    try {
      const res = await fetch(`${url}/api/health`);
      if (res.status === 200) return;
    } catch {
      // not listening yet
    }
    if (Date.now() > deadline)
      throw new Error(`Plinth did not become healthy in 120 s:\n${output()}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

export interface StartOptions {
  /** Demo mode (`--demo`): the demo plant is seeded into an empty database, the notice fakes run. */
  demo?: boolean;
  /** More environment for Plinth (e.g. PLINTH_SIMULATOR=0). */
  env?: Record<string, string>;
}

/**
 * Starts the built server on `dbPath` (no demo data unless `options.demo`) and waits until
 * /api/health answers 200.
 */
export async function startPlinth(
  dbPath: string,
  options: StartOptions = {},
): Promise<BenchPlinth> {
  const port = await freePort();
  const mqttPort = await freePort();
  let out = "";
  const args = [path.join(root, "scripts", "start.mjs"), ...(options.demo ? ["--demo"] : [])];
  const child = track(
    spawn(process.execPath, args, {
      cwd: root,
      env: {
        ...process.env,
        NODE_ENV: "production",
        PLINTH_SKIP_BUILD: "1",
        HOST: "127.0.0.1",
        PORT: String(port),
        MQTT_PORT: String(mqttPort),
        DATABASE_PATH: dbPath,
        LOG_LEVEL: "warn",
        ...options.env,
      },
      stdio: ["ignore", "pipe", "pipe"],
    }),
  );
  const keep = (d: Buffer) => {
    out = (out + d.toString("utf8")).slice(-KEEP_OUTPUT_CHARS);
  };
  child.stdout!.on("data", keep);
  child.stderr!.on("data", keep);
  let healthy = false;
  const exited = new Promise<void>((resolve) =>
    child.once("exit", (code, signal) => {
      // Said at once: a step waiting on Plinth would otherwise fail with less to go on. A
      // stop asked for ends with SIGTERM handled, i.e. code 0.
      const clean = code === 0 || signal === "SIGTERM";
      if (healthy && !clean) {
        say(
          `Plinth exited unexpectedly (${signal ?? `code ${code}`}); its last output:\n${out.slice(-3_000)}`,
        );
      }
      resolve();
    }),
  );
  const url = `http://127.0.0.1:${port}`;
  const alive = () => child.exitCode === null && child.signalCode === null;
  try {
    await waitHealthy(url, alive, () => out);
    healthy = true;
  } catch (err) {
    if (alive()) child.kill("SIGKILL");
    throw err;
  }
  return {
    url,
    mqttPort,
    pid: child.pid!,
    dbPath,
    output: () => out,
    peakRssMib: () => peakRssMib(child.pid!),
    rssAtStartMib: rssMib(child.pid!),
    cpuSeconds: () => cpuSeconds(child.pid!),
    alive,
    stop: async () => {
      if (alive()) child.kill("SIGTERM");
      await exited;
    },
  };
}

/**
 * Waits until Plinth's start-up work is done (its first roll-up pass, which also loads each
 * sensor's recent chart rows into SQLite's cache): until it has used under 20 ms of CPU in a
 * second, at most `maxMs`. Returns the ms waited.
 */
export async function waitSettled(plinth: BenchPlinth, maxMs = 60_000): Promise<number> {
  const t0 = Date.now();
  let last = plinth.cpuSeconds();
  let quietSince = Date.now();
  while (Date.now() - t0 < maxMs) {
    await new Promise((r) => setTimeout(r, 200));
    const now = plinth.cpuSeconds();
    if (Number.isNaN(now)) return Date.now() - t0;
    if (now - last > 0.02 * 0.2) quietSince = Date.now();
    last = now;
    if (Date.now() - quietSince >= 1_000) return Date.now() - t0;
  }
  return Date.now() - t0;
}

/** Signs the bench manager in; returns the session cookie ("name=value"). */
export function signInManager(
  plinth: BenchPlinth,
  manager: Manager = benchManager,
): Promise<string> {
  return signIn(plinth.url, manager.email, manager.password);
}

/** Adds a gateway through POST /api/v1/gateways; its key is answered only this once. */
export async function createGateway(
  plinth: BenchPlinth,
  cookie: string,
  name: string,
): Promise<Gateway> {
  const res = await call(plinth.url, cookie, "/api/v1/gateways", {
    method: "POST",
    headers: { "content-type": "application/json" },
    body: JSON.stringify({ name }),
  });
  if (res.status !== 201)
    throw new Error(`POST /api/v1/gateways answered ${res.status}: ${await res.text()}`);
  const body = (await res.json()) as { name: string; key: string };
  return { name: body.name, key: body.key };
}
