/**
 * The plant simulator as a function: start it, switch faults while it runs, stop it.
 * The command line (cli.ts) and the demo both start it here.
 *
 *   const sim = startSimulator({ transport: "mqtt", demoNowMs });
 *   sim.toggleFault("dry-bag:CB-14");
 *   await sim.stop();
 *
 * Simulated time runs `speed` times faster than the wall clock from `startMs`, but never ahead
 * of the wall clock when it started behind it (Plinth refuses readings more than ten minutes in
 * its future): started in the past with a high speed, the simulator sends a backlog quickly,
 * then keeps to the clock. A round is one reading from every sensor, `intervalS` apart.
 */
import { createInterface } from "node:readline";
import type { Readable } from "node:stream";
import { createEngine, selectSensors } from "./engine";
import {
  describeFaults,
  formatFault,
  parseFault,
  parseFaults,
  switchFault,
  type Fault,
} from "./faults";
import { demoPours, demoSensors, type DemoSensor } from "./plant";
import { createHttpTransport } from "./transport/http";
import { createMqttTransport } from "./transport/mqtt";
import type { Transport, TransportStats } from "./transport/types";
import type { Units } from "./wire";

export const SIMULATOR_DEFAULTS = {
  transport: "mqtt" as "mqtt" | "http",
  mqttUrl: "mqtt://127.0.0.1:1883",
  httpUrl: "http://localhost:4321",
  gateway: "demo-gateway",
  key: "demo-gateway-key-0001",
  intervalS: 60,
  speed: 1,
  units: "c" as Units,
  httpBatch: 500,
  mqttBatch: 1,
  statusEveryS: 10,
  drainMs: 5_000,
  maxQueue: 50_000,
};

export interface SimulatorOptions {
  transport?: "mqtt" | "http";
  mqttUrl?: string;
  httpUrl?: string;
  /** Gateway name (the MQTT username) and key (MQTT password, HTTP bearer token). */
  gateway?: string;
  key?: string;
  /** Simulated seconds between rounds. */
  intervalS?: number;
  /** How much faster than the wall clock simulated time runs. */
  speed?: number;
  /** `--sensors` text (ids and globs, comma-separated) or the sensors themselves; all by default. */
  sensors?: string | readonly DemoSensor[];
  /** Readings a message (see the CLI help); 500 over HTTP and 1 over MQTT by default. */
  batch?: number;
  units?: Units;
  /** One round, then stop once it is delivered. */
  once?: boolean;
  /** Faults switched on at the start: `--faults` text or parsed faults. */
  faults?: string | readonly Fault[];
  /** Where simulated time starts, epoch ms; the wall clock by default. */
  startMs?: number;
  /** The demo plant's "now" its pours are cast relative to; the wall clock at start by default. */
  demoNowMs?: number;
  seed?: number;
  /** A status line this often, in seconds of wall clock; 0 for none. */
  statusEveryS?: number;
  /** On stop, how long to keep sending what is queued. */
  drainMs?: number;
  maxQueue?: number;
  /** Where lines go (status, connection news, fault switches); console.log by default. */
  log?: (line: string) => void;
  /** A stream of run-time commands, a line each (the CLI passes stdin); none by default. */
  control?: Readable;
  /** The wall clock, for tests. */
  clock?: () => number;
}

export interface SimulatorReport extends TransportStats {
  transport: "mqtt" | "http";
  rounds: number;
  /** The simulated time of the last round, epoch ms, or null before the first. */
  lastRoundMs: number | null;
  faults: string[];
}

export interface StopResult {
  report: SimulatorReport;
  /** Items still queued or unacknowledged when the simulator let go. */
  undelivered: number;
  /** Why it stopped by itself, when it did (a refused key). */
  fatal: string | null;
}

export interface Simulator {
  /** Stops new rounds, sends what is queued (up to `drainMs`), closes the connection. */
  stop(options?: { drainMs?: number }): Promise<StopResult>;
  /** Settles when the simulator has stopped, by `stop()`, after `once`, or on a fatal error. */
  readonly done: Promise<StopResult>;
  /** Switches a fault written as on the command line; returns the faults now on. */
  switchFault(spec: string, how?: "on" | "off" | "toggle"): string[];
  /** Switches every fault off (a dry bag is then re-wetted, a cold snap passes). */
  clearFaults(): void;
  faults(): string[];
  report(): SimulatorReport;
  statusLine(): string;
  /** Runs one run-time command line (see CONTROL_HELP); returns what it answers. */
  command(line: string): string;
}

