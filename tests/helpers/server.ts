import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import net from "node:net";
import os from "node:os";
import path from "node:path";

const root = path.resolve(import.meta.dirname, "..", "..");

/** A free TCP port on loopback. */
export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = net.createServer();
    srv.unref();
    srv.on("error", reject);
    srv.listen(0, "127.0.0.1", () => {
      const { port } = srv.address() as net.AddressInfo;
      srv.close(() => resolve(port));
    });
  });
}

export interface RunningPlinth {
  url: string;
  port: number;
  mqttPort: number;
  dir: string;
  dbPath: string;
  output: () => string;
  /** SIGTERM and wait for exit. */
  stop: () => Promise<void>;
  /** SIGKILL: the process dies with no chance to clean up. */
  kill: () => Promise<void>;
}

export interface StartOptions {
  demo?: boolean;
  env?: Record<string, string>;
  /** Reuse a folder (and its database) from an earlier run. */
  dir?: string;
}

/**
 * Starts the built server in its own process, on free loopback ports, with a temporary database.
 * A port found free can be taken by another test's process before Plinth binds it: a start
 * that fails on EADDRINUSE is tried again on new ports (three tries in all).
 */
export async function startPlinth(options: StartOptions = {}): Promise<RunningPlinth> {
  const dir = options.dir ?? fs.mkdtempSync(path.join(os.tmpdir(), "plinth-test-"));
  for (let attempt = 1; ; attempt++) {
    try {
      return await startOnce(options, dir);
    } catch (err) {
      if (attempt >= 3 || !(err instanceof Error) || !err.message.includes("EADDRINUSE")) throw err;
    }
  }
}

async function startOnce(options: StartOptions, dir: string): Promise<RunningPlinth> {
  const dbPath = path.join(dir, "plinth.db");
  const port = await freePort();
  const mqttPort = await freePort();
  let out = "";
  const child: ChildProcess = spawn(
    process.execPath,
    [path.join(root, "scripts", "start.mjs"), ...(options.demo === false ? [] : ["--demo"])],
    {
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
        // The demo's live feed would race the tests' own readings.
        PLINTH_SIMULATOR: "0",
        ...options.env,
      },
      stdio: ["ignore", "pipe", "pipe"],
    },
  );
  child.stdout!.on("data", (d) => (out += d));
  child.stderr!.on("data", (d) => (out += d));
  const exited = new Promise<void>((resolve) => child.once("exit", () => resolve()));
  const url = `http://127.0.0.1:${port}`;

  const deadline = Date.now() + 60_000;
  for (;;) {
    if (child.exitCode !== null) throw new Error(`Plinth exited while starting:\n${out}`);
    // Healthy, and this child says it is the one listening (not another test's server that
    // took the port first).
    try {
      const res = await fetch(`${url}/api/health`);
      if (res.status === 200 && out.includes(`serving on ${url}`)) break;
    } catch {
      // not listening yet
    }
    if (Date.now() > deadline) {
      child.kill("SIGKILL");
      throw new Error(`Plinth did not become healthy in 60 s:\n${out}`);
    }
    await new Promise((r) => setTimeout(r, 100));
  }

  return {
    url,
    port,
    mqttPort,
    dir,
    dbPath,
    output: () => out,
    stop: async () => {
      if (child.exitCode === null) child.kill("SIGTERM");
      await exited;
    },
    kill: async () => {
      if (child.exitCode === null) child.kill("SIGKILL");
      await exited;
    },
  };
}

export const DEMO_PASSWORD = "demo-plinth-pass";
export const demoEmail = (role: string) => `${role}@example.com`;

/** Signs in through the API and returns the session cookie ("name=value"). */
export async function signIn(
  url: string,
  email: string,
  password = DEMO_PASSWORD,
): Promise<string> {
  const res = await fetch(`${url}/api/auth/login`, {
    method: "POST",
    headers: { "content-type": "application/json" },
    body: JSON.stringify({ email, password }),
  });
  if (res.status !== 200) throw new Error(`sign-in of ${email} answered ${res.status}`);
  const cookie = res.headers.getSetCookie().find((c) => c.startsWith("plinth_session="));
  if (!cookie) throw new Error("no session cookie");
  return cookie.split(";")[0]!;
}

/** fetch with the session cookie, same-origin, never following redirects. */
export function call(
  url: string,
  cookie: string | null,
  pathName: string,
  init: RequestInit = {},
): Promise<Response> {
  const headers = new Headers(init.headers);
  if (cookie) headers.set("cookie", cookie);
  if (init.method && init.method !== "GET") headers.set("origin", url);
  return fetch(`${url}${pathName}`, { ...init, headers, redirect: "manual" });
}
