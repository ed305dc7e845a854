/**
 * Faults the simulator can put into its stream on demand, how they are written on the
 * command line (`--faults dry-bag:CB-14,cold-snap:10,silent:EP-03`) and at run time, and the
 * sensor patterns they take. Parsing only: what each fault does lives in engine.ts.
 */
import { demoPours, type DemoSensor } from "./plant";

export const FAULT_NAMES = [
  "dry-bag",
  "cold-snap",
  "silent",
  "duplicates",
  "out-of-order",
  "malformed",
] as const;
export type FaultName = (typeof FAULT_NAMES)[number];

export type Fault =
  /** The pads under these cure bags dry out: RH falls toward the room's over hours. */
  | { name: "dry-bag"; sensors: string[] }
  /** The air falls by `dropC`; concrete and bins follow more slowly. */
  | { name: "cold-snap"; dropC: number }
  /** These sensors send nothing. */
  | { name: "silent"; sensors: string[] }
  /** About `share` of the readings are sent twice. */
  | { name: "duplicates"; share: number }
  /** Readings are held back `windowTicks` rounds, then sent newest first, the rest shuffled. */
  | { name: "out-of-order"; windowTicks: number }
  /** Beside about `share` of the readings, a broken copy is sent (bad JSON, NaN, wrong types, missing fields). */
  | { name: "malformed"; share: number };

export const FAULT_DEFAULTS = {
  coldSnapDropC: 8,
  duplicatesShare: 0.1,
  outOfOrderTicks: 5,
  malformedShare: 0.05,
};

/** What each fault does, in the words the help text and the run-time `help` command show. */
export const FAULT_HELP: Record<FaultName, { usage: string; text: string }> = {
  "dry-bag": {
    usage: "dry-bag[:SENSORS]",
    text: "the pads under a cure bag dry out: its RH falls toward the room's over a few hours; switched off, the bag is re-wetted (default: the first bag on a pour)",
  },
  "cold-snap": {
    usage: "cold-snap[:DEG_C]",
    text: "the air in the yard and the cure rooms falls by DEG_C (default 8) within the hour; bags, probes and bins follow more slowly; switched off, they warm back",
  },
  silent: {
    usage: "silent[:SENSORS]",
    text: "these sensors stop sending; their gap stays a gap (default: the first embedded probe on a pour)",
  },
  duplicates: {
    usage: "duplicates[:SHARE]",
    text: "about SHARE of the readings (default 0.1, or 10%) are sent a second time, at once or a round later",
  },
  "out-of-order": {
    usage: "out-of-order[:ROUNDS]",
    text: "readings are held back ROUNDS rounds (default 5), then sent as a late backlog: the newest round first, the older ones shuffled",
  },
  malformed: {
    usage: "malformed[:SHARE]",
    text: "beside about SHARE of the readings (default 0.05) a broken copy is sent: bad JSON, NaN, a wrong type or a missing field; Plinth should refuse each and keep the rest",
  },
};

/** A sensor pattern: an id, or a glob with `*` and `?` (`CB-1*`). */
export function sensorPatternToRegExp(pattern: string): RegExp {
  const escaped = pattern
    .replace(/[.+^${}()|[\]\\]/g, "\\$&")
    .replace(/\*/g, ".*")
    .replace(/\?/g, ".");
  return new RegExp(`^${escaped}$`, "i");
}

export const isGlob = (pattern: string) => /[*?]/.test(pattern);

/** The ids among `ids` that any of `patterns` names, in the order of `ids`. */
export function matchSensors(patterns: readonly string[], ids: readonly string[]): string[] {
  const res = patterns.map(sensorPatternToRegExp);
  return ids.filter((id) => res.some((re) => re.test(id)));
}

function parseShare(name: string, arg: string): number {
  const v = Number(arg.endsWith("%") ? arg.slice(0, -1) : arg) / (arg.endsWith("%") ? 100 : 1);
  if (!Number.isFinite(v) || v <= 0 || v > 1)
    throw new Error(
      `${name}: the share must be above 0 and at most 1 (or a percentage), not "${arg}"`,
    );
  return v;
}

/**
 * Reads one fault written as `name` or `name:argument`. Sensor lists inside a fault are joined
 * with `+` (`silent:EP-03+EP-04`) because commas separate faults. Defaults pick sensors from
 * `simulated`, the sensors being sent.
 */
