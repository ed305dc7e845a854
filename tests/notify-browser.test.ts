import Database from "better-sqlite3";
import { describe, expect, it } from "vitest";
import { chromiumAvailable, DESK, openSignedIn, screenshotPath } from "./helpers/browser";
import { plinthForBrowser } from "./helpers/browserServer";
import { demoEmail } from "./helpers/server";

// The dev outbox page in a real browser: what the demo's local fakes caught shows up on an
// open page by itself, under the banner that nothing left the machine.
const available = chromiumAvailable();
const plinth = plinthForBrowser();

function queue(dbPath: string, key: string, channel: "sms" | "email", to: string, body: string) {
  const db = new Database(dbPath);
  db.pragma("busy_timeout = 5000");
  try {
    const now = Date.now();
    db.prepare(
      `insert into notification_outbox
         (dedupe_key, channel, to_address, subject, body, status, attempts, next_attempt_at, created_at)
       values (?, ?, ?, ?, ?, 'pending', 0, ?, ?)`,
    ).run(key, channel, to, channel === "email" ? "Plinth: Room A is cold" : null, body, now, now);
  } finally {
    db.close();
  }
}

describe.skipIf(!available)("the dev outbox page", () => {
  it("shows a manager each text and e-mail the fakes caught, newest first, as they arrive", async () => {
    // The demo's own alerts (a bag seeded dry, pours at strip or ship strength) are sent at
    // start: wait for them, then count on from there.
    const settled = () => {
      const db = new Database(plinth.dbPath, { readonly: true });
      db.pragma("busy_timeout = 5000");
      try {
        const rows = db.prepare("select status, channel from notification_outbox").all() as {
          status: string;
          channel: string;
        }[];
        return rows.every((r) => r.status !== "pending") ? rows : null;
      } finally {
        db.close();
      }
    };
    await expect.poll(() => settled() !== null, { timeout: 30_000 }).toBe(true);
    const before = settled()!.filter((r) => r.status === "sent");
    const n0 = before.length;
    const e0 = before.filter((r) => r.channel === "email").length;
    queue(
      plinth.dbPath,
      "b:1",
      "email",
      "qc@example.com",
      "Room A air has been below 50 °F for 45 min (38.4 °F now).\nPours P-2611-02 and P-2611-04 cure there.",
    );
    queue(
      plinth.dbPath,
      "b:2",
      "sms",
      "+15550100003",
      "Plinth: cure bag CB-14 on P-2611-03 is dry (41 % RH for 30 min). Reply ACK to acknowledge.",
    );
    const { page, close } = await openSignedIn(DESK, demoEmail("manager"), plinth.url);
    try {
      await page.goto(`${plinth.url}/dev/outbox`);
      await expect
        .poll(() => page.getByTestId("fakes-banner").textContent())
        .toContain("nothing left this machine");
      const list = page.getByTestId("dev-outbox-list").locator("li");
      await expect.poll(() => list.count(), { timeout: 15_000 }).toBe(n0 + 2);

      // A notice queued while the page is open shows without a reload, on top.
      queue(
        plinth.dbPath,
        "b:3",
        "sms",
        "+15550100001",
        "Plinth: Room B heater is off. Reply ACK.",
      );
      await expect.poll(() => list.count(), { timeout: 15_000 }).toBe(n0 + 3);
      expect(await list.first().textContent()).toContain("Room B heater is off");
      expect(await list.first().getAttribute("data-channel")).toBe("sms");

      await page.getByRole("button", { name: "E-mail" }).click();
      await expect.poll(() => list.count()).toBe(e0 + 1);
      await page.getByRole("button", { name: "Everything" }).click();
      await expect.poll(() => list.count()).toBe(n0 + 3);
      await page.reload();
      await expect
        .poll(() => page.getByTestId("queue-table").locator("tbody tr").count())
        .toBe(n0 + 3);
      await page.screenshot({ path: screenshotPath("manager-dev-outbox-desktop"), fullPage: true });
    } finally {
      await close();
    }
  });
});
