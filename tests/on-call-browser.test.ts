import type { Page } from "playwright-core";
import { beforeAll, describe, expect, it } from "vitest";
import {
  chromiumAvailable,
  DESK,
  openSignedIn,
  PHONE,
  screenAt,
  screenshotPath,
  waitForIslands,
} from "./helpers/browser";
import { plinthForBrowser } from "./helpers/browserServer";
import { call, demoEmail, signIn } from "./helpers/server";

// The on-call page in a real browser: a manager keeps the rota by keyboard alone; everyone
// reads who is on call now at phone and desktop sizes, light and dark.
const available = chromiumAvailable();
const plinth = plinthForBrowser();
beforeAll(async () => {
  if (!available) return;
  // Someone on call around the clock, whatever the demo seeded.
  const cookie = await signIn(plinth.url, "manager@example.com");
  const rota = (await (await call(plinth.url, cookie, "/api/v1/on-call")).json()) as {
    shifts: unknown[];
  };
  if (rota.shifts.length === 0) {
    const me = await signIn(plinth.url, "operator@example.com");
    const { id } = (await (await call(plinth.url, me, "/api/v1/me")).json()) as { id: number };
    const res = await call(plinth.url, cookie, "/api/v1/on-call", {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify({
        name: "Around the clock",
        user_id: id,
        weekdays: [0, 1, 2, 3, 4, 5, 6],
        start: "00:00",
        end: "00:00",
      }),
    });
    if (res.status !== 201) throw new Error(`adding a shift answered ${res.status}`);
  }
});

const focusedId = (page: Page) => page.evaluate(() => document.activeElement?.id ?? "");

