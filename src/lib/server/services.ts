/**
 * Plinth's background parts, started once per process before HTTP is served and stopped
 * after it: the database (migrated at start; in demo mode the demo plant is seeded), and the
 * MQTT side (the embedded broker, or a subscriber to the broker MQTT_URL names).
 * Everything here shares one set of modules with the pages: one database handle, one bus.
 */
import { closeDatabase, getDb, migrateDatabase } from "./db/client";
import { env } from "./env";
import { log } from "./log";
import { seedDemoPlant } from "./demo/seed";
import { latestReadingTs, pourCastAt } from "./db/queries/plant";
import { startEmbeddedBroker, type EmbeddedBroker } from "./mqtt/broker";
import { startSubscriber, type Subscriber } from "./mqtt/subscriber";
import { startAlertEngine, stopAlertEngine } from "./alerts/engine";
import { bus, type ReadingEvent } from "./live/bus";
import { advanceOpenPours, dropMaturityStates, reconcileMaturity } from "./strength/maturity";
import { startReadingsRollup } from "./rollup/service";

export interface ServicesOptions {
  demo?: boolean;
}

interface State {
  started: boolean;
  demo: boolean;
  broker?: EmbeddedBroker;
  subscriber?: Subscriber;
}

const KEY = Symbol.for("plinth.services");
const g = globalThis as unknown as { [KEY]?: State };

export async function startServices(options: ServicesOptions = {}): Promise<void> {
  if (g[KEY]?.started) return;
  const e = env();
  const db = getDb();
  migrateDatabase(db);
  if (options.demo) await seedDemoPlant();
  reconcileMaturity();
  startReadingsRollup();
  await startNoticesPart(Boolean(options.demo));
  bus().on("readings", onReadings);
  startAlertEngine();
  const state: State = { started: true, demo: Boolean(options.demo) };
  if (e.MQTT_URL) state.subscriber = startSubscriber(e.MQTT_URL, e.MQTT_CLIENT_ID);
  else state.broker = await startEmbeddedBroker(e.MQTT_HOST, e.MQTT_PORT);
  g[KEY] = state;
  log.info("services started", {
    demo: state.demo,
    mqtt: e.MQTT_URL ? "external" : `embedded:${state.broker?.port}`,
  });
}

/**
 * Pours' maturity advances with each committed batch. On a failure the cached states are
 * dropped, so the next reading rebuilds them from the stored readings: nothing is skipped.
 */
function onReadings(events: ReadingEvent[]): void {
  try {
    advanceOpenPours(events);
  } catch (err) {
    log.error("maturity update failed; states will be rebuilt from the readings", { err });
    dropMaturityStates();
  }
}

export async function stopServices(): Promise<void> {
  const state = g[KEY];
  if (!state?.started) return;
  state.started = false;
  bus().off("readings", onReadings);
  stopAlertEngine();
  await state.subscriber?.close();
  await state.broker?.close();
  await stopNoticesPart();
  closeDatabase();
  log.info("services stopped");
}

/**
 * Where the demo's live feed picks up: the demo pour P-2611-01's cast time (the simulator
 * places the demo pours from it) and the newest reading stored (the feed fills the gap
 * from there). Null outside demo mode or before seeding.
 */
export function demoFeedAnchor(): {
  pourCode: string;
  castAtMs: number;
  lastReadingMs: number | null;
} | null {
  if (!g[KEY]?.demo) return null;
  const castAtMs = pourCastAt("P-2611-01");
  if (castAtMs === undefined) return null;
  return { pourCode: "P-2611-01", castAtMs, lastReadingMs: latestReadingTs() };
}

/** The MQTT port actually listened on (the embedded broker), for the demo's simulator. */
export function embeddedBrokerPort(): number | null {
  return g[KEY]?.broker?.port ?? null;
}

/** For /api/health: the state of the MQTT side. */
export function servicesHealth(): { started: boolean; mqtt: "ok" | "down" } {
  const state = g[KEY];
  if (!state?.started) return { started: false, mqtt: "down" };
  if (state.subscriber)
    return { started: true, mqtt: state.subscriber.connected() ? "ok" : "down" };
  return { started: true, mqtt: state.broker ? "ok" : "down" };
}

// ---------------------------------------------------------------------------------------
// Notices (e-mail and texts): the outbox worker and, in demo mode or with NOTIFY_FAKES=1,
// the local e-mail and SMS fakes the transports are pointed at. See src/lib/server/notify/.
// ---------------------------------------------------------------------------------------

/** Starts the notice worker (and the fakes where wanted); the database is migrated by now. */
async function startNoticesPart(demo: boolean): Promise<void> {
  const { startNotifications } = await import("./notify/service");
  await startNotifications({ demo });
}

/** Lets the sends in flight finish, then stops the worker and the fakes, before the database closes. */
async function stopNoticesPart(): Promise<void> {
  const { stopNotifications } = await import("./notify/service");
  await stopNotifications();
}
