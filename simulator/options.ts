/**
 * The simulator's command line: its help text and how its options become SimulatorOptions.
 * No I/O here, so that the parsing is tested as it is.
 */
import { parseArgs } from "node:util";
import { describeFaults, parseFaults } from "./faults";
import { selectSensors } from "./engine";
import { CONTROL_HELP, SIMULATOR_DEFAULTS as D, type SimulatorOptions } from "./index";
import { demoSensors } from "./plant";

export const HELP = `Plinth plant simulator: sends live readings from the demo plant's sensors to a Plinth
instance, as a plant's sensor gateway would, over MQTT or HTTP.

Usage: npm run simulate -- [options]
       tsx simulator/cli.ts [options]

Where to send
  --transport mqtt|http   how to send (default ${D.transport})
  --mqtt-url URL          the broker (default ${D.mqttUrl})
  --http-url URL          Plinth's address (default ${D.httpUrl}); readings are
                          posted to /api/v1/readings
  --gateway NAME          the gateway's name, the MQTT username (default ${D.gateway})
  --key KEY               the gateway's key: MQTT password and HTTP bearer token
                          (default ${D.key}, or PLINTH_GATEWAY_KEY when set)

What to send
  --sensors LIST          sensor ids and globs, comma-separated (default: all ${demoSensors.length}:
                          CB-01..24 cure bags, EP-01..08 embedded probes, AB-01..04
                          aggregate bins, AM-01..03 air). An id the demo plant lacks is
                          sent as a new sensor for Plinth to register.
  --interval SECONDS      simulated seconds between two readings of a sensor (default ${D.intervalS})
  --speed FACTOR          simulated time runs FACTOR times faster (default ${D.speed}). Plinth
                          refuses readings over 10 minutes ahead of its clock, so pair it
                          with --start in the past: the backlog goes out fast, then the
                          simulator keeps to the clock.
  --start TIME            where simulated time starts (default now): ISO 8601 with an
                          offset, epoch milliseconds, or back from now as -6h, -90m, -2d
  --demo-now TIME         the moment the demo plant's pours are placed around (default
                          now); give the time the demo was seeded to continue its history
  --units c|f             send temp_c (default) or temp_f
  --batch N               readings a message. HTTP: up to N a request (default ${D.httpBatch},
                          at most 5000). MQTT: 1 (the default) publishes each reading on
                          plinth/readings/<sensor>; above 1, {"readings": [...]} on
                          plinth/readings
  --faults LIST           faults switched on from the start, comma-separated (below)
  --seed N                seeds which readings the faults pick (default 20260302)

Running
  --once                  send one round, wait until it is delivered, exit
  --status SECONDS        print a status line this often (default ${D.statusEveryS}; 0 for none)
  --help                  this text

Faults (sensor lists inside a fault are joined with +, e.g. silent:EP-03+EP-04)
${describeFaults()}

${CONTROL_HELP}

Nothing is dropped on the way. Over MQTT the client reconnects every second and sends
again what the broker has not acknowledged (QoS 1). Over HTTP a network error, a 5xx or
a 429 is tried again with growing waits; Plinth counts a reading it already has as a
duplicate. While ${D.maxQueue.toLocaleString("en-US")} readings wait to be sent, new rounds wait too.
Ctrl-C sends what is queued (for up to 5 s) and exits; a second Ctrl-C exits at once.

The status line counts readings sent and, over HTTP, accepted, duplicates and rejected
as Plinth answered them (over MQTT: acknowledged), and those still queued.

Exit status: 0 when everything was delivered, 1 when readings were left undelivered,
2 for a mistake on the command line or a refused gateway key.

Examples
  npm run simulate -- --once --transport http
  npm run simulate -- --start -12h --speed 120 --faults dry-bag:CB-14
  npm run simulate -- --sensors 'CB-1*,EP-05' --faults cold-snap:10,duplicates:0.2
`;

/** A time on the command line: `now`, ISO 8601 with an offset, epoch ms, or `-6h` back from now. */
export function parseTime(text: string, nowMs: number, what: string): number {
  const t = text.trim();
  if (t === "now") return nowMs;
  const rel = /^-(\d+(?:\.\d+)?)(s|m|h|d)$/.exec(t);
  if (rel) {
    const unit = { s: 1_000, m: 60_000, h: 3_600_000, d: 86_400_000 }[
      rel[2] as "s" | "m" | "h" | "d"
    ];
    return nowMs - Number(rel[1]) * unit;
  }
  if (/^\d{10,}$/.test(t)) return Number(t);
  if (/^\d{4}-\d\d-\d\dT\d\d:\d\d(:\d\d(\.\d+)?)?([zZ]|[+-]\d\d:?\d\d)$/.test(t)) {
    const ms = Date.parse(t);
    if (Number.isFinite(ms)) return ms;
  }
  throw new Error(
    `${what}: "${text}" is not a time; give ISO 8601 with an offset (2026-03-02T04:10:00Z), epoch milliseconds, or -6h`,
  );
}

