import { EventEmitter } from "node:events";

/** A reading as committed, published to everything that follows the floor live. */
export interface ReadingEvent {
  sensorId: string;
  tsMs: number;
  tempC: number;
  rhPct: number | null;
  /** True when this reading is the sensor's newest (not a late or backfilled one). */
  latest: boolean;
  /** When the commit finished (epoch ms), for measuring delivery. */
  committedAtMs: number;
}

export interface SensorEvent {
  sensorId: string;
  change: "registered" | "updated" | "retired";
}

export interface GatewayEvent {
  gatewayId: number;
  change: "revoked";
}

/** An alert episode opened, worsened, acknowledged or cleared. */
export interface AlertEvent {
  episodeId: number;
  change: "opened" | "worsened" | "acknowledged" | "cleared";
  state: "open" | "acknowledged" | "cleared";
  ruleId: number;
  sensorId: string | null;
  pourId: number | null;
  severity: "info" | "warning" | "critical";
}

/** Alert rules or the on-call rota changed: the alert engine reloads them. */
export interface AlertConfigEvent {
  what: "rules" | "on_call";
}

interface BusEvents {
  readings: [ReadingEvent[]];
  sensor: [SensorEvent];
  gateway: [GatewayEvent];
  alert: [AlertEvent];
  alertConfig: [AlertConfigEvent];
}

const KEY = Symbol.for("plinth.bus");
const g = globalThis as unknown as { [KEY]?: EventEmitter<BusEvents> };

/** The process's one event bus (on globalThis so a twice-loaded module still shares it). */
export function bus(): EventEmitter<BusEvents> {
  if (!g[KEY]) {
    const e = new EventEmitter<BusEvents>();
    e.setMaxListeners(0);
    g[KEY] = e;
  }
  return g[KEY];
}