export const CONTROL_HELP = [
  "While it runs, type a command and press Enter:",
  "  FAULT           switch a fault on, or off when it is on (e.g. dry-bag:CB-14, cold-snap:10)",
  "  +FAULT / -FAULT switch it on / off",
  "  clear           switch every fault off",
  "  faults          list the faults that are on",
  "  status          print the status line now",
  "  stop            send what is queued and stop (as Ctrl-C)",
].join("\n");

/**
 * The demo plant's "now" from one of its pours as Plinth stored it: the seed casts each pour
 * `castHoursAgo` hours before its "now", so the live feed continues the seeded history.
 */
export function demoNowFromPour(code: string, castAtMs: number): number {
  const pour = demoPours.find((p) => p.code === code);
  if (!pour) throw new Error(`no demo pour "${code}"`);
  return castAtMs + pour.castHoursAgo * 3_600_000;
}

function isoMinute(ms: number): string {
  return new Date(ms).toISOString().slice(0, 16) + "Z";
}

export function startSimulator(options: SimulatorOptions = {}): Simulator {
  const d = SIMULATOR_DEFAULTS;
  const clock = options.clock ?? Date.now;
  const log = options.log ?? ((line: string) => console.log(line));
  const kind = options.transport ?? d.transport;
  const sensors =
    typeof options.sensors === "string" || options.sensors === undefined
      ? selectSensors(options.sensors, demoSensors)
      : [...options.sensors];
  if (sensors.length === 0) throw new Error("no sensors to simulate");
  const intervalMs = Math.round((options.intervalS ?? d.intervalS) * 1000);
  if (!(intervalMs >= 1)) throw new Error("the interval must be a positive number of seconds");
  const speed = options.speed ?? d.speed;
  if (!(speed > 0)) throw new Error("the speed must be above 0");
  const realStart = clock();
  const startMs = options.startMs ?? realStart;
  const demoNowMs = options.demoNowMs ?? realStart;
  const holdToClock = startMs <= realStart;
  const faults0 =
    typeof options.faults === "string"
      ? parseFaults(options.faults, sensors)
      : [...(options.faults ?? [])];
  const engine = createEngine({ sensors, demoNowMs, seed: options.seed ?? 20_260_302 }, faults0);

  let fatal: string | null = null;
  let stopping: Promise<StopResult> | null = null;
  let stopped = false;
  let resolveDone!: (r: StopResult) => void;
  const done = new Promise<StopResult>((resolve) => (resolveDone = resolve));
  const events = {
    onEvent: (line: string) => log(`simulator: ${line}`),
    onFatal: (err: Error) => {
      if (fatal !== null) return;
      fatal = err.message;
      log(`simulator: ${err.message}`);
      void stop({ drainMs: 0 });
    },
  };
  const common = {
    key: options.key ?? d.key,
    units: options.units ?? d.units,
    maxQueue: options.maxQueue ?? d.maxQueue,
    ...events,
  };
  const transport: Transport =
    kind === "http"
      ? createHttpTransport({
          ...common,
          url: options.httpUrl ?? d.httpUrl,
          batch: options.batch ?? d.httpBatch,
        })
      : createMqttTransport({
          ...common,
          url: options.mqttUrl ?? d.mqttUrl,
          gateway: options.gateway ?? d.gateway,
          batch: options.batch ?? d.mqttBatch,
        });

  let nextTick = Math.floor(startMs / intervalMs) * intervalMs;
  let rounds = 0;
  let lastRoundMs: number | null = null;
  let timer: NodeJS.Timeout | undefined;

  /** Simulated time now. */
  const simNow = () => {
    const t = startMs + (clock() - realStart) * speed;
    return holdToClock ? Math.min(t, clock()) : t;
  };
  /** Wall-clock ms until simulated time reaches `t`. */
  const realDelayUntil = (t: number) => {
    const unheld = realStart + (t - startMs) / speed;
    return (holdToClock ? Math.max(unheld, t) : unheld) - clock();
  };

  function produce(): void {
    timer = undefined;
    if (stopping) return;
    const now = simNow();
    while (nextTick <= now && transport.room() > 0) {
      const items = engine.tick(nextTick);
      lastRoundMs = nextTick;
      rounds += 1;
      nextTick += intervalMs;
      transport.enqueue(items);
      if (options.once) {
        transport.enqueue(engine.flush());
        void transport.idle().then(() => stop());
        return;
      }
    }
    // Held back by a full queue: look again shortly; otherwise sleep until the next round is due.
    const wait = nextTick <= now ? 250 : realDelayUntil(nextTick);
    timer = setTimeout(produce, Math.min(Math.max(wait, 5), 60_000));
  }

  const statusEveryS = options.statusEveryS ?? d.statusEveryS;
  const statusTimer =
    statusEveryS > 0 ? setInterval(() => log(statusLine()), statusEveryS * 1000) : undefined;

  let rl: ReturnType<typeof createInterface> | undefined;
  if (options.control) {
    rl = createInterface({ input: options.control, terminal: false });
    rl.on("line", (line) => {
      const answer = command(line);
      if (answer) log(answer);
    });
  }

  function report(): SimulatorReport {
    return {
      ...transport.stats(),
      transport: kind,
      rounds,
      lastRoundMs,
      faults: engine.faults.map(formatFault),
    };
  }

  function statusLine(): string {
    const r = report();
    const at = r.lastRoundMs === null ? "no round yet" : isoMinute(r.lastRoundMs);
    const malformed = r.malformedSent > 0 ? ` · malformed ${r.malformedSent}` : "";
    const counts =
      kind === "http"
        ? `sent ${r.sent}${malformed} · accepted ${r.accepted} · duplicates ${r.duplicates} · rejected ${r.rejected} · queue ${r.queued + r.inFlight}`
        : `sent ${r.sent}${malformed} · acked ${r.acked} · in flight ${r.inFlight} · queue ${r.queued}`;
    const link = stopped
      ? "stopped"
      : r.connected
        ? "connected"
        : r.lastError
          ? `waiting: ${r.lastError}`
          : "connecting";
    const odd = r.malformedAccepted > 0 ? ` · ${r.malformedAccepted} malformed taken!` : "";
    const f = r.faults.length ? ` · faults ${r.faults.join(",")}` : "";
    return `simulator ${kind} · ${at} · ${counts}${odd} · ${link}${f}`;
  }

  function switchFaultSpec(spec: string, how: "on" | "off" | "toggle" = "toggle"): string[] {
    const fault = parseFault(spec, sensors);
    const before = new Set(engine.faults.map(formatFault));
    engine.faults = switchFault(engine.faults, fault, how);
    const after = engine.faults.map(formatFault);
    for (const f of after) if (!before.has(f)) log(`simulator: fault on: ${f}`);
    for (const f of before) if (!after.includes(f)) log(`simulator: fault off: ${f}`);
    return after;
  }

  function command(line: string): string {
    const text = line.trim();
    if (!text) return "";
    try {
      if (text === "help" || text === "?") return `${CONTROL_HELP}\nFaults:\n${describeFaults()}`;
      if (text === "status") return statusLine();
      if (text === "faults")
        return engine.faults.length
          ? `faults on: ${engine.faults.map(formatFault).join(", ")}`
          : "no faults on";
      if (text === "clear") {
        clearFaults();
        return "no faults on";
      }
      if (text === "stop" || text === "quit") {
        void stop();
        return "stopping: sending what is queued";
      }
      const how = text.startsWith("+") ? "on" : text.startsWith("-") ? "off" : "toggle";
      const on = switchFaultSpec(how === "toggle" ? text : text.slice(1), how);
      return on.length ? `faults on: ${on.join(", ")}` : "no faults on";
    } catch (err) {
      return `simulator: ${err instanceof Error ? err.message : String(err)} (type help for the commands)`;
    }
  }

  function clearFaults(): void {
    for (const f of engine.faults) log(`simulator: fault off: ${formatFault(f)}`);
    engine.faults = [];
  }

  function stop(opts: { drainMs?: number } = {}): Promise<StopResult> {
    if (stopping) return stopping;
    stopping = (async () => {
      if (timer) clearTimeout(timer);
      if (statusTimer) clearInterval(statusTimer);
      rl?.close();
      transport.enqueue(engine.flush());
      const { undelivered } = await transport.close({
        drainMs: opts.drainMs ?? options.drainMs ?? d.drainMs,
      });
      stopped = true;
      const result: StopResult = { report: report(), undelivered, fatal };
      if (statusEveryS > 0 || options.once) log(statusLine());
      if (undelivered > 0) log(`simulator: stopped with ${undelivered} readings not delivered`);
      resolveDone(result);
      return result;
    })();
    return stopping;
  }

  for (const f of engine.faults) log(`simulator: fault on: ${formatFault(f)}`);
  if (speed > 1 && holdToClock && startMs >= realStart) {
    log(
      "simulator: --speed matters only with --start in the past: simulated time never runs ahead of the clock",
    );
  }
  produce();

  return {
    stop,
    done,
    switchFault: switchFaultSpec,
    clearFaults,
    faults: () => engine.faults.map(formatFault),
    report,
    statusLine,
    command,
  };
}

export type { Fault } from "./faults";
export type { Outgoing, Reading } from "./engine";
