import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";

// The README's configuration table must list every environment variable Plinth reads.
const root = path.resolve(import.meta.dirname, "..");
const readme = fs.readFileSync(path.join(root, "README.md"), "utf8");
const internal = new Set([
  "ASTRO_NODE_AUTOSTART",
  "ASTRO_TELEMETRY_DISABLED",
  "CI",
  "CHROMIUM_PATH",
]);

function sources(dir: string): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    const p = path.join(dir, e.name);
    if (e.isDirectory()) return sources(p);
    return /\.(ts|tsx|mjs)$/.test(e.name) && !/\.test\.ts$/.test(e.name) ? [p] : [];
  });
}

describe("the README", () => {
  it("documents every environment variable the server, scripts and simulator read", () => {
    const read = new Set<string>();
    for (const file of ["src", "scripts", "simulator"].flatMap((d) =>
      sources(path.join(root, d)),
    )) {
      const text = fs.readFileSync(file, "utf8");
      for (const m of text.matchAll(
        /(?:process\.)?env\.([A-Z][A-Z0-9_]+)|env\[["']([A-Z][A-Z0-9_]+)["']\]/g,
      ))
        read.add((m[1] ?? m[2])!);
    }
    const schema = fs.readFileSync(path.join(root, "src/lib/server/env.ts"), "utf8");
    for (const m of schema.matchAll(/^ {2}([A-Z][A-Z0-9_]+): z\./gm)) read.add(m[1]!);
    const missing = [...read].filter((v) => !internal.has(v) && !readme.includes(`\`${v}\``));
    expect(missing).toEqual([]);
    expect(read.size).toBeGreaterThan(10);
  });

  it("opens with the quick start of the contract", () => {
    expect(readme).toContain("npm install && npm run demo");
    expect(readme).toContain("npm test");
  });
});
