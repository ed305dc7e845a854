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

// The strength page and the strip release in a real browser (QC at a desk), and the floor's
// strip and ship list on an operator's phone in the dark.
const available = chromiumAvailable();
const plinth = plinthForBrowser();

describe.skipIf(!available)("strip and ship in the browser", () => {
  it("QC signs a strip release of a demo pour that has reached strip, and sees it recorded", async () => {
    // Pick the demo pour still curing whose strip strength is reached (P-2611-03 in the demo).
    const viewer = await signIn(plinth.url, demoEmail("viewer"));
    const ready = (await (await call(plinth.url, viewer, "/api/v1/ready")).json()) as {
      ready_to_strip: { pour_id: number; code: string; strip: { reached_at: string | null } }[];
    };
    const pour = ready.ready_to_strip[0]!;
    expect(pour.strip.reached_at).not.toBeNull();

    const { page, close } = await openSignedIn(
      { ...DESK, colorScheme: "light" },
      demoEmail("qc"),
      plinth.url,
    );
    try {
      await page.goto(`${plinth.url}/pours/${pour.pour_id}/strength`);
      await waitForIslands(page);
      await expect.poll(() => page.getByRole("progressbar").count(), { timeout: 5_000 }).toBe(2);
      expect(await page.getByTestId("milestone-strip").textContent()).toMatch(/Reached/);
      expect(await page.locator("tr[data-governing=true]").count()).toBe(1);
      await expect
        .poll(() => page.getByTestId("caution").textContent())
        .toMatch(/engineer of record/);

      await page.getByLabel("Note (optional)").fill("Stripped from the north end.");
      // At or above the threshold no override reason is asked for.
      expect(await page.getByTestId("override-needed").count()).toBe(0);
      await page.getByRole("button", { name: "Review the strip release" }).click();
      const confirm = page.getByTestId("confirm-release");
      await expect.poll(() => confirm.count(), { timeout: 5_000 }).toBe(1);
      // The confirmation repeats the caution before anything is recorded.
      expect(await confirm.textContent()).toMatch(
        /never replace, the judgement of the engineer of record/,
      );
      await page.getByRole("button", { name: "Sign off the strip release" }).click();
      await expect
        .poll(() => page.getByRole("status").filter({ hasText: "release of" }).count(), {
          timeout: 5_000,
        })
        .toBe(1);
      const recorded = page.getByTestId("release-strip");
      expect(await recorded.textContent()).toMatch(/Ravi Okafor/);
      expect(await recorded.textContent()).toMatch(/Stripped from the north end\./);
      expect(await page.getByTestId("milestone-strip").textContent()).toMatch(
        /Strip released by Ravi Okafor/,
      );
      await page.screenshot({ path: screenshotPath("qc-strip-release-desktop"), fullPage: true });

      const stored = (await (
        await call(plinth.url, viewer, `/api/v1/pours/${pour.pour_id}/releases`)
      ).json()) as { releases: { kind: string; note: string }[] };
      expect(stored.releases.map((r) => [r.kind, r.note])).toEqual([
        ["strip", "Stripped from the north end."],
      ]);
    } finally {
      await close();
    }
  });

  it("QC is asked for an override reason below the threshold", async () => {
    const viewer = await signIn(plinth.url, demoEmail("viewer"));
    const ready = (await (await call(plinth.url, viewer, "/api/v1/ready")).json()) as {
      coming_up: { pour_id: number; next: string }[];
    };
    const pour = ready.coming_up.find((p) => p.next === "strip")!;
    const { page, close } = await openSignedIn(
      { ...DESK, colorScheme: "dark" },
      demoEmail("qc"),
      plinth.url,
    );
    try {
      await page.goto(`${plinth.url}/pours/${pour.pour_id}/strength`);
      await waitForIslands(page);
      await expect
        .poll(() => page.getByTestId("override-needed").count(), { timeout: 5_000 })
        .toBe(1);
      await page.getByRole("button", { name: "Review the strip release" }).click();
      await expect
        .poll(() => page.locator("#override-reason-err").textContent(), { timeout: 5_000 })
        .toMatch(/reason/);
      expect(await page.getByTestId("confirm-release").count()).toBe(0);
    } finally {
      await close();
    }
  });

  it("the operator opens the strip and ship list on a phone in the dark", async () => {
    const { page, close } = await openSignedIn(
      { ...PHONE, colorScheme: "dark" },
      demoEmail("operator"),
      plinth.url,
    );
    try {
      await page.goto(`${plinth.url}/ready`);
      await waitForIslands(page);
      await expect
        .poll(() => page.getByTestId("ready-row").count(), { timeout: 5_000 })
        .toBeGreaterThan(3);
      // Sections in order, with the uncalibrated pour listed apart.
      const headings = await page.getByRole("heading", { level: 2 }).allTextContents();
      expect(headings.map((h) => h.replace(/\s*\(\d+\)$/, ""))).toEqual([
        "Ready to strip now",
        "Ready to ship now",
        "Coming up",
        "Cannot estimate",
      ]);
      expect(
        await page
          .getByTestId("list-cannot_estimate")
          .getByText("Cannot estimate: mix not calibrated")
          .count(),
      ).toBeGreaterThan(0);
      expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(
        390,
      );
      await page.screenshot({ path: screenshotPath("operator-ready-phone-dark"), fullPage: true });
      // Each row leads to the pour's strength page.
      await page.getByTestId("ready-row").first().click();
      await page.waitForURL(/\/pours\/\d+\/strength$/);
      // Operators read; only QC and managers sign.
      await expect
        .poll(() => page.getByText("Only QC and managers sign off releases.").count(), {
          timeout: 5_000,
        })
        .toBe(1);
      expect(await page.getByRole("button", { name: /Review the/ }).count()).toBe(0);
    } finally {
      await close();
    }
  });
});