export function parseFault(spec: string, simulated: readonly DemoSensor[]): Fault {
  const text = spec.trim();
  const colon = text.indexOf(":");
  const name = (colon < 0 ? text : text.slice(0, colon)).toLowerCase();
  const arg = colon < 0 ? "" : text.slice(colon + 1).trim();
  const ids = simulated.map((s) => s.id);
  const sensorsArg = (
    kind: string,
    fallback: DemoSensor | undefined,
    filter: (s: DemoSensor) => boolean,
  ) => {
    if (!arg) {
      if (!fallback)
        throw new Error(
          `${name}: no ${kind} sensor is being simulated; name one, e.g. ${name}:CB-07`,
        );
      return [fallback.id];
    }
    const patterns = arg
      .split("+")
      .map((p) => p.trim())
      .filter(Boolean);
    const matched = matchSensors(
      patterns,
      simulated.filter(filter).map((s) => s.id),
    );
    if (matched.length === 0) {
      throw new Error(
        `${name}: "${arg}" names no ${kind} sensor being simulated (${ids.length} are: ${ids.slice(0, 6).join(", ")}${ids.length > 6 ? ", …" : ""})`,
      );
    }
    return patterns.map((p) => p.toUpperCase());
  };
  switch (name) {
    case "dry-bag":
      return {
        name,
        sensors: sensorsArg("cure-bag", defaultBag(simulated), (s) => s.kind === "bag"),
      };
    case "silent":
      return { name, sensors: sensorsArg("", defaultProbe(simulated), () => true) };
    case "cold-snap": {
      const dropC = arg ? Number(arg.replace(/c$/i, "")) : FAULT_DEFAULTS.coldSnapDropC;
      if (!Number.isFinite(dropC) || dropC <= 0 || dropC > 60)
        throw new Error(
          `cold-snap: the drop must be a number of °C above 0 and at most 60, not "${arg}"`,
        );
      return { name, dropC };
    }
    case "duplicates":
      return { name, share: arg ? parseShare(name, arg) : FAULT_DEFAULTS.duplicatesShare };
    case "malformed":
      return { name, share: arg ? parseShare(name, arg) : FAULT_DEFAULTS.malformedShare };
    case "out-of-order": {
      const windowTicks = arg ? Number(arg) : FAULT_DEFAULTS.outOfOrderTicks;
      if (!Number.isInteger(windowTicks) || windowTicks < 2 || windowTicks > 1_000) {
        throw new Error(
          `out-of-order: the window must be a whole number of rounds from 2 to 1000, not "${arg}"`,
        );
      }
      return { name, windowTicks };
    }
    default:
      throw new Error(`unknown fault "${name}"; the faults are ${FAULT_NAMES.join(", ")}`);
  }
}

/** Reads a comma-separated list of faults (`dry-bag:CB-14,cold-snap`). */
export function parseFaults(list: string, simulated: readonly DemoSensor[]): Fault[] {
  let faults: Fault[] = [];
  for (const part of list.split(",")) {
    if (part.trim()) faults = switchFault(faults, parseFault(part, simulated), "on");
  }
  return faults;
}

/**
 * Which faults are the same switch: a dry bag or a silent sensor per sensor list, the others
 * plant-wide (one cold snap at a time).
 */
export function faultKey(f: Fault): string {
  return f.name === "dry-bag" || f.name === "silent" ? `${f.name}:${f.sensors.join("+")}` : f.name;
}

/** The fault as it would be written. */
export function formatFault(f: Fault): string {
  switch (f.name) {
    case "dry-bag":
    case "silent":
      return `${f.name}:${f.sensors.join("+")}`;
    case "cold-snap":
      return `cold-snap:${f.dropC}`;
    case "duplicates":
    case "malformed":
      return `${f.name}:${f.share}`;
    case "out-of-order":
      return `out-of-order:${f.windowTicks}`;
  }
}

/** Switches a fault on (replacing one with the same key), off, or over to the other state. */
export function switchFault(
  faults: readonly Fault[],
  fault: Fault,
  how: "on" | "off" | "toggle",
): Fault[] {
  const key = faultKey(fault);
  const present = faults.some((f) => faultKey(f) === key);
  const rest = faults.filter((f) => faultKey(f) !== key);
  const on = how === "on" || (how === "toggle" && !present);
  return on ? [...rest, fault] : rest;
}

function onPour(
  s: DemoSensor,
  pours: readonly { sensors: string[]; dryBag?: { sensor: string } }[],
) {
  return pours.some((p) => p.sensors.includes(s.id) && p.dryBag?.sensor !== s.id);
}

function defaultBag(simulated: readonly DemoSensor[]): DemoSensor | undefined {
  const bags = simulated.filter((s) => s.kind === "bag");
  return bags.find((s) => onPour(s, demoPours)) ?? bags[0];
}

function defaultProbe(simulated: readonly DemoSensor[]): DemoSensor | undefined {
  const probes = simulated.filter((s) => s.kind === "embedded");
  return probes.find((s) => onPour(s, demoPours)) ?? probes[0] ?? simulated[0];
}

/** Words wrapped to lines of at most `width` characters, every line after the first indented by `indent` spaces. */
export function wrap(text: string, width: number, indent: number): string {
  const lines: string[] = [];
  let line = "";
  for (const word of text.split(/\s+/)) {
    if (line && line.length + 1 + word.length > width) {
      lines.push(line);
      line = word;
    } else line = line ? `${line} ${word}` : word;
  }
  if (line) lines.push(line);
  return lines.map((l, i) => (i ? " ".repeat(indent) + l : l)).join("\n");
}

/** The faults and what each does, as a block of help text. */
export function describeFaults(width = 90): string {
  const col = 26;
  return FAULT_NAMES.map((n) => {
    const { usage, text } = FAULT_HELP[n];
    const head = `  ${usage}`.padEnd(col);
    return head + wrap(text, width - col, col);
  }).join("\n");
}
