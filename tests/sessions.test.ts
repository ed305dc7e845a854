import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { call, demoEmail, signIn, startPlinth, type RunningPlinth } from "./helpers/server";

// Sessions last SESSION_DAYS and slide: past half their life a request renews them.
// Here a session lasts about 4.3 s so both can be seen.
let plinth: RunningPlinth;
beforeAll(async () => {
  plinth = await startPlinth({ env: { SESSION_DAYS: "0.00005" } });
});
afterAll(async () => {
  await plinth?.stop();
});

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe("session lifetime", () => {
  it("renews a session used past half its life", async () => {
    const cookie = await signIn(plinth.url, demoEmail("operator"));
    await sleep(2_600);
    const res = await call(plinth.url, cookie, "/api/v1/me");
    expect(res.status).toBe(200);
    expect(
      res.headers
        .getSetCookie()
        .some((c) => c.startsWith("plinth_session=") && /Max-Age=\d+/.test(c)),
    ).toBe(true);
    await sleep(2_600);
    // Past the original expiry, but renewed: still good.
    expect((await call(plinth.url, cookie, "/api/v1/me")).status).toBe(200);
  });

  it("expires a session left idle", async () => {
    const cookie = await signIn(plinth.url, demoEmail("qc"));
    await sleep(4_800);
    const res = await call(plinth.url, cookie, "/api/v1/me");
    expect(res.status).toBe(401);
    const page = await call(plinth.url, cookie, "/");
    expect(page.status).toBe(302);
    expect(page.headers.getSetCookie().join()).toMatch(/plinth_session=;/);
  });
});
