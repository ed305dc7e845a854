/**
 * Plinth's background parts, started once per process before HTTP is served and
 * stopped after it: the database (migrated at start), and, in demo mode, the demo plant.
 * Later parts (broker, subscriber, workers) join here so that all share one set of modules.
 */
import { closeDatabase, getDb, migrateDatabase } from "./db/client";
import { log } from "./log";
import { seedDemoPlant } from "./demo/seed";

export interface ServicesOptions {
  demo?: boolean;
}

const KEY = Symbol.for("plinth.services");
const g = globalThis as unknown as { [KEY]?: { started: boolean; demo: boolean } };

export async function startServices(options: ServicesOptions = {}): Promise<void> {
  if (g[KEY]?.started) return;
  const db = getDb();
  migrateDatabase(db);
  if (options.demo) await seedDemoPlant();
  g[KEY] = { started: true, demo: Boolean(options.demo) };
  log.info("services started", { demo: Boolean(options.demo) });
}

export async function stopServices(): Promise<void> {
  if (!g[KEY]?.started) return;
  g[KEY] = { started: false, demo: g[KEY].demo };
  closeDatabase();
  log.info("services stopped");
}

/** For /api/health: the state of each part. */
export function servicesHealth(): { started: boolean; mqtt: "ok" | "down" | "off" } {
  return { started: Boolean(g[KEY]?.started), mqtt: "off" };
}
