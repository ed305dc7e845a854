import { describe, expect, it } from "vitest";
import type { Page } from "playwright-core";
import {
  chromiumAvailable,
  DESK,
  openBrowser,
  openSignedIn,
  PHONE,
  screenshotPath,
  unlabelled,
  waitForIslands,
} from "./helpers/browser";
import { plinthForBrowser } from "./helpers/browserServer";

// Headless Chromium against the built server: the operator on a phone, the manager at a
// desk, light and dark. Screenshots are kept in test-results/screenshots/.
const available = chromiumAvailable();
const plinth = plinthForBrowser();

/** Signs in by keyboard alone: the e-mail field has focus when the page opens. */
async function signInByKeyboard(page: Page, email: string) {
  await page.goto(`${plinth.url}/login`);
  await expect.poll(() => page.evaluate(() => document.activeElement?.id)).toBe("email");
  await page.keyboard.type(email);
  await page.keyboard.press("Tab");
  await page.keyboard.type("demo-plinth-pass");
  await page.keyboard.press("Enter");
  await page.waitForURL(`${plinth.url}/`);
}

const bodyBackground = (page: Page) =>
  page.evaluate(() => getComputedStyle(document.documentElement).backgroundColor);
const luminance = (rgb: string) => {
  const [r, g, b] = rgb.match(/\d+/g)!.map(Number) as [number, number, number];
  return (0.2126 * r + 0.7152 * g + 0.0722 * b) / 255;
};

describe.skipIf(!available)("in the browser", () => {
  for (const scheme of ["light", "dark"] as const) {
    it(`the operator signs in on a phone (${scheme}) and lands on the shift page`, async () => {
      const { context, close } = await openBrowser({ ...PHONE, colorScheme: scheme });
      try {
        const page = await context.newPage();
        await page.goto(`${plinth.url}/login`);
        expect(await unlabelled(page)).toEqual([]);
        await page.screenshot({ path: screenshotPath(`login-phone-${scheme}`), fullPage: true });
        await signInByKeyboard(page, "operator@example.com");
        await expect.poll(() => page.locator("h1").textContent()).toBe("On shift");
        const nav = await page.locator("nav[aria-label=Main]").textContent();
        expect(nav).not.toContain("Team");
        expect(nav).not.toContain("Audit");
        await expect.poll(() => page.getByText("P-2611-04").count()).toBeGreaterThan(0);
        // Nothing wider than the phone.
        expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(
          390,
        );
        const lum = luminance(await bodyBackground(page));
        if (scheme === "dark") expect(lum).toBeLessThan(0.2);
        else expect(lum).toBeGreaterThan(0.8);
        await page.screenshot({ path: screenshotPath(`operator-phone-${scheme}`), fullPage: true });

        await page.goto(`${plinth.url}/team`);
        expect(await page.locator("h1").textContent()).toBe("This page is not open to your role");
      } finally {
        await close();
      }
    });

    it(`every page a manager opens fits a phone (${scheme}): nothing wider than 390 px`, async () => {
      const { page, close } = await openSignedIn(
        { ...PHONE, colorScheme: scheme },
        "manager@example.com",
        plinth.url,
      );
      try {
        const wide: string[] = [];
        for (const path of [
          "/",
          "/floor",
          "/alerts",
          "/alerts/rules",
          "/on-call",
          "/pours",
          "/ready",
          "/mixes",
          "/bins",
          "/sensors",
          "/uploads",
          "/gateways",
          "/team",
          "/audit",
          "/account",
        ]) {
          await page.goto(`${plinth.url}${path}`);
          await waitForIslands(page);
          const width = await page.evaluate(() => document.documentElement.scrollWidth);
          if (width > 390) wide.push(`${path}: ${width} px`);
        }
        expect(wide).toEqual([]);
      } finally {
        await close();
      }
    });

    it(`the manager signs in at a desk (${scheme}), adds a person and reads the audit log`, async () => {
      const { context, close } = await openBrowser({ ...DESK, colorScheme: scheme });
      try {
        const page = await context.newPage();
        await signInByKeyboard(page, "manager@example.com");
        await expect.poll(() => page.locator("h1").textContent()).toBe("Plant overview");
        await page.screenshot({
          path: screenshotPath(`manager-desktop-${scheme}`),
          fullPage: true,
        });

        await page.getByRole("link", { name: "Team", exact: true }).click();
        await page.waitForURL(`${plinth.url}/team`);
        await page.locator("astro-island:not([ssr])").first().waitFor(); // hydrated
        expect(await unlabelled(page)).toEqual([]);
        await page.getByLabel("Name", { exact: true }).fill(`Night Hand ${scheme}`);
        await page.getByLabel("E-mail", { exact: true }).fill(`night.${scheme}@example.com`);
        await page.getByLabel("Role", { exact: true }).selectOption("operator");
        await page.getByRole("button", { name: "Add person" }).click();
        await expect
          .poll(() => page.getByTestId("one-time-password").textContent())
          .toMatch(/^[a-z2-9]{4}(-[a-z2-9]{4}){3}$/);
        await page.screenshot({ path: screenshotPath(`manager-team-${scheme}`), fullPage: true });

        await page.getByRole("link", { name: "Audit log" }).first().click();
        await page.waitForURL(`${plinth.url}/audit`);
        await expect.poll(() => page.getByText("Person added").count()).toBeGreaterThan(0);
        await page.screenshot({ path: screenshotPath(`manager-audit-${scheme}`), fullPage: false });

        await page.goto(`${plinth.url}/account`);
        expect(await unlabelled(page)).toEqual([]);
        await page.screenshot({
          path: screenshotPath(`manager-account-${scheme}`),
          fullPage: true,
        });
      } finally {
        await close();
      }
    });
  }

  it("switches to the dark theme from the header and keeps it", async () => {
    const { context, close } = await openBrowser({ ...DESK, colorScheme: "light" });
    try {
      const page = await context.newPage();
      await signInByKeyboard(page, "qc@example.com");
      expect(luminance(await bodyBackground(page))).toBeGreaterThan(0.8);
      await page.locator("[data-theme-switch]").click(); // system -> dark
      await page.waitForLoadState("load");
      await expect.poll(async () => luminance(await bodyBackground(page))).toBeLessThan(0.2);
      await page.goto(`${plinth.url}/account`);
      expect(await page.evaluate(() => document.documentElement.dataset.theme)).toBe("dark");
    } finally {
      await close();
    }
  });
});
