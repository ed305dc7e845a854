import { describe, expect, it } from "vitest";
import { chromiumAvailable, DESK, openSignedIn, PHONE, screenshotPath } from "./helpers/browser";
import { plinthForBrowser } from "./helpers/browserServer";
import { demoEmail } from "./helpers/server";

// A mix's calibration in a real browser: QC opens HS-10, adds a break, fits, and sees the
// chart and the warnings; on a phone in the dark, FC-8's warnings and chart are readable.
const available = chromiumAvailable();
const plinth = plinthForBrowser();

describe.skipIf(!available)("a mix's calibration", () => {
  it("lets QC on a desk add a break to HS-10, fit it, and read the chart and warnings", async () => {
    const { page, close } = await openSignedIn(
      { ...DESK, colorScheme: "light" },
      demoEmail("qc"),
      plinth.url,
    );
    try {
      await page.goto(`${plinth.url}/mixes`);
      await page.getByTestId("mix-table").getByRole("link", { name: "HS-10" }).click();
      await page.waitForURL(/\/mixes\/\d+$/);
      const chart = page.getByTestId("calibration-chart");
      await expect
        .poll(() => chart.locator("canvas").count(), { timeout: 5_000 })
        .toBeGreaterThan(0);
      await expect.poll(() => page.getByTestId("breaks-table").locator("tbody tr").count()).toBe(5);

      // A 2-day set broken lower than the 1-day set: a slip the fit must point out.
      await page.getByText("Add a break", { exact: true }).click();
      await page.getByLabel("Age at the break").fill("2");
      await page.getByLabel("Mean strength (psi)").fill("4000");
      await expect(
        page.getByLabel("Curing temperature (°F)", { exact: true }).inputValue(),
      ).resolves.toBe("73.4");
      // 2 d at 23 °C, datum −10 °C: 48 × 33 = 1,584 °C·h (ASTM C1074 Eq. 1)
      await expect
        .poll(() => page.getByRole("status").filter({ hasText: "Maturity: 1,584 °C·h" }).count())
        .toBe(1);
      await page.getByRole("textbox", { name: "Specimens" }).fill("HS10-C6 A, B");
      await page.getByRole("button", { name: "Add the break" }).click();
      await expect
        .poll(() => page.getByRole("status").filter({ hasText: "Break at 2 d added" }).count(), {
          timeout: 5_000,
        })
        .toBe(1);
      await expect.poll(() => page.getByTestId("breaks-table").locator("tbody tr").count()).toBe(6);
      expect(await page.getByTestId("breaks-table").textContent()).toContain("Not yet");

      await page.getByRole("button", { name: "Fit 6 breaks…" }).click();
      const dialog = page.getByRole("dialog");
      expect(await dialog.textContent()).toContain("every strength estimate");
      await dialog.getByRole("button", { name: "Fit and make current" }).click();
      await expect
        .poll(() => page.getByRole("status").filter({ hasText: "fitted to 6 breaks" }).count(), {
          timeout: 5_000,
        })
        .toBe(1);
      const warnings = page.getByTestId("fit-warnings").first();
      await expect
        .poll(() => warnings.locator('[data-code="breaks-not-increasing"]').count())
        .toBe(1);
      expect(await page.getByTestId("fit-state").textContent()).toContain("with warnings");
      expect(await page.getByTestId("fit-summary").textContent()).toContain("6, 6");
      expect(await page.getByTestId("fit-history").locator("tbody tr").count()).toBe(2);
      expect(await page.getByTestId("breaks-table").textContent()).not.toContain("Not yet");
      expect(await chart.getAttribute("aria-label")).toContain("6 breaks in the fit");
      await page.screenshot({ path: screenshotPath("qc-mix-calibration-desktop"), fullPage: true });
    } finally {
      await close();
    }
  });

  it("shows FC-8's warnings and chart on a phone in the dark without sideways scrolling", async () => {
    const { page, close } = await openSignedIn(
      { ...PHONE, colorScheme: "dark" },
      demoEmail("qc"),
      plinth.url,
    );
    try {
      await page.goto(`${plinth.url}/mixes`);
      await page.getByRole("list", { name: "Mixes" }).getByRole("link", { name: "FC-8" }).click();
      await page.waitForURL(/\/mixes\/\d+$/);
      await expect
        .poll(() => page.getByTestId("calibration-chart").locator("canvas").count(), {
          timeout: 5_000,
        })
        .toBeGreaterThan(0);
      // FC-8 has breaks at four ages (1, 3, 7, 28 d): fewer than the five a calibration wants.
      expect(
        await page.getByTestId("fit-warnings").first().locator('[data-code="few-ages"]').count(),
      ).toBe(1);
      // The phone's cards give each break's equivalent age, as the desk's table does.
      const cards = page.getByRole("list", { name: "Cylinder breaks of FC-8" }).locator("li");
      await expect.poll(() => cards.count()).toBeGreaterThan(0);
      const withAge = await cards.evaluateAll(
        (els) => els.filter((e) => /equivalent age \d+\.\d h/.test(e.textContent ?? "")).length,
      );
      expect(withAge).toBe(await cards.count());
      expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(
        390,
      );
      await page.screenshot({
        path: screenshotPath("qc-mix-calibration-phone-dark"),
        fullPage: true,
      });
    } finally {
      await close();
    }
  });

  it("shows a viewer the calibration read only", async () => {
    const { page, close } = await openSignedIn(PHONE, demoEmail("viewer"), plinth.url);
    try {
      await page.goto(`${plinth.url}/mixes`);
      await page.getByRole("list", { name: "Mixes" }).getByRole("link", { name: "HS-10" }).click();
      await page.waitForURL(/\/mixes\/\d+$/);
      await expect
        .poll(() => page.getByTestId("breaks-table").locator("tbody tr").count(), {
          timeout: 5_000,
        })
        .toBeGreaterThan(0);
      expect(await page.getByText("Add a break", { exact: true }).count()).toBe(0);
      expect(await page.getByRole("button", { name: /^Fit / }).count()).toBe(0);
      expect(await page.getByRole("button", { name: /^Remove/ }).count()).toBe(0);
    } finally {
      await close();
    }
  });
});
