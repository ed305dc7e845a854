/**
 * When to try a notice again. Pure: the random draw and the clock are passed in.
 */

export interface BackoffPolicy {
  /** The wait after the first failed attempt, in ms. */
  baseMs: number;
  /** No wait is longer than this, jitter included, in ms. */
  capMs: number;
}

export const defaultBackoff: BackoffPolicy = { baseMs: 2_000, capMs: 5 * 60_000 };

/**
 * The wait after the `attempt`-th failed attempt (1 for the first): base · 2^(attempt-1),
 * capped, plus up to a quarter more drawn from `random01` (in [0, 1)) so that notices which
 * failed together do not all come back together. Common practice for retrying a remote call.
 */
export function retryDelayMs(
  attempt: number,
  policy: BackoffPolicy = defaultBackoff,
  random01 = Math.random(),
): number {
  const n = Math.max(1, Math.floor(attempt));
  const exponential = policy.baseMs * 2 ** Math.min(n - 1, 30);
  const capped = Math.min(policy.capMs, exponential);
  const jitter = capped * 0.25 * Math.min(Math.max(random01, 0), 1);
  return Math.round(Math.min(policy.capMs, capped + jitter));
}

/**
 * A Retry-After header as a wait in ms: either delay-seconds or an HTTP-date (RFC 9110,
 * section 10.2.3). Null when absent or unreadable; never negative.
 */
export function retryAfterMs(header: string | null | undefined, nowMs: number): number | null {
  if (header === null || header === undefined) return null;
  const value = header.trim();
  if (value === "") return null;
  if (/^\d+$/.test(value)) return Number(value) * 1000;
  // An HTTP-date always names its month ("Mon, 02 Mar 2026 04:10:30 GMT"); a bare number
  // that is not delay-seconds ("-5") is not one, though Date.parse would read it as a year.
  if (!/[A-Za-z]{3}/.test(value)) return null;
  const at = Date.parse(value);
  if (Number.isNaN(at)) return null;
  return Math.max(0, at - nowMs);
}
