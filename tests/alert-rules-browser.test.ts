import Database from "better-sqlite3";
import type { Locator, Page } from "playwright-core";
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
import { demoEmail } from "./helpers/server";

// The alert-rules page in a real browser. QC adds a rule by keyboard alone in °F (the demo
// accounts use US units), changes it, meets the refusal to delete a rule with a record and
// disables it instead; an operator reads the rules with no way to change them. °F ↔ °C by
// °F = 1.8·°C + 32, exact by the definition of the Fahrenheit degree (domain.md §8.3).

const available = chromiumAvailable();
let attempts = 0;
const plinth = plinthForBrowser();

async function openRules(page: Page) {
  await page.goto(`${plinth.url}/alerts/rules`);
  await waitForIslands(page);
}

/** Presses Tab until the element is focused (at most `max` times): it must be reachable. */
async function tabTo(page: Page, target: Locator, max = 40) {
  for (let i = 0; i < max; i++) {
    await page.keyboard.press("Tab");
    if (await target.evaluate((el) => el === document.activeElement)) return;
  }
  throw new Error(`not reached by Tab: ${await target.evaluate((el) => el.outerHTML)}`);
}

interface Rule {
  id: number;
  name: string;
  threshold: number | null;
  clear_margin: number;
  hold_min: number;
  audience: string;
  enabled: boolean;
  source: string | null;
}

async function ruleNamed(page: Page, name: string): Promise<Rule | undefined> {
  const res = await page.request.get(`${plinth.url}/api/v1/alert-rules`);
  expect(res.status()).toBe(200);
  return ((await res.json()) as { rules: Rule[] }).rules.find((r) => r.name === name);
}

const card = (page: Page, name: string) =>
  page.locator("article[data-testid=rule]", {
    has: page.getByRole("heading", { name, exact: true }),
  });

