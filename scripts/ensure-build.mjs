// Builds Plinth when dist/ is missing or older than its sources. Shared by the start
// script and the test set-up, so a test never runs against a stale build.
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";

export const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
/** The build folder: dist/, or PLINTH_DIST_DIR (relative to the project). */
export const distDir = path.resolve(root, process.env.PLINTH_DIST_DIR ?? "dist");

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

/** True when the server build is present and newer than every source file. */
export function buildIsFresh() {
  const entry = path.join(distDir, "server", "entry.mjs");
  const services = path.join(distDir, "server", "services.mjs");
  if (!fs.existsSync(entry) || !fs.existsSync(services)) return false;
  const built = fs.statSync(entry).mtimeMs;
  const sources = Math.max(
    ...["src", "simulator", "public"].map((d) => newestMtime(path.join(root, d))),
    fs.statSync(path.join(root, "astro.config.mjs")).mtimeMs,
    fs.statSync(path.join(root, "package.json")).mtimeMs,
  );
  return built >= sources;
}

/** Runs `astro build` when needed; exits the process if the build fails. */
export function ensureBuild({ quiet = false } = {}) {
  if (buildIsFresh()) return;
  console.log("Plinth: building the server (about half a minute)…");
  const r = spawnSync(
    process.execPath,
    [path.join(root, "node_modules", "astro", "astro.js"), "build"],
    {
      cwd: root,
      stdio: quiet ? ["ignore", "ignore", "inherit"] : "inherit",
      env: { ...process.env, NODE_ENV: "production", ASTRO_TELEMETRY_DISABLED: "1" },
    },
  );
  if (r.status !== 0) {
    console.error("Plinth: the build failed; see above.");
    process.exit(r.status ?? 1);
  }
}
