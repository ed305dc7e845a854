/**
 * What every transport offers the runner: a bounded queue that keeps readings until Plinth
 * (or its broker) has taken them, counts for the status line, and a clean close.
 */
import type { Outgoing } from "../engine";

export interface TransportStats {
  /** Good readings handed over: answered over HTTP, published over MQTT. */
  sent: number;
  /** HTTP: readings Plinth stored. */
  accepted: number;
  /** HTTP: readings Plinth already had (same sensor and ts). */
  duplicates: number;
  /** HTTP: readings and malformed items Plinth refused (malformed ones are meant to be). */
  rejected: number;
  /** MQTT: readings whose PUBACK came back (Plinth committed them). */
  acked: number;
  /** Malformed items sent, and how many of those Plinth took when it should have refused them. */
  malformedSent: number;
  malformedAccepted: number;
  /** Items waiting in the queue, and handed over but not yet answered. */
  queued: number;
  inFlight: number;
  /** Attempts that failed and were tried again. */
  retries: number;
  connected: boolean;
  lastError: string | null;
}

export interface Transport {
  readonly kind: "mqtt" | "http";
  /** Adds items at the tail of the queue and starts sending. */
  enqueue(items: readonly Outgoing[]): void;
  /** Items the queue may still take before the runner should hold back new rounds. */
  room(): number;
  stats(): TransportStats;
  /** Resolves once the queue is empty and nothing is in flight. */
  idle(): Promise<void>;
  /** Sends what it can within `drainMs`, then lets go; reports what was not delivered. */
  close(options?: { drainMs?: number }): Promise<{ undelivered: number }>;
}

export interface TransportEvents {
  /** A line worth showing (connected, lost the broker, retrying, Plinth refused a batch). */
  onEvent?: (line: string) => void;
  /** An error retrying cannot fix (the gateway key refused): the runner stops. */
  onFatal?: (err: Error) => void;
}

export const emptyStats = (): TransportStats => ({
  sent: 0,
  accepted: 0,
  duplicates: 0,
  rejected: 0,
  acked: 0,
  malformedSent: 0,
  malformedAccepted: 0,
  queued: 0,
  inFlight: 0,
  retries: 0,
  connected: false,
  lastError: null,
});

/** Waiters resolved when a condition becomes true; checked after every change. */
export class Waiters {
  private list: (() => void)[] = [];
  constructor(private readonly ready: () => boolean) {}
  wait(): Promise<void> {
    if (this.ready()) return Promise.resolve();
    return new Promise((resolve) => this.list.push(resolve));
  }
  check(): void {
    if (!this.ready() || this.list.length === 0) return;
    const waiting = this.list;
    this.list = [];
    for (const resolve of waiting) resolve();
  }
}

/** Resolves after `ms`, or at once when `signal` aborts. */
export function sleep(ms: number, signal?: AbortSignal): Promise<void> {
  return new Promise((resolve) => {
    if (signal?.aborted) return resolve();
    const timer = setTimeout(done, ms);
    function done() {
      clearTimeout(timer);
      signal?.removeEventListener("abort", done);
      resolve();
    }
    signal?.addEventListener("abort", done, { once: true });
  });
}

/** Resolves with true when `p` settles within `ms`, false otherwise. */
export async function within(p: Promise<unknown>, ms: number): Promise<boolean> {
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<false>((resolve) => {
    timer = setTimeout(() => resolve(false), ms);
  });
  try {
    return await Promise.race([p.then(() => true as const), timeout]);
  } finally {
    clearTimeout(timer);
  }
}
