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

interface BusEvents {
  readings: [ReadingEvent[]];
  sensor: [SensorEvent];
  gateway: [GatewayEvent];
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
