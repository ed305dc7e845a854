/**
 * Throttling of failed sign-ins, by e-mail and by client address. After `maxFailures`
 * failures inside `windowMs`, further attempts are refused until the oldest failure in
 * the window ages out. A success clears the e-mail's count.
 */
export interface ThrottlePolicy {
  maxFailures: number;
  windowMs: number;
}

/** Pure: how long (ms) until another attempt is allowed, given the failure times. 0: now. */
export function retryAfterMs(
  failuresMs: readonly number[],
  nowMs: number,
  policy: ThrottlePolicy,
): number {
  const recent = failuresMs.filter((t) => nowMs - t < policy.windowMs).sort((a, b) => a - b);
  if (recent.length < policy.maxFailures) return 0;
  const oldestThatCounts = recent[recent.length - policy.maxFailures]!;
  return Math.max(0, oldestThatCounts + policy.windowMs - nowMs);
}

export class LoginThrottle {
  private readonly failures = new Map<string, number[]>();

  constructor(private readonly policy: ThrottlePolicy) {}

  /** Milliseconds to wait before any of these keys may try again (0: go ahead). */
  wait(keys: readonly string[], nowMs: number): number {
    let worst = 0;
    for (const k of keys) {
      worst = Math.max(worst, retryAfterMs(this.failures.get(k) ?? [], nowMs, this.policy));
    }
    return worst;
  }

  fail(keys: readonly string[], nowMs: number): void {
    for (const k of keys) {
      const list = (this.failures.get(k) ?? []).filter((t) => nowMs - t < this.policy.windowMs);
      list.push(nowMs);
      this.failures.set(k, list);
    }
    if (this.failures.size > 10_000) this.prune(nowMs);
  }

  succeed(key: string): void {
    this.failures.delete(key);
  }

  private prune(nowMs: number): void {
    for (const [k, list] of this.failures) {
      if (list.every((t) => nowMs - t >= this.policy.windowMs)) this.failures.delete(k);
    }
  }
}
