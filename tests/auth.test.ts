import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { call, demoEmail, signIn, startPlinth, type RunningPlinth } from "./helpers/server";

let plinth: RunningPlinth;
beforeAll(async () => {
  plinth = await startPlinth({ env: { LOGIN_MAX_FAILURES: "5", LOGIN_WINDOW_MINUTES: "15" } });
});
afterAll(async () => {
  await plinth?.stop();
});

const login = (body: unknown, headers: Record<string, string> = {}) =>
  fetch(`${plinth.url}/api/auth/login`, {
    method: "POST",
    headers: { "content-type": "application/json", ...headers },
    body: JSON.stringify(body),
    redirect: "manual",
  });

async function auditActions(
  cookie: string,
): Promise<{ action: string; actor: string; detail: unknown }[]> {
  const res = await call(plinth.url, cookie, "/api/v1/audit?limit=500");
  return ((await res.json()) as { entries: { action: string; actor: string; detail: unknown }[] })
    .entries;
}

describe("sign-in", () => {
  it("answers 200 with an httpOnly, SameSite=Lax session cookie", async () => {
    const res = await login({ email: "QC@example.com ", password: "demo-plinth-pass" });
    expect(res.status).toBe(200);
    const cookie = res.headers.getSetCookie().find((c) => c.startsWith("plinth_session="))!;
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Lax/i);
    expect(cookie).toMatch(/Path=\//);
    // Plain http to loopback (the demo): not Secure, or the browser would drop it.
    expect(cookie).not.toMatch(/;\s*Secure/i);
    const body = (await res.json()) as { user: { role: string } };
    expect(body.user.role).toBe("qc");
  });

  it("gives the same 401 for an unknown e-mail and a wrong password", async () => {
    const unknown = await login({ email: "nobody@example.com", password: "demo-plinth-pass" });
    const wrong = await login({ email: "viewer@example.com", password: "not-the-password" });
    expect(unknown.status).toBe(401);
    expect(wrong.status).toBe(401);
    expect(await unknown.json()).toEqual(await wrong.json());
    expect(unknown.headers.get("content-type")).toContain("application/problem+json");
  });

  it("answers 400 with per-field errors for a body of the wrong shape", async () => {
    const res = await login({ email: 7 });
    expect(res.status).toBe(400);
    const body = (await res.json()) as { errors: { field: string }[] };
    expect(body.errors.map((e) => e.field).sort()).toEqual(["email", "password"]);
  });

  it("sends a browser form back to the page it came from, or home", async () => {
    const form = (email: string, password: string, next: string) =>
      fetch(`${plinth.url}/api/auth/login`, {
        method: "POST",
        headers: { "content-type": "application/x-www-form-urlencoded", origin: plinth.url },
        body: new URLSearchParams({ email, password, next }),
        redirect: "manual",
      });
    const ok = await form("operator@example.com", "demo-plinth-pass", "/account");
    expect(ok.status).toBe(303);
    expect(ok.headers.get("location")).toBe("/account");
    const offsite = await form("operator@example.com", "demo-plinth-pass", "//evil.example/");
    expect(offsite.headers.get("location")).toBe("/");
    const bad = await form("operator@example.com", "wrong-password", "/");
    expect(bad.headers.get("location")).toMatch(/^\/login\?error=invalid/);
  });

  it("ends the session on logout", async () => {
    const cookie = await signIn(plinth.url, demoEmail("viewer"));
    expect((await call(plinth.url, cookie, "/api/v1/me")).status).toBe(200);
    const out = await call(plinth.url, cookie, "/api/auth/logout", { method: "POST" });
    expect(out.status).toBe(204);
    expect(out.headers.getSetCookie().join()).toMatch(/plinth_session=;/);
    expect((await call(plinth.url, cookie, "/api/v1/me")).status).toBe(401);
    expect((await call(plinth.url, cookie, "/")).status).toBe(302);
  });

  it("throttles repeated failures with 429 and Retry-After, even for the right password", async () => {
    const email = "operator@example.com";
    await signIn(plinth.url, email); // a success clears the account's earlier failures
    for (let i = 0; i < 5; i++) {
      expect((await login({ email, password: `wrong-${i}` })).status).toBe(401);
    }
    const refused = await login({ email, password: "demo-plinth-pass" });
    expect(refused.status).toBe(429);
    const retry = Number(refused.headers.get("retry-after"));
    expect(retry).toBeGreaterThan(0);
    expect(retry).toBeLessThanOrEqual(15 * 60);
    // Another account is not held back by this one's failures.
    expect((await login({ email: "qc@example.com", password: "demo-plinth-pass" })).status).toBe(
      200,
    );
  });

  it("writes sign-ins, failures and throttling to the audit log", async () => {
    const manager = await signIn(plinth.url, demoEmail("manager"));
    const actions = (await auditActions(manager)).map((e) => e.action);
    expect(actions).toContain("auth.signed_in");
    expect(actions).toContain("auth.sign_in_failed");
    expect(actions).toContain("auth.throttled");
  });
});