describe.skipIf(!available)("the on-call page", () => {
  it("lets a manager add a night shift by keyboard alone", async () => {
    const { page, close } = await openSignedIn(DESK, demoEmail("manager"), plinth.url);
    try {
      await page.goto(`${plinth.url}/on-call`);
      await waitForIslands(page);

      await page.focus("#shift-person");
      await page.keyboard.type("Dana"); // a closed select picks the option typed
      expect(await page.inputValue("#shift-person")).not.toBe("");
      await page.keyboard.press("Tab");
      expect(await focusedId(page)).toBe("shift-name");
      await page.keyboard.type("Weeknights");
      await page.keyboard.press("Tab");
      expect(await focusedId(page)).toBe("shift-weekdays"); // "Every day", checked
      await page.keyboard.press("Space"); // clears every day
      for (let d = 0; d < 5; d++) {
        await page.keyboard.press("Tab"); // Mon ... Fri
        await page.keyboard.press("Space");
      }
      await page.keyboard.press("Tab"); // Sat
      await page.keyboard.press("Tab"); // Sun
      await page.keyboard.press("Tab");
      expect(await focusedId(page)).toBe("shift-start");
      await page.keyboard.type("2200");
      await page.keyboard.press("Tab");
      expect(await focusedId(page)).toBe("shift-end");
      expect(await page.inputValue("#shift-start")).toBe("22:00"); // tidied on leaving
      await page.keyboard.type("6");
      await page.keyboard.press("Tab");
      expect(await page.inputValue("#shift-end")).toBe("06:00");
      expect(await page.getByText("Runs past midnight").textContent()).toContain(
        "from 22:00 on each chosen day to 06:00 the next morning",
      );
      expect(await focusedId(page)).toBe("shift-escalation-order");
      await page.keyboard.press("ArrowDown");
      await page.keyboard.press("ArrowDown"); // 3rd: second escalation
      await page.keyboard.press("Tab");
      await page.keyboard.press("Enter"); // Add shift

      await expect
        .poll(() => page.getByRole("status").filter({ hasText: "Added." }).textContent())
        .toContain("Weeknights for Dana Whitfield: Mon–Fri, 22:00 – 06:00 next day");
      const card = page.locator("[data-shift]").filter({ hasText: "Weeknights" });
      expect(await card.textContent()).toContain("3rd: second escalation");

      const cookie = await signIn(plinth.url, "manager@example.com");
      const rota = (await (await call(plinth.url, cookie, "/api/v1/on-call")).json()) as {
        shifts: {
          name: string;
          user_name: string;
          weekdays: number[];
          start: string;
          end: string;
          escalation_order: number;
        }[];
      };
      expect(rota.shifts.find((s) => s.name === "Weeknights")).toEqual(
        expect.objectContaining({
          user_name: "Dana Whitfield",
          weekdays: [1, 2, 3, 4, 5],
          start: "22:00",
          end: "06:00",
          escalation_order: 2,
        }),
      );

      // Every input has a label; the week shows the new nights (Monday from 22:00, Tuesday
      // until 06:00), whoever else is on call.
      const unlabelled = await page.evaluate(() =>
        [...document.querySelectorAll("input, select")]
          .filter((el) => !((el as HTMLInputElement).labels?.length ?? 0))
          .map((el) => el.outerHTML.slice(0, 80)),
      );
      expect(unlabelled).toEqual([]);
      expect(await page.locator('[data-day="Monday"]').textContent()).toMatch(
        /22:00–24:00[^0-9]*Dana Whitfield/,
      );
      expect(await page.locator('[data-day="Tuesday"]').textContent()).toMatch(
        /00:00–06:00[^0-9]*Dana Whitfield/,
      );
    } finally {
      await close();
    }
  });

  it("lets a person set their phone and how they are told on their account page", async () => {
    const { page, close } = await openSignedIn(PHONE, demoEmail("qc"), plinth.url);
    try {
      await page.goto(`${plinth.url}/on-call`);
      await page.getByRole("link", { name: "Your phone and how you are told" }).click();
      await page.waitForURL(`${plinth.url}/account`);
      await waitForIslands(page);

      // QC gets the daily digest until they choose otherwise (src/lib/notifyChoices.ts).
      const digest = page.getByRole("checkbox", { name: /Daily digest e-mail/ });
      expect(await digest.isChecked()).toBe(true);

      await page.fill("#phone", "");
      await expect
        .poll(() =>
          page.getByRole("status").filter({ hasText: "Texts need a phone number" }).count(),
        )
        .toBe(1);
      await page.fill("#phone", "555-0100");
      await page.getByRole("button", { name: "Save" }).click();
      // E.164: + and country code, 8 to 15 digits (ITU-T E.164).
      await expect
        .poll(() => page.locator("#phone-err").textContent())
        .toContain("international form");
      expect(await page.getAttribute("#phone", "aria-invalid")).toBe("true");

      await page.fill("#phone", "+1 555 010 0142");
      await digest.uncheck();
      await page.getByRole("checkbox", { name: "Text message" }).uncheck();
      await page.getByRole("button", { name: "Save" }).click();
      await expect
        .poll(() => page.getByRole("status").filter({ hasText: "Saved." }).count())
        .toBe(1);

      await page.reload();
      await waitForIslands(page);
      expect(await page.inputValue("#phone")).toBe("+15550100142");
      expect(await page.getByRole("checkbox", { name: /Daily digest e-mail/ }).isChecked()).toBe(
        false,
      );
      expect(await page.getByRole("checkbox", { name: "Text message" }).isChecked()).toBe(false);
    } finally {
      await close();
    }
  });

  for (const [who, width, scheme] of [
    ["operator", 390, "dark"],
    ["viewer", 390, "light"],
    ["manager", 1440, "dark"],
    ["qc", 1440, "light"],
  ] as const) {
    it(`shows ${who} who is on call now (${width} px, ${scheme})`, async () => {
      const { page, close } = await openSignedIn(
        screenAt(width, scheme),
        demoEmail(who),
        plinth.url,
      );
      try {
        await page.goto(`${plinth.url}/on-call`);
        await waitForIslands(page);
        const now = page.getByTestId("on-call-now");
        expect(await now.getByRole("heading", { name: "On call now" }).count()).toBe(1);
        expect(await page.getByTestId("on-call-until").textContent()).toMatch(
          /until|all week|No shift/,
        );
        expect(
          await now
            .getByRole("link", { name: "Your phone and how you are told" })
            .getAttribute("href"),
        ).toBe("/account");
        const editable = await page.getByRole("heading", { name: "Add a shift" }).count();
        expect(editable).toBe(who === "manager" ? 1 : 0);
        const shifts = await page.locator("[data-shift]").count();
        expect(shifts).toBeGreaterThan(0);
        expect(await page.getByRole("button", { name: /^Remove/ }).count()).toBe(
          who === "manager" ? shifts : 0,
        );
        // No phone number is on the page, only its last digits.
        expect(await page.content()).not.toMatch(/\+1555\d{7}/);
        if (width < 500)
          expect(
            await page.evaluate(() => document.documentElement.scrollWidth),
          ).toBeLessThanOrEqual(width);
        await page.screenshot({
          path: screenshotPath(`on-call-${who}-${width < 500 ? "phone" : "desktop"}-${scheme}`),
          fullPage: true,
        });
      } finally {
        await close();
      }
    });
  }
});
