#!/usr/bin/env node
// Starts Plinth in one process: builds when the build is missing or older than the
// sources, starts the services (database migrated first; in demo mode the demo plant),
// then serves HTTP. Ctrl-C or SIGTERM stops HTTP first, then the services.
//
//   node scripts/start.mjs          real use: no demo data
//   node scripts/start.mjs --demo   the demo plant
import http from "node:http";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { distDir, ensureBuild } from "./ensure-build.mjs";

const demo = process.argv.includes("--demo");
process.env.NODE_ENV ??= "production";
process.env.ASTRO_TELEMETRY_DISABLED = "1";
if (demo) process.env.PLINTH_DEMO = "1";

if (process.env.PLINTH_SKIP_BUILD !== "1") ensureBuild();

const dist = (p) => pathToFileURL(path.join(distDir, "server", p)).href;
const services = await import(dist("services.mjs"));
try {
  await services.startServices({ demo });
} catch (err) {
  console.error("Plinth: could not start:", err instanceof Error ? err.message : err);
  process.exit(1);
}

process.env.ASTRO_NODE_AUTOSTART = "disabled";
const { handler } = await import(dist("entry.mjs"));
const port = Number(process.env.PORT ?? 4321);
const host = process.env.HOST ?? "0.0.0.0";
const server = http.createServer(handler);
server.keepAliveTimeout = 65_000;

let stopping = false;
async function stop(signal) {
  if (stopping) return;
  stopping = true;
  console.log(`Plinth: ${signal}, stopping…`);
  server.close();
  server.closeAllConnections?.();
  try {
    if (simulator) await simulator.stop();
    await services.stopServices();
  } finally {
    process.exit(0);
  }
}
process.on("SIGINT", () => void stop("SIGINT"));
process.on("SIGTERM", () => void stop("SIGTERM"));

let simulator = null;

/**
 * The demo's live feed: the plant simulator publishing to the embedded broker as the demo
 * gateway. After a restart it first fills the gap since the last stored reading, fast,
 * then keeps to the clock. PLINTH_SIMULATOR=0 leaves it off (the tests do).
 */
async function startDemoFeed() {
  const anchor = services.demoFeedAnchor();
  const brokerPort = services.embeddedBrokerPort();
  if (!anchor || brokerPort === null || process.env.PLINTH_SIMULATOR === "0") return;
  const { startSimulator, demoNowFromPour } = await import(dist("simulator.mjs"));
  const now = Date.now();
  const gapStart =
    anchor.lastReadingMs === null
      ? now
      : Math.max(anchor.lastReadingMs + 60_000, now - 7 * 86_400_000);
  simulator = startSimulator({
    transport: "mqtt",
    mqttUrl: `mqtt://127.0.0.1:${brokerPort}`,
    demoNowMs: demoNowFromPour(anchor.pourCode, anchor.castAtMs),
    ...(gapStart < now - 120_000 ? { startMs: gapStart, speed: 600 } : {}),
    statusEveryS: 300,
    log: (line) => console.log(line),
    ...(process.stdin.isTTY ? { control: process.stdin } : {}),
  });
  console.log(
    "Plinth: the simulator feeds live readings. Type a fault and Enter to switch it (e.g. dry-bag:CB-14, cold-snap, silent:EP-05; 'help' lists them).",
  );
}

server.listen(port, host, () => {
  const shown = host === "0.0.0.0" || host === "::" ? "localhost" : host;
  console.log(
    `Plinth: serving on http://${shown}:${server.address().port}${demo ? " (demo plant)" : ""}`,
  );
  if (demo) {
    startDemoFeed().catch((err) => console.error("Plinth: the simulator did not start:", err));
  }
});
