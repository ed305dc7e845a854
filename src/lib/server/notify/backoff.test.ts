import { describe, expect, it } from "vitest";
import { defaultBackoff, retryAfterMs, retryDelayMs } from "./backoff";

describe("retryDelayMs", () => {
  // Common practice: exponential back-off doubling from the base, capped, plus jitter.
  it.each([
    [1, 2_000],
    [2, 4_000],
    [3, 8_000],
    [4, 16_000],
    [8, 256_000],
    [9, 300_000],
    [12, 300_000],
    [60, 300_000],
  ])("after attempt %i waits %i ms with no jitter", (attempt, ms) => {
    expect(retryDelayMs(attempt, defaultBackoff, 0)).toBe(ms);
  });

  it("adds at most a quarter more, and never passes the cap", () => {
    expect(retryDelayMs(1, defaultBackoff, 0.999_999)).toBe(2_500);
    expect(retryDelayMs(3, defaultBackoff, 0.5)).toBe(9_000);
    expect(retryDelayMs(9, defaultBackoff, 0.999_999)).toBe(300_000);
    for (let attempt = 1; attempt <= 14; attempt++) {
      for (const r of [0, 0.3, 0.7, 0.999]) {
        const d = retryDelayMs(attempt, defaultBackoff, r);
        expect(d).toBeGreaterThanOrEqual(retryDelayMs(attempt, defaultBackoff, 0));
        expect(d).toBeLessThanOrEqual(defaultBackoff.capMs);
      }
    }
  });
});

describe("retryAfterMs", () => {
  const now = Date.parse("2026-03-02T04:10:00Z");
  // RFC 9110, section 10.2.3: Retry-After = HTTP-date / delay-seconds.
  it.each([
    ["120", 120_000],
    ["0", 0],
    [" 5 ", 5_000],
    ["Mon, 02 Mar 2026 04:10:30 GMT", 30_000],
    ["Mon, 02 Mar 2026 04:09:00 GMT", 0],
    ["soon", null],
    ["-5", null],
    ["", null],
    [null, null],
  ])("reads %j as %j", (header, ms) => {
    expect(retryAfterMs(header, now)).toBe(ms);
  });
});
