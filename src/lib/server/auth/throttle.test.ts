import { describe, expect, it } from "vitest";
import { LoginThrottle, retryAfterMs } from "./throttle";

const policy = { maxFailures: 3, windowMs: 60_000 };

describe("sign-in throttling", () => {
  it("allows attempts below the limit", () => {
    expect(retryAfterMs([0, 1000], 2000, policy)).toBe(0);
  });

  it("refuses after the limit until the oldest counted failure leaves the window", () => {
    expect(retryAfterMs([0, 1000, 2000], 3000, policy)).toBe(57_000);
    expect(retryAfterMs([0, 1000, 2000], 59_000, policy)).toBe(1000);
    expect(retryAfterMs([0, 1000, 2000], 60_000, policy)).toBe(0);
  });

  it("counts each key apart and clears a key on success", () => {
    const t = new LoginThrottle(policy);
    t.fail(["a", "ip"], 0);
    t.fail(["a", "ip"], 1);
    t.fail(["b", "ip"], 2);
    expect(t.wait(["a"], 3)).toBe(0);
    expect(t.wait(["b", "ip"], 3)).toBeGreaterThan(0);
    t.succeed("ip");
    expect(t.wait(["b", "ip"], 3)).toBe(0);
  });
});
