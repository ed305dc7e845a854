import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { chromium, type BrowserContext, type Page } from "playwright-core";
import { DEMO_PASSWORD } from "./server";

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

/** The two sizes every page is checked at: a phone (touch, 2× pixels) and a desk. */
export const PHONE = { width: 390, height: 844, mobile: true } as const;
export const DESK = { width: 1440, height: 900 } as const;

/** The phone's size for a width under 500 px, else the desk's, at that width and scheme. */
export function screenAt(width: number, colorScheme?: "light" | "dark"): BrowserOptions {
  return { ...(width < 500 ? PHONE : DESK), width, colorScheme };
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
export async function waitForIslands(page: Page): Promise<void> {
  await page.waitForFunction(() => document.querySelectorAll("astro-island[ssr]").length === 0);
}

/**
 * Signs in through the login form (e-mail, password, submit) and waits for the home page.
 * A test about the sign-in page itself, or by keyboard alone, does its own steps instead.
 */
export async function signInPage(
  page: Page,
  email: string,
  baseUrl: string,
  password = DEMO_PASSWORD,
): Promise<void> {
  await page.goto(`${baseUrl}/login`);
  await waitForIslands(page);
  await page.fill("#email", email);
  await page.fill("#password", password);
  await page.click("button[type=submit]");
  await page.waitForURL(`${baseUrl}/`);
}

/** A fresh browser at the given size with one page signed in as `email`; close() ends both. */
export async function openSignedIn(
  o: BrowserOptions,
  email: string,
  baseUrl: string,
): Promise<{ page: Page; context: BrowserContext; close: () => Promise<void> }> {
  const browser = await openBrowser(o);
  try {
    const page = await browser.context.newPage();
    await signInPage(page, email, baseUrl);
    return { page, ...browser };
  } catch (err) {
    await browser.close();
    throw err;
  }
}

/** Inputs, selects and text areas with no accessible name from a label or an aria attribute. */
export function unlabelled(page: Page): Promise<string[]> {
  return page.evaluate(() =>
    [...document.querySelectorAll("input:not([type=hidden]), select, textarea")]
      .filter((el) => {
        const e = el as HTMLInputElement;
        return (
          !(e.labels && e.labels.length > 0) &&
          !e.getAttribute("aria-label") &&
          !e.getAttribute("aria-labelledby")
        );
      })
      .map((el) => el.outerHTML.slice(0, 80)),
  );
}