describe("the origin check", () => {
  it("refuses a cross-site JSON change made with a session cookie", async () => {
    const cookie = await signIn(plinth.url, demoEmail("manager"));
    const res = await fetch(`${plinth.url}/api/v1/me`, {
      method: "PATCH",
      headers: { cookie, origin: "http://evil.example", "content-type": "application/json" },
      body: JSON.stringify({ theme: "dark" }),
    });
    expect(res.status).toBe(403);
    const me = (await (await call(plinth.url, cookie, "/api/v1/me")).json()) as { theme: string };
    expect(me.theme).toBe("system");
  });

  it("refuses a cross-site form post", async () => {
    const res = await fetch(`${plinth.url}/api/auth/logout`, {
      method: "POST",
      headers: {
        origin: "http://evil.example",
        "content-type": "application/x-www-form-urlencoded",
      },
      body: "",
      redirect: "manual",
    });
    expect(res.status).toBe(403);
  });

  it("lets the same change through from Plinth's own origin", async () => {
    const cookie = await signIn(plinth.url, demoEmail("manager"));
    const res = await call(plinth.url, cookie, "/api/v1/me", {
      method: "PATCH",
      headers: { "content-type": "application/json" },
      body: JSON.stringify({ units: "si" }),
    });
    expect(res.status).toBe(200);
    expect(((await res.json()) as { units: string }).units).toBe("si");
  });
});

describe("the team", () => {
  it("lets a manager add a person, who must replace the one-time password", async () => {
    const manager = await signIn(plinth.url, demoEmail("manager"));
    const res = await call(plinth.url, manager, "/api/v1/users", {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify({
        email: "new.hand@example.com",
        name: "New Hand",
        role: "operator",
        phone: "+1 555 010 0199",
      }),
    });
    expect(res.status).toBe(201);
    const created = (await res.json()) as {
      id: number;
      temporary_password: string;
      phone: string;
      must_change_password: boolean;
    };
    expect(created.phone).toBe("+15550100199");
    expect(created.must_change_password).toBe(true);

    const cookie = await signIn(plinth.url, "new.hand@example.com", created.temporary_password);
    const home = await call(plinth.url, cookie, "/");
    expect(home.status).toBe(302);
    expect(home.headers.get("location")).toBe("/account?must=1");

    const change = await call(plinth.url, cookie, "/api/v1/me/password", {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify({
        current_password: created.temporary_password,
        new_password: "a long new password",
      }),
    });
    expect(change.status).toBe(204);
    const renewed = change.headers
      .getSetCookie()
      .find((c) => c.startsWith("plinth_session="))!
      .split(";")[0]!;
    expect((await call(plinth.url, renewed, "/")).status).toBe(200);
    // The old session ended with the change.
    expect((await call(plinth.url, cookie, "/api/v1/me")).status).toBe(401);
  });

  it("refuses a duplicate e-mail with 409", async () => {
    const manager = await signIn(plinth.url, demoEmail("manager"));
    const res = await call(plinth.url, manager, "/api/v1/users", {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify({ email: "Viewer@Example.com", name: "Twin", role: "viewer" }),
    });
    expect(res.status).toBe(409);
  });

  it("changes a role, deactivates (ending the person's sessions) and audits both", async () => {
    const manager = await signIn(plinth.url, demoEmail("manager"));
    const list = (await (await call(plinth.url, manager, "/api/v1/users")).json()) as {
      users: { id: number; email: string }[];
    };
    const viewer = list.users.find((u) => u.email === "viewer@example.com")!;
    const viewerCookie = await signIn(plinth.url, "viewer@example.com");

    const patch = (body: unknown) =>
      call(plinth.url, manager, `/api/v1/users/${viewer.id}`, {
        method: "PATCH",
        headers: { "content-type": "application/json" },
        body: JSON.stringify(body),
      });
    expect((await patch({ role: "operator" })).status).toBe(200);
    expect((await patch({ active: false })).status).toBe(200);
    expect((await call(plinth.url, viewerCookie, "/api/v1/me")).status).toBe(401);
    expect(
      (await login({ email: "viewer@example.com", password: "demo-plinth-pass" })).status,
    ).toBe(401);
    expect((await patch({ active: true, role: "viewer" })).status).toBe(200);

    const entries = await auditActions(manager);
    const roleChange = entries.find(
      (e) => e.action === "user.role_changed" && (e.detail as { to: string }).to === "operator",
    );
    expect(roleChange?.detail).toMatchObject({
      email: "viewer@example.com",
      from: "viewer",
      to: "operator",
    });
    expect(entries.some((e) => e.action === "user.deactivated")).toBe(true);
  });

  it("keeps at least one active manager", async () => {
    const manager = await signIn(plinth.url, demoEmail("manager"));
    const me = (await (await call(plinth.url, manager, "/api/v1/me")).json()) as { id: number };
    const res = await call(plinth.url, manager, `/api/v1/users/${me.id}`, {
      method: "PATCH",
      headers: { "content-type": "application/json" },
      body: JSON.stringify({ role: "qc" }),
    });
    expect(res.status).toBe(409);
  });
});

describe("the health check", () => {
  it("answers without a session", async () => {
    const res = await fetch(`${plinth.url}/api/health`);
    expect(res.status).toBe(200);
    expect(await res.json()).toMatchObject({ ok: true, db: "ok" });
  });
});
