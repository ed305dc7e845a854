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
import { ensureBuild, root } from "./ensure-build.mjs";

const demo = process.argv.includes("--demo");
process.env.NODE_ENV ??= "production";
process.env.ASTRO_TELEMETRY_DISABLED = "1";
if (demo) process.env.PLINTH_DEMO = "1";

if (process.env.PLINTH_SKIP_BUILD !== "1") ensureBuild();

const dist = (p) => pathToFileURL(path.join(root, "dist", "server", p)).href;
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
    await services.stopServices();
  } finally {
    process.exit(0);
  }
}
process.on("SIGINT", () => void stop("SIGINT"));
process.on("SIGTERM", () => void stop("SIGTERM"));

server.listen(port, host, () => {
  const shown = host === "0.0.0.0" || host === "::" ? "localhost" : host;
  console.log(
    `Plinth: serving on http://${shown}:${server.address().port}${demo ? " (demo plant)" : ""}`,
  );
});