describe.skipIf(!available)("the alert-rules page", () => {
  it("lets QC add a rule by keyboard in °F, change it, and disable the one it may not delete", async () => {
    const { page, close } = await openSignedIn(
      { ...DESK, colorScheme: "light" },
      demoEmail("qc"),
      plinth.url,
    );
    // Names of their own, so a second attempt of this test does not meet the first one's rules.
    const attempt = ++attempts;
    const name3 = `Bed 3 too hot (${attempt})`;
    const spare = `Spare rule (${attempt})`;
    try {
      await openRules(page);
      expect(await page.getByRole("heading", { level: 1 }).textContent()).toBe("Alert rules");
      expect(
        await page.getByRole("link", { name: "Alerts", exact: true }).first().getAttribute("href"),
      ).toBe("/alerts");

      // Open the form by keyboard and leave it empty: the errors are named and focus goes to them.
      await tabTo(page, page.getByRole("button", { name: "Add a rule" }));
      await page.keyboard.press("Enter");
      const form = page.getByRole("form", { name: "Add a rule" });
      await form.waitFor();
      const name = form.getByLabel("Name");
      await tabTo(page, name);
      await page.keyboard.press("Enter");
      await expect.poll(() => form.getByText("Enter a name").count()).toBe(1);
      expect(await name.evaluate((el) => el === document.activeElement)).toBe(true);

      await page.keyboard.type(name3);
      await tabTo(page, form.getByLabel("What it watches for"));
      await page.keyboard.type("High temperature");
      await expect
        .poll(() => form.getByLabel("What it watches for").inputValue())
        .toBe("temp_high");
      const limit = form.getByLabel("Limit (°F)");
      await tabTo(page, limit);
      await page.keyboard.press("ControlOrMeta+a");
      // 95 °F = 35 °C, ACI 301's most at discharge (domain.md §5.3), as a test value here.
      await page.keyboard.type("95");
      await tabTo(page, form.getByLabel("Hold time (minutes)"));
      await page.keyboard.press("ControlOrMeta+a");
      await page.keyboard.type("10");
      await tabTo(page, form.getByLabel("Clearing margin (°F)"));
      await page.keyboard.press("ControlOrMeta+a");
      // A margin is a difference: 3.6 °F = 2 °C (×1.8, no offset; domain.md §8.3).
      await page.keyboard.type("3.6");
      await expect
        .poll(() => form.getByTestId("rule-example").textContent())
        .toContain(
          "temperature above 95 °F lasting 10 min, and clears once back at 91.4 °F or less",
        );
      // The hint says what the hold and the margin do, in plain words.
      expect(await form.getByText(/one odd reading wakes nobody/).count()).toBe(1);
      expect(await form.getByText(/wavering right at the limit makes one alert/).count()).toBe(1);
      await tabTo(
        page,
        form.getByRole("radio", { name: "Texts the operator on call, e-mails QC and managers" }),
      );
      await page.keyboard.press("ArrowDown");
      expect(
        await form.getByRole("radio", { name: "E-mails QC and managers", exact: true }).isChecked(),
      ).toBe(true);
      // E-mail alone does not escalate, so the escalation input goes away.
      expect(await form.getByLabel("Escalate after (minutes)").count()).toBe(0);
      await tabTo(page, form.getByLabel("Source (optional)"));
      await page.keyboard.type("Plant specification 4.2");
      await page.keyboard.press("Enter");

      await expect
        .poll(() => page.getByTestId("rules-notice").textContent(), { timeout: 5_000 })
        .toBe(`Rule “${name3}” added.`);
      const made = card(page, name3);
      expect(await made.getByTestId("rule-watch").textContent()).toBe("temperature above 95 °F");
      expect(await made.textContent()).toContain("E-mails QC and managers");
      let stored = (await ruleNamed(page, name3))!;
      expect(stored).toMatchObject({
        threshold: 35,
        clear_margin: 2,
        hold_min: 10,
        audience: "quality",
        enabled: true,
        source: "Plant specification 4.2",
      });

      // Change the limit only: the margin shown in °F is not sent back, so it stays exactly 2 °C.
      await made.getByRole("button", { name: `Edit ${name3}` }).focus();
      await page.keyboard.press("Enter");
      const edit = page.getByRole("form", { name: `Edit “${name3}”` });
      await edit.waitFor();
      expect(await edit.getByLabel("Limit (°F)").inputValue()).toBe("95");
      expect(await edit.getByLabel("Clearing margin (°F)").inputValue()).toBe("3.6");
      await tabTo(page, edit.getByLabel("Limit (°F)"));
      await page.keyboard.press("ControlOrMeta+a");
      await page.keyboard.type("100");
      await page.keyboard.press("Enter");
      await expect
        .poll(() => made.getByTestId("rule-watch").textContent(), { timeout: 5_000 })
        .toBe("temperature above 100 °F");
      stored = (await ruleNamed(page, name3))!;
      // 100 °F = 37.7778 °C (kept to 4 decimals).
      expect(stored.threshold).toBe(37.7778);
      expect(stored.clear_margin).toBe(2);

      // Once the rule has a record, deleting it is refused and the page offers to disable it.
      const db = new Database(plinth.dbPath, { fileMustExist: true });
      try {
        const now = Date.now();
        db.prepare(
          `insert into alert_episodes (rule_id, sensor_id, state, severity, started_at, opened_at, cleared_at, created_at)
           values (?, 'EP-01', 'cleared', 'warning', ?, ?, ?, ?)`,
        ).run(stored.id, now - 3_600_000, now - 3_600_000, now - 1_800_000, now);
      } finally {
        db.close();
      }
      page.once("dialog", (d) => void d.accept());
      await made.getByRole("button", { name: `Delete ${name3}` }).focus();
      await page.keyboard.press("Enter");
      const refusal = made.getByRole("alert");
      await expect
        .poll(() => refusal.textContent(), { timeout: 5_000 })
        .toContain("Disable it instead");
      await expect.poll(() => refusal.evaluate((el) => el === document.activeElement)).toBe(true);
      await page.keyboard.press("Tab");
      await page.keyboard.press("Enter");
      const toggle = made.getByRole("switch", { name: `Enabled ${name3}` });
      await expect
        .poll(() => toggle.getAttribute("aria-checked"), { timeout: 5_000 })
        .toBe("false");
      expect(await made.textContent()).toContain("Off: disabled");
      expect((await ruleNamed(page, name3))!.enabled).toBe(false);

      // The switch answers the keyboard too.
      await toggle.focus();
      await page.keyboard.press("Space");
      await expect.poll(() => toggle.getAttribute("aria-checked"), { timeout: 5_000 }).toBe("true");
      expect((await ruleNamed(page, name3))!.enabled).toBe(true);
      await page.keyboard.press("Space");
      await expect
        .poll(() => toggle.getAttribute("aria-checked"), { timeout: 5_000 })
        .toBe("false");
      expect((await ruleNamed(page, name3))!.enabled).toBe(false);

      // A rule with no record is deleted after a confirmation.
      const quiet = await page.request.post(`${plinth.url}/api/v1/alert-rules`, {
        data: {
          name: spare,
          kind: "silent",
          threshold: 600,
          audience: "digest",
          enabled: false,
        },
        headers: { origin: plinth.url },
      });
      expect(quiet.status()).toBe(201);
      await openRules(page);
      page.once("dialog", (d) => void d.accept());
      await card(page, spare)
        .getByRole("button", { name: `Delete ${spare}` })
        .click();
      await expect
        .poll(() => page.getByTestId("rules-notice").textContent(), { timeout: 5_000 })
        .toBe(`Rule “${spare}” deleted.`);
      expect(await card(page, spare).count()).toBe(0);
      expect(await ruleNamed(page, spare)).toBeUndefined();

      await page.screenshot({
        path: screenshotPath("qc-alert-rules-desktop-light"),
        fullPage: true,
      });
    } finally {
      await close();
    }
  });

  it("fits a phone in the dark with the form open, without sideways scrolling", async () => {
    const { page, close } = await openSignedIn(
      { ...PHONE, colorScheme: "dark" },
      demoEmail("qc"),
      plinth.url,
    );
    try {
      await openRules(page);
      expect(await page.getByTestId("rule").count()).toBeGreaterThan(0);
      // "Cold cure bag" keeps 10 °C = 50 °F (domain.md §8.3).
      expect(await card(page, "Cold cure bag").getByTestId("rule-watch").textContent()).toBe(
        "temperature below 50 °F",
      );
      expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(
        390,
      );
      await page.screenshot({ path: screenshotPath("qc-alert-rules-phone-dark"), fullPage: true });
      await page.getByRole("button", { name: "Add a rule" }).click();
      await page.getByRole("form", { name: "Add a rule" }).waitFor();
      expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(
        390,
      );
      await page.screenshot({
        path: screenshotPath("qc-alert-rules-form-phone-dark"),
        fullPage: true,
      });
    } finally {
      await close();
    }
  });

  it.each([
    { ...PHONE, colorScheme: "light" as const, shot: "phone-light" },
    { ...DESK, mobile: false, colorScheme: "dark" as const, shot: "desktop-dark" },
  ])("shows an operator the rules read only ($shot)", async ({ shot, ...size }) => {
    const { page, close } = await openSignedIn(size, demoEmail("operator"), plinth.url);
    try {
      await openRules(page);
      expect(await page.getByTestId("rule").count()).toBeGreaterThan(0);
      expect(await page.getByTestId("read-only-note").textContent()).toContain(
        "QC or a manager edits them",
      );
      expect(await page.getByRole("button", { name: "Add a rule" }).count()).toBe(0);
      expect(await page.getByRole("switch").count()).toBe(0);
      expect(await page.getByRole("button", { name: /^(Edit|Delete) / }).count()).toBe(0);
      // Severity by word and mark, never colour alone.
      expect(await card(page, "Dry cure bag").textContent()).toContain("■Critical");
      expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(
        size.width,
      );
      await page.screenshot({
        path: screenshotPath(`operator-alert-rules-${shot}`),
        fullPage: true,
      });
    } finally {
      await close();
    }
  });
});
