/**
 * The simulator's engine: given the sensors, the demo plant's "now", a round's time and the
 * faults switched on, the readings a gateway sends that round. No I/O and no clock: every
 * round is a pure step from one state to the next, so the same inputs give the same stream.
 *
 * Faults come in two families. Physical faults (a dry bag, a cold snap) change what a sensor
 * measures and fade in and out over simulated hours, carried in the state as a bag's dryness
 * and a sensor's chill. Stream faults (silent, malformed, duplicates, out-of-order) change
 * what is sent, not what is measured, each a small transform over the round's items.
 */
import { clamp, noise, prng, round1 } from "./physics";
import { demoPlant, demoReading, demoSensors, type DemoSensor, type SensorReading } from "./plant";
import { isGlob, matchSensors, sensorPatternToRegExp, type Fault } from "./faults";

const HOUR_MS = 3_600_000;

/** A reading as measured: temperature in °C, relative humidity in % (null for sensors without one). */
export interface Reading {
  sensor: string;
  ts: number;
  tempC: number;
  rhPct: number | null;
}

/** The ways a malformed payload is broken. */
export const FLAWS = ["bad-json", "nan", "wrong-type", "missing-field"] as const;
export type Flaw = (typeof FLAWS)[number];

/** One thing to send: a good reading, or a broken copy of one that Plinth should reject. */
export type Outgoing =
  { kind: "reading"; reading: Reading } | { kind: "malformed"; reading: Reading; flaw: Flaw };

export interface EngineConfig {
  sensors: readonly DemoSensor[];
  /** The demo plant's "now": its pours are cast relative to it (see plant.ts). */
  demoNowMs: number;
  /** Seeds the choices of the stream faults (which reading is duplicated, shuffled, broken). */
  seed: number;
  /** What a sensor reads at a time; the demo physics unless given. */
  read?: (sensor: DemoSensor, tMs: number, demoNowMs: number) => SensorReading;
}

export interface EngineState {
  /** Time of the last round, or null before the first. */
  lastTickMs: number | null;
  /** Per bag: 0 wet pads, 1 pads dried out. */
  dryness: Readonly<Record<string, number>>;
  /** Per sensor: how far a cold snap has pulled its temperature down, °C. */
  chillC: Readonly<Record<string, number>>;
  /** Duplicates due with the next round. */
  resend: readonly Outgoing[];
  /** Rounds held back by out-of-order, oldest first. */
  held: readonly (readonly Outgoing[])[];
}

export const initialEngineState: EngineState = {
  lastTickMs: null,
  dryness: {},
  chillC: {},
  resend: [],
  held: [],
};

/** Pads dry over a few hours (as in the demo physics) and are re-wetted within the hour. */
const DRY_TAU_H = 2.5;
const REWET_TAU_H = 0.4;
/** How quickly each kind of sensor follows a change in the air. */
const CHILL_TAU_H: Record<DemoSensor["kind"], number> = {
  ambient: 0.3,
  bag: 1.5,
  embedded: 4,
  bin: 10,
};

/** First-order approach of `current` to `target` over `dtH` hours with time constant `tauH`. */
export function relax(current: number, target: number, dtH: number, tauH: number): number {
  if (dtH <= 0) return current;
  return target + (current - target) * Math.exp(-dtH / tauH);
}

/** Relative humidity of the air around a sensor's area, %. */
function areaRhPct(area: string): number {
  return demoPlant.rooms[area] !== undefined ? demoPlant.roomRhPct : 70;
}

/** A stable number in [0, 1) for a seed, a purpose and a reading. */
function chance(seed: number, purpose: string, r: Reading): number {
  return (noise(`${seed}:${purpose}:${r.sensor}`, Math.floor(r.ts / 1000)) + 1) / 2;
}

function shuffled<T>(items: readonly T[], seed: number): T[] {
  const out = [...items];
  const rand = prng(seed);
  for (let i = out.length - 1; i > 0; i--) {
    const j = Math.floor(rand() * (i + 1));
    [out[i], out[j]] = [out[j]!, out[i]!];
  }
  return out;
}

function activeSensors(
  faults: readonly Fault[],
  name: "dry-bag" | "silent",
  ids: readonly string[],
): Set<string> {
  const patterns = faults.flatMap((f) => (f.name === name ? f.sensors : []));
  return new Set(patterns.length ? matchSensors(patterns, ids) : []);
}

function find<N extends Fault["name"]>(
  faults: readonly Fault[],
  name: N,
): Extract<Fault, { name: N }> | undefined {
  return faults.find((f): f is Extract<Fault, { name: N }> => f.name === name);
}

/** Releases held rounds as a late backlog: the newest round first, then the rest shuffled. */
function releaseBacklog(held: readonly (readonly Outgoing[])[], seed: number): Outgoing[] {
  const newest = held[held.length - 1] ?? [];
  const older = held.slice(0, -1).flat();
  return [...shuffled(newest, seed), ...shuffled(older, seed ^ 0x5bd1e995)];
}

/**
 * One round: what every sensor reads at `tickMs`, with the faults applied, and the next state.
 * Physical faults evolve over the time since the previous round.
 */
