import { describe, expect, it } from "vitest";
import {
  chromiumAvailable,
  openSignedIn,
  PHONE,
  screenshotPath,
  unlabelled,
} from "./helpers/browser";
import { plinthForBrowser } from "./helpers/browserServer";
import { demoEmail } from "./helpers/server";

// The operator brings a logger file in from a phone: choose it, check the preview, import.
const available = chromiumAvailable();
const plinth = plinthForBrowser();

const csv = [
  "Date/Time,Temp (°F),RH %",
  "2026-03-02 04:10,88.2,97",
  "2026-03-02 04:20,88.5,",
  "2026-03-02 04:30,probe error,96",
  "2026-03-02 04:40,88.9,96",
].join("\n");

describe.skipIf(!available)("logger uploads in the browser", () => {
  it("the operator uploads a file on a phone, sees the bad row in the preview, and imports the rest", async () => {
    const { page, close } = await openSignedIn(PHONE, demoEmail("operator"), plinth.url);
    try {
      await page.getByRole("link", { name: "Logger files" }).click();
      await page.waitForURL(`${plinth.url}/uploads`);
      await expect.poll(() => page.locator("h1").textContent()).toBe("Logger files");
      await page.locator("astro-island:not([ssr])").first().waitFor(); // hydrated

      await page.getByLabel("Logger file (CSV, at most 5 MiB)").setInputFiles({
        name: "bag-12-night.csv",
        mimeType: "text/csv",
        buffer: Buffer.from(csv, "utf8"),
      });
      await page.getByRole("heading", { name: "Preview of bag-12-night.csv" }).waitFor();
      await expect
        .poll(() => page.getByText('Rejected: temperature "probe error" is not a number').count())
        .toBe(1);
      expect(await page.getByLabel("Time column").inputValue()).toBe("0");
      expect(await page.getByLabel("Temperature column").inputValue()).toBe("1");
      expect(await page.getByLabel("°F (Fahrenheit)").isChecked()).toBe(true);
      expect(await unlabelled(page)).toEqual([]);

      await page.getByLabel("Sensor").fill("LOG-PHONE-12");
      await page.getByRole("button", { name: "Preview", exact: true }).click();
      await expect
        .poll(() => page.getByRole("button", { name: "Import 3 good rows" }).isEnabled())
        .toBe(true);
      await page.getByRole("button", { name: "Import 3 good rows" }).click();

      const result = page.getByTestId("upload-result");
      await result.waitFor();
      await expect
        .poll(() => result.getByRole("heading").textContent())
        .toBe("Imported bag-12-night.csv into LOG-PHONE-12");
      const figures = await result.locator("dd").allTextContents();
      expect(figures).toEqual(["3", "0", "1"]);
      expect(await result.textContent()).toContain(
        'Row 4: temperature "probe error" is not a number',
      );
      // Nothing wider than the phone.
      expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(
        390,
      );
      await page.screenshot({ path: screenshotPath("operator-upload-phone"), fullPage: true });

      await result.getByRole("link", { name: "See it in the history" }).click();
      await page.waitForURL(/\/uploads\?upload=\d+/);
      const entry = page.locator("li[id^=upload-].bg-info-bg");
      expect(await entry.textContent()).toContain("bag-12-night.csv");
      expect(await entry.textContent()).toContain("LOG-PHONE-12");
    } finally {
      await close();
    }
  });
});
