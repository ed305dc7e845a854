import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import net from "node:net";
import os from "node:os";
import path from "node:path";
import { freePort } from "./server";

export const MOSQUITTO_PATH = process.env.MOSQUITTO_PATH ?? "/usr/sbin/mosquitto";

/** True when Debian's mosquitto is installed. In CI its absence is a failure, not a skip. */
export function mosquittoAvailable(): boolean {
  const ok = fs.existsSync(MOSQUITTO_PATH);
  if (!ok && process.env.CI === "true") {
    throw new Error(
      `mosquitto is required in CI but ${MOSQUITTO_PATH} is missing (apt-get install -y mosquitto).`,
    );
  }
  return ok;
}

export interface RunningMosquitto {
  port: number;
  /** Holds the configuration and, in data/, the broker's persistence file. */
  dir: string;
  url: string;
  output: () => string;
  /** SIGKILL: the broker dies without saving; only what it autosaved survives. */
  kill: () => Promise<void>;
  /** SIGTERM: the broker saves its persistence file and exits. */
  stop: () => Promise<void>;
  /** Starts the broker again on the same port with the same persistence folder. */
  restart: () => Promise<void>;
}

export interface MosquittoOptions {
  port?: number;
  dir?: string;
}

/** The uid and gid of the `mosquitto` user, which the broker drops to when started as root. */
function mosquittoUser(): { uid: number; gid: number } | null {
  const line = fs
    .readFileSync("/etc/passwd", "utf8")
    .split("\n")
    .find((l) => l.startsWith("mosquitto:"));
  if (!line) return null;
  const [, , uid, gid] = line.split(":");
  return { uid: Number(uid), gid: Number(gid) };
}

/** Resolves once something accepts TCP connections on 127.0.0.1:port. */
function acceptsConnections(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = net.connect({ host: "127.0.0.1", port });
    socket.once("connect", () => {
      socket.destroy();
      resolve(true);
    });
    socket.once("error", () => resolve(false));
  });
}

/**
 * Starts Debian's mosquitto as a real external broker on a loopback port, with persistence
 * in a temporary folder (saved every second), and waits until the port accepts connections.
 * Started as root, mosquitto drops to the `mosquitto` user, so the folder is handed to it.
 */
export async function startMosquitto(options: MosquittoOptions = {}): Promise<RunningMosquitto> {
  const port = options.port ?? (await freePort());
  const dir = options.dir ?? fs.mkdtempSync(path.join(os.tmpdir(), "plinth-mosquitto-"));
  const dataDir = path.join(dir, "data");
  fs.mkdirSync(dataDir, { recursive: true });
  const confPath = path.join(dir, "mosquitto.conf");
  fs.writeFileSync(
    confPath,
    [
      `listener ${port} 127.0.0.1`,
      "allow_anonymous true",
      "persistence true",
      `persistence_location ${dataDir}/`,
      "autosave_interval 1",
      "log_dest stderr",
      "log_type error",
      "log_type warning",
      "",
    ].join("\n"),
  );
  if (process.getuid?.() === 0) {
    const user = mosquittoUser();
    if (!user)
      throw new Error("running as root, but there is no `mosquitto` user to hand the folder to");
    for (const p of [dir, dataDir, confPath]) fs.chownSync(p, user.uid, user.gid);
    for (const f of fs.readdirSync(dataDir))
      fs.chownSync(path.join(dataDir, f), user.uid, user.gid);
  }

  let out = "";
  let child: ChildProcess | null = null;
  let exited: Promise<void> = Promise.resolve();

  const launch = async () => {
    const c = spawn(MOSQUITTO_PATH, ["-c", confPath], { stdio: ["ignore", "pipe", "pipe"] });
    child = c;
    c.stdout!.on("data", (d) => (out += d));
    c.stderr!.on("data", (d) => (out += d));
    exited = new Promise<void>((resolve) => c.once("exit", () => resolve()));
    const deadline = Date.now() + 15_000;
    for (;;) {
      if (c.exitCode !== null || c.signalCode !== null) {
        throw new Error(`mosquitto exited while starting:\n${out}`);
      }
      if (await acceptsConnections(port)) return;
      if (Date.now() > deadline) {
        c.kill("SIGKILL");
        throw new Error(`mosquitto did not accept connections on port ${port} in 15 s:\n${out}`);
      }
      await new Promise((r) => setTimeout(r, 50));
    }
  };

  const signal = async (sig: NodeJS.Signals) => {
    const c = child;
    if (c && c.exitCode === null && c.signalCode === null) c.kill(sig);
    await exited;
  };

  await launch();
  return {
    port,
    dir,
    url: `mqtt://127.0.0.1:${port}`,
    output: () => out,
    kill: () => signal("SIGKILL"),
    stop: () => signal("SIGTERM"),
    restart: async () => {
      await signal("SIGTERM");
      await launch();
    },
  };
}