export function stepEngine(
  cfg: EngineConfig,
  state: EngineState,
  faults: readonly Fault[],
  tickMs: number,
): { state: EngineState; items: Outgoing[] } {
  const read = cfg.read ?? demoReading;
  const ids = cfg.sensors.map((s) => s.id);
  const dtH = state.lastTickMs === null ? 0 : Math.max(0, tickMs - state.lastTickMs) / HOUR_MS;
  const drying = activeSensors(faults, "dry-bag", ids);
  const silent = activeSensors(faults, "silent", ids);
  const snap = find(faults, "cold-snap");

  // Physical faults: what each sensor measures.
  const dryness: Record<string, number> = {};
  const chillC: Record<string, number> = {};
  const measured: Reading[] = [];
  for (const s of cfg.sensors) {
    const base = read(s, tickMs, cfg.demoNowMs);
    const d = relax(
      state.dryness[s.id] ?? 0,
      drying.has(s.id) ? 1 : 0,
      dtH,
      drying.has(s.id) ? DRY_TAU_H : REWET_TAU_H,
    );
    const c = relax(state.chillC[s.id] ?? 0, snap ? snap.dropC : 0, dtH, CHILL_TAU_H[s.kind]);
    if (d > 1e-4) dryness[s.id] = d;
    if (Math.abs(c) > 1e-3) chillC[s.id] = c;
    let rhPct = base.rhPct;
    if (rhPct !== null && d > 0) {
      const room = areaRhPct(s.area);
      const wobble = noise(`${s.id}:dry`, Math.floor(tickMs / 60_000)) * 0.8 * d;
      rhPct = round1(clamp(rhPct + d * (room - rhPct) + wobble, 0, 100));
    }
    measured.push({ sensor: s.id, ts: tickMs, tempC: round1(base.tempC - c), rhPct });
  }

  // Stream faults: what is sent.
  const sent = measured.filter((r) => !silent.has(r.sensor));
  const malformed = find(faults, "malformed");
  const duplicates = find(faults, "duplicates");
  let items: Outgoing[] = [...state.resend];
  const resend: Outgoing[] = [];
  for (const reading of sent) {
    const item: Outgoing = { kind: "reading", reading };
    items.push(item);
    if (malformed && chance(cfg.seed, "malformed", reading) < malformed.share) {
      const pick = Math.floor(chance(cfg.seed, "flaw", reading) * FLAWS.length);
      items.push({ kind: "malformed", reading, flaw: FLAWS[pick] ?? "bad-json" });
    }
    if (duplicates && chance(cfg.seed, "duplicate", reading) < duplicates.share) {
      if (chance(cfg.seed, "duplicate-when", reading) < 0.5) items.push(item);
      else resend.push(item);
    }
  }

  const ooo = find(faults, "out-of-order");
  let held = state.held;
  const roundSeed = (cfg.seed ^ Math.floor(tickMs / 1000)) >>> 0;
  if (ooo) {
    held = [...held, items];
    items = [];
    if (held.length >= ooo.windowTicks) {
      items = releaseBacklog(held, roundSeed);
      held = [];
    }
  } else if (held.length > 0) {
    items = releaseBacklog([...held, items], roundSeed);
    held = [];
  }

  return { state: { lastTickMs: tickMs, dryness, chillC, resend, held }, items };
}

/** Everything still held back (out-of-order rounds, duplicates due next round), for a clean stop. */
export function flushEngine(
  cfg: EngineConfig,
  state: EngineState,
): { state: EngineState; items: Outgoing[] } {
  const seed = (cfg.seed ^ Math.floor((state.lastTickMs ?? 0) / 1000)) >>> 0;
  const items = [...(state.held.length ? releaseBacklog(state.held, seed) : []), ...state.resend];
  return { state: { ...state, resend: [], held: [] }, items };
}

/** The engine with its state kept for you: what the runner uses. */
export interface Engine {
  tick(tickMs: number): Outgoing[];
  flush(): Outgoing[];
  faults: readonly Fault[];
  readonly state: EngineState;
}

export function createEngine(cfg: EngineConfig, initialFaults: readonly Fault[] = []): Engine {
  let state = initialEngineState;
  let faults = initialFaults;
  return {
    get faults() {
      return faults;
    },
    set faults(next: readonly Fault[]) {
      faults = next;
    },
    get state() {
      return state;
    },
    tick(tickMs) {
      const next = stepEngine(cfg, state, faults, tickMs);
      state = next.state;
      return next.items;
    },
    flush() {
      const next = flushEngine(cfg, state);
      state = next.state;
      return next.items;
    },
  };
}

/**
 * The sensors named by `--sensors`: ids and globs separated by commas (`CB-1*,EP-05`).
 * A glob must match a sensor of the demo plant; an id the plant does not have becomes a new
 * sensor that reads the air of Cure Room 1 like an unassigned bag, so that Plinth registers it.
 */
export function selectSensors(
  spec: string | undefined,
  plant: readonly DemoSensor[] = demoSensors,
): DemoSensor[] {
  if (!spec || spec.trim() === "" || spec.trim() === "*") return [...plant];
  const chosen = new Map<string, DemoSensor>();
  for (const raw of spec.split(",")) {
    const part = raw.trim();
    if (!part) continue;
    if (isGlob(part)) {
      const re = sensorPatternToRegExp(part);
      const hits = plant.filter((s) => re.test(s.id));
      if (hits.length === 0)
        throw new Error(`--sensors: "${part}" matches no sensor of the demo plant`);
      for (const s of hits) chosen.set(s.id, s);
    } else {
      const known = plant.find((s) => s.id.toLowerCase() === part.toLowerCase());
      if (!/^[A-Za-z0-9][A-Za-z0-9_.:-]{0,63}$/.test(part))
        throw new Error(`--sensors: "${part}" is not a sensor id`);
      chosen.set(
        known?.id ?? part,
        known ?? { id: part, label: part, kind: "bag", area: "Cure Room 1" },
      );
    }
  }
  return [...chosen.values()];
}