function positive(text: string | undefined, what: string, integer = false): number | undefined {
  if (text === undefined) return undefined;
  const v = Number(text);
  if (!Number.isFinite(v) || v <= 0 || (integer && !Number.isInteger(v))) {
    throw new Error(`${what}: "${text}" is not a positive ${integer ? "whole " : ""}number`);
  }
  return v;
}

export type CliCommand = { kind: "help" } | { kind: "run"; options: SimulatorOptions };

/** Reads the command line; throws an Error whose message says what is wrong. */
export function parseCli(
  argv: readonly string[],
  env: NodeJS.ProcessEnv = {},
  nowMs = Date.now(),
): CliCommand {
  // `--start -6h`: a value that starts with a dash and a digit belongs to the option before it.
  const args: string[] = [];
  for (const a of argv) {
    const prev = args[args.length - 1];
    if (
      /^-\d/.test(a) &&
      prev !== undefined &&
      /^--[a-z-]+$/.test(prev) &&
      prev !== "--once" &&
      prev !== "--help"
    )
      args[args.length - 1] = `${prev}=${a}`;
    else args.push(a);
  }
  const { values, positionals } = parseArgs({
    args,
    strict: true,
    allowPositionals: true,
    options: {
      help: { type: "boolean", short: "h" },
      transport: { type: "string" },
      "mqtt-url": { type: "string" },
      "http-url": { type: "string" },
      gateway: { type: "string" },
      key: { type: "string" },
      interval: { type: "string" },
      speed: { type: "string" },
      sensors: { type: "string" },
      batch: { type: "string" },
      units: { type: "string" },
      once: { type: "boolean" },
      faults: { type: "string" },
      start: { type: "string" },
      "demo-now": { type: "string" },
      seed: { type: "string" },
      status: { type: "string" },
    },
  });
  if (values.help) return { kind: "help" };
  if (positionals.length)
    throw new Error(`unexpected "${positionals.join(" ")}"; options start with --`);

  const transport = values.transport ?? D.transport;
  if (transport !== "mqtt" && transport !== "http")
    throw new Error(`--transport: "${transport}" is neither mqtt nor http`);
  const units = values.units ?? D.units;
  if (units !== "c" && units !== "f") throw new Error(`--units: "${units}" is neither c nor f`);
  for (const [flag, url, schemes] of [
    ["--mqtt-url", values["mqtt-url"], ["mqtt:", "mqtts:", "tcp:", "ws:", "wss:"]],
    ["--http-url", values["http-url"], ["http:", "https:"]],
  ] as const) {
    if (url === undefined) continue;
    let scheme: string;
    try {
      scheme = new URL(url).protocol;
    } catch {
      throw new Error(`${flag}: "${url}" is not a URL`);
    }
    if (!(schemes as readonly string[]).includes(scheme))
      throw new Error(
        `${flag}: "${url}" should start with ${schemes.map((s) => `${s}//`).join(" or ")}`,
      );
  }
  const batch = positive(values.batch, "--batch", true);
  if (batch !== undefined && batch > 5_000)
    throw new Error("--batch: at most 5000 readings a message");
  const status = values.status === undefined ? undefined : Number(values.status);
  if (status !== undefined && !(Number.isFinite(status) && status >= 0))
    throw new Error(`--status: "${values.status}" is not a number of seconds`);
  const seed = values.seed === undefined ? undefined : Number(values.seed);
  if (seed !== undefined && !Number.isInteger(seed))
    throw new Error(`--seed: "${values.seed}" is not a whole number`);

  const sensors = selectSensors(values.sensors, demoSensors);
  const options: SimulatorOptions = {
    transport,
    units,
    sensors,
    once: Boolean(values.once),
    faults: values.faults ? parseFaults(values.faults, sensors) : [],
  };
  if (values["mqtt-url"] !== undefined) options.mqttUrl = values["mqtt-url"];
  if (values["http-url"] !== undefined) options.httpUrl = values["http-url"];
  if (values.gateway !== undefined) options.gateway = values.gateway;
  const key = values.key ?? env.PLINTH_GATEWAY_KEY;
  if (key !== undefined) options.key = key;
  const interval = positive(values.interval, "--interval");
  if (interval !== undefined) options.intervalS = interval;
  const speed = positive(values.speed, "--speed");
  if (speed !== undefined) options.speed = speed;
  if (batch !== undefined) options.batch = batch;
  if (values.start !== undefined) options.startMs = parseTime(values.start, nowMs, "--start");
  if (values["demo-now"] !== undefined)
    options.demoNowMs = parseTime(values["demo-now"], nowMs, "--demo-now");
  if (seed !== undefined) options.seed = seed;
  if (status !== undefined) options.statusEveryS = status;
  return { kind: "run", options };
}
