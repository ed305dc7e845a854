#!/usr/bin/env node
// Starts Plinth in one process: builds when the build is missing or older than the
// sources, starts the services (database migrated first; in demo mode the demo plant),
// then serves HTTP. Ctrl-C or SIGTERM stops HTTP first, then the services.
//
//   node scripts/start.mjs          real use: no demo data
//   node scripts/start.mjs --demo   the demo plant
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import http from "node:http";
import path from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
const demo = process.argv.includes("--demo");
process.env.NODE_ENV ??= "production";
process.env.ASTRO_TELEMETRY_DISABLED = "1";
if (demo) process.env.PLINTH_DEMO = "1";

function newestMtime(dir) {
  let newest = 0;
  if (!fs.existsSync(dir)) return 0;
  for (const entry of fs.readdirSync(dir, { withFileTypes: true })) {
    const p = path.join(dir, entry.name);
    if (entry.isDirectory()) newest = Math.max(newest, newestMtime(p));
    else if (!entry.name.endsWith(".test.ts")) newest = Math.max(newest, fs.statSync(p).mtimeMs);
  }
  return newest;
}

function ensureBuild() {
  const entry = path.join(root, "dist", "server", "entry.mjs");
  const services = path.join(root, "dist", "server", "services.mjs");
  const built = fs.existsSync(entry) && fs.existsSync(services) ? fs.statSync(entry).mtimeMs : 0;
  const sources = Math.max(
    ...["src", "simulator", "public"].map((d) => newestMtime(path.join(root, d))),
    fs.statSync(path.join(root, "astro.config.mjs")).mtimeMs,
  );
  if (built && built >= sources) return;
  console.log(built ? "Plinth: sources changed, rebuilding…" : "Plinth: building (first run, about a minute)…");
  const r = spawnSync(process.execPath, [path.join(root, "node_modules", "astro", "astro.js"), "build"], {
    cwd: root,
    stdio: "inherit",
    env: { ...process.env, NODE_ENV: "production" },
  });
  if (r.status !== 0) {
    console.error("Plinth: the build failed; see above.");
    process.exit(r.status ?? 1);
  }
}

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
  console.log(`Plinth: serving on http://${shown}:${server.address().port}${demo ? " (demo plant)" : ""}`);
});
