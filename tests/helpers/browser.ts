import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { chromium, type BrowserContext } from "playwright-core";

export const CHROMIUM_PATH = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";

/** True when Debian's Chromium is installed. In CI its absence is a failure, not a skip. */
export function chromiumAvailable(): boolean {
  const ok = fs.existsSync(CHROMIUM_PATH);
  if (!ok && process.env.CI === "true") {
    throw new Error(
      `Chromium is required in CI but ${CHROMIUM_PATH} is missing (apt-get install -y chromium).`,
    );
  }
  return ok;
}

const ARGS = [
  "--headless",
  "--no-sandbox",
  "--disable-gpu",
  "--disable-quic",
  "--no-first-run",
  "--disable-background-networking",
  "--disable-component-update",
  "--disable-sync",
];

export interface BrowserOptions {
  width: number;
  height: number;
  colorScheme?: "light" | "dark";
  mobile?: boolean;
}

/** A fresh headless Chromium profile with the given viewport; close() removes the profile. */
export async function openBrowser(
  o: BrowserOptions,
): Promise<{ context: BrowserContext; close: () => Promise<void> }> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "plinth-chromium-"));
  const context = await chromium.launchPersistentContext(dir, {
    executablePath: CHROMIUM_PATH,
    args: ARGS,
    viewport: { width: o.width, height: o.height },
    colorScheme: o.colorScheme ?? "light",
    isMobile: o.mobile ?? false,
    hasTouch: o.mobile ?? false,
    deviceScaleFactor: o.mobile ? 2 : 1,
  });
  return {
    context,
    close: async () => {
      await context.close();
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}

/** Where screenshots are kept as test artefacts. */
export function screenshotPath(name: string): string {
  const dir = path.resolve("test-results", "screenshots");
  fs.mkdirSync(dir, { recursive: true });
  return path.join(dir, `${name}.png`);
}

/** Waits until every React island on the page has hydrated (Astro drops `ssr` then). */
export async function waitForIslands(page: import("playwright-core").Page): Promise<void> {
  await page.waitForFunction(() => document.querySelectorAll("astro-island[ssr]").length === 0);
}
