import { describe, expect, it } from "vitest";
import { chromiumAvailable, DESK, openSignedIn, PHONE, screenshotPath } from "./helpers/browser";
import { plinthForBrowser } from "./helpers/browserServer";
import { demoEmail } from "./helpers/server";

// The manager reads a pour's cure history in a real browser: the three charts draw, the page
// fits a phone without sideways scrolling, and "Download CSV" hands over the file.
const available = chromiumAvailable();
const plinth = plinthForBrowser();

describe.skipIf(!available)("a pour's cure history in the browser", () => {
  for (const scheme of ["light", "dark"] as const) {
    it(`draws the temperature, humidity and strength charts on a desktop (${scheme})`, async () => {
      const { page, close } = await openSignedIn(
        { ...DESK, colorScheme: scheme },
        demoEmail("manager"),
        plinth.url,
      );
      try {
        await page.goto(`${plinth.url}/pours/1/history`);
        for (const id of ["history-temp-chart", "history-rh-chart", "history-strength-chart"])
          await expect
            .poll(() => page.getByTestId(id).locator("canvas").count(), { timeout: 10_000 })
            .toBeGreaterThan(0);
        await expect.poll(() => page.getByRole("heading", { name: "Sensors" }).count()).toBe(1);
        await page.screenshot({
          path: screenshotPath(`manager-pour-history-desktop${scheme === "dark" ? "-dark" : ""}`),
          fullPage: true,
        });
      } finally {
        await close();
      }
    });
  }

  it("fits a phone in the dark, and hands over the CSV", async () => {
    const { page, close } = await openSignedIn(
      { ...PHONE, colorScheme: "dark" },
      demoEmail("manager"),
      plinth.url,
    );
    try {
      await page.goto(`${plinth.url}/pours/1/history`);
      await expect
        .poll(() => page.getByTestId("history-strength-chart").locator("canvas").count(), {
          timeout: 10_000,
        })
        .toBeGreaterThan(0);
      expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(
        390,
      );
      await page.screenshot({ path: screenshotPath("manager-pour-history-phone"), fullPage: true });
      const [download] = await Promise.all([
        page.waitForEvent("download"),
        page.getByRole("link", { name: "Download CSV" }).click(),
      ]);
      expect(download.suggestedFilename()).toBe("P-2611-01-cure-history.csv");
    } finally {
      await close();
    }
  });
});
