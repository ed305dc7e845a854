import { describe, expect, it } from "vitest";
import {
  chromiumAvailable,
  DESK,
  openSignedIn,
  PHONE,
  screenshotPath,
  waitForIslands,
} from "./helpers/browser";
import { plinthForBrowser } from "./helpers/browserServer";
import { call, demoEmail, signIn } from "./helpers/server";

// The night-shift operator records a pour on a phone and lands on its page; QC enters a
// cylinder break on a desktop and is warned when it comes in low.
const available = chromiumAvailable();
const plinth = plinthForBrowser();

describe.skipIf(!available)("pours in the browser", () => {
  it("an operator on a phone records a pour and lands on its page", async () => {
    const { page, close } = await openSignedIn(PHONE, demoEmail("operator"), plinth.url);
    try {
      await page.goto(`${plinth.url}/pours`);
      await waitForIslands(page);
      await page.getByRole("button", { name: "New pour" }).click();
      await page.getByLabel("Pour code").fill("P-2612-01");
      await page.locator("#np-mix").selectOption({ label: "HS-10" });
      await page.getByLabel("Product 1", { exact: true }).fill("Post base 8 in.");
      await page.getByLabel("Pieces of product 1").fill("12");
      await page.locator('input[data-sensor="CB-09"]').check();
      await page.locator('input[data-sensor="EP-04"]').check();
      // The demo operator works in °F and inches: 95 °F is 35 °C (domain.md §5.3), above
      // HS-10's placing range of 10 to 32 °C (50 to 89.6 °F), so the form flags it at once.
      await page.getByLabel("Concrete temperature at discharge (°F)").fill("95");
      await expect.poll(() => page.getByText("Above the placing range of HS-10").count()).toBe(1);
      await page.getByLabel("Slump (in.)").fill("7");
      await page.getByLabel("Air content (%)").fill("2.2");
      await page.getByLabel("Unit weight (lb/ft³)").fill("148");
      await page.getByLabel("Cylinders made (ids)").fill("P2612-01-A, P2612-01-B");
      expect(await page.getByText("2 sensors picked").count()).toBe(1);
      expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(
        390,
      );
      await page.screenshot({ path: screenshotPath("operator-new-pour-phone"), fullPage: true });

      await page.getByRole("button", { name: "Record pour" }).click();
      await page.waitForURL(/\/pours\/\d+$/, { timeout: 10_000 });
      await expect
        .poll(() => page.getByRole("heading", { level: 1 }).textContent())
        .toContain("P-2612-01");
      expect(
        await page.locator('[data-testid="lifecycle"] [aria-current="step"]').textContent(),
      ).toContain("Curing");
      expect(await page.getByTestId("discharge-temp").textContent()).toContain("95.0 °F");
      expect(await page.getByText("Above placing range").count()).toBe(1);
      const sensors = page.getByRole("list", { name: "Sensors on the pour now" });
      expect(
        await sensors
          .locator("[data-sensor]")
          .evaluateAll((els) => els.map((e) => e.getAttribute("data-sensor"))),
      ).toEqual(["CB-09", "EP-04"]);
      expect(
        await page.getByRole("link", { name: "Strength and release" }).getAttribute("href"),
      ).toMatch(/^\/pours\/\d+\/strength$/);
      expect(await page.getByRole("link", { name: "Cure history" }).getAttribute("href")).toMatch(
        /^\/pours\/\d+\/history$/,
      );
      expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(
        390,
      );

      // What was sent is stored in SI: 95 °F = 35 °C, 7 in. = 177.8 mm (1 in. = 25.4 mm exactly).
      const id = Number(page.url().split("/").pop());
      const cookie = await signIn(plinth.url, "viewer@example.com");
      const pour = (await (await call(plinth.url, cookie, `/api/v1/pours/${id}`)).json()) as {
        fresh_tests: { discharge_temp_c: number; discharge_temp_flag: string; slump_mm: number };
        products: { product: string; piece_count: number }[];
      };
      expect(pour.fresh_tests.discharge_temp_c).toBeCloseTo(35, 2);
      expect(pour.fresh_tests.discharge_temp_flag).toBe("high");
      expect(pour.fresh_tests.slump_mm).toBeCloseTo(177.8, 1);
      expect(pour.products).toEqual([{ product: "Post base 8 in.", piece_count: 12, marks: null }]);

      // The record is corrected on the phone, by keyboard: it was a spread (SCC), 24 in.
      await page.getByRole("button", { name: "Edit products, tests and notes" }).click();
      await page.getByRole("radio", { name: "Slump" }).focus();
      await page.keyboard.press("ArrowRight");
      expect(await page.getByRole("radio", { name: "Spread (SCC)" }).isChecked()).toBe(true);
      await page.getByLabel("Spread (in.)").fill("24");
      await page.getByRole("button", { name: "Save" }).click();
      await expect
        .poll(async () => {
          const again = (await (await call(plinth.url, cookie, `/api/v1/pours/${id}`)).json()) as {
            fresh_tests: { slump_mm: number | null; spread_mm: number | null };
          };
          return again.fresh_tests;
        })
        .toMatchObject({ slump_mm: null, spread_mm: 609.6 });

      await page.emulateMedia({ colorScheme: "dark" });
      await page.screenshot({
        path: screenshotPath("operator-pour-page-phone-dark"),
        fullPage: true,
      });
    } finally {
      await close();
    }
  });

  it("QC enters a low cylinder break on a desktop and is told to recalibrate", async () => {
    const { page, close } = await openSignedIn(DESK, demoEmail("qc"), plinth.url);
    try {
      await page.goto(`${plinth.url}/pours?q=P-2611-03`);
      await page.getByRole("link", { name: "P-2611-03" }).click();
      await page.waitForURL(/\/pours\/\d+$/);
      await waitForIslands(page);
      await page.getByRole("button", { name: "Enter a break" }).click();
      await page.getByLabel("Cylinder id").fill("P2611-03-A");
      // 500 psi is far below any estimate of a 27-hour-old HS-10 pour in a heated room.
      await page.getByLabel("Strength (psi)").fill("500");
      await page.getByRole("button", { name: "Record break" }).click();
      await expect
        .poll(() => page.getByTestId("recalibrate-warning").count(), { timeout: 5_000 })
        .toBe(1);
      expect(await page.getByTestId("recalibrate-warning").textContent()).toContain(
        "below 90 % of the estimate: recalibrate HS-10",
      );
      expect(await page.getByRole("row", { name: /P2611-03-A/ }).textContent()).toContain(
        "Below 90 %: recalibrate",
      );
      await page.screenshot({ path: screenshotPath("qc-pour-breaks-desktop"), fullPage: true });
    } finally {
      await close();
    }
  });
});
