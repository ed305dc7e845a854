/**
 * Readings over HTTP: `POST /api/v1/readings` with the gateway key as a bearer token.
 *
 * Items stay at the head of the queue until Plinth has answered for them. A network error,
 * a 5xx, a 408 or a 429 is tried again with growing waits (honouring Retry-After), the same
 * batch each time: the contract makes a retried batch safe, so nothing is dropped and Plinth
 * counts any reading it already stored as a duplicate. A refused key stops the run.
 */
import { READINGS_PATH, readingBatchAnswer } from "../contract";
import type { Outgoing } from "../engine";
import { packBatches, type Units, type WireMessage } from "../wire";
import { emptyStats, sleep, Waiters, within, type Transport, type TransportEvents } from "./types";

export interface HttpTransportOptions extends TransportEvents {
  /** Plinth's address (`http://localhost:4321`) or the full readings URL. */
  url: string;
  key: string;
  /** Readings a request, at most 5,000. */
  batch?: number;
  units?: Units;
  /** The queue holds about this many items before the runner holds back new rounds. */
  maxQueue?: number;
  /** First wait after a failure, and the longest. */
  backoff?: { initialMs: number; maxMs: number };
  requestTimeoutMs?: number;
}

/** The readings URL for a Plinth address, or the URL itself when it already names the path. */
export function readingsUrl(base: string): string {
  const u = new URL(base);
  if (!u.pathname.endsWith(READINGS_PATH))
    u.pathname = u.pathname.replace(/\/+$/, "") + READINGS_PATH;
  return u.toString();
}

type Outcome = "done" | "smaller" | "stopped";

export function createHttpTransport(options: HttpTransportOptions): Transport {
  const url = readingsUrl(options.url);
  const batch = Math.max(1, Math.min(options.batch ?? 500, 5_000));
  const units = options.units ?? "c";
  const maxQueue = options.maxQueue ?? 50_000;
  const backoff = options.backoff ?? { initialMs: 500, maxMs: 30_000 };
  const requestTimeoutMs = options.requestTimeoutMs ?? 15_000;
  const event = options.onEvent ?? (() => {});

  const stats = emptyStats();
  const queue: Outgoing[] = [];
  const stop = new AbortController();
  let pumping = false;
  let inFlight = 0;
  /** Shrinks after a 413 so that the next request is smaller. */
  let limit = batch;
  const idle = new Waiters(() => queue.length === 0 && inFlight === 0);

  function waitMs(attempt: number, retryAfter: string | null): number {
    const seconds = retryAfter === null ? NaN : Number(retryAfter);
    if (Number.isFinite(seconds) && seconds >= 0) return Math.min(seconds * 1000, backoff.maxMs);
    const ceiling = Math.min(backoff.maxMs, backoff.initialMs * 2 ** Math.min(attempt, 20));
    return ceiling / 2 + Math.random() * (ceiling / 2);
  }

  function count(msg: WireMessage, body: unknown): void {
    const parsed = readingBatchAnswer.safeParse(body);
    if (!parsed.success) {
      event(
        `Plinth answered ${msg.items.length} readings without the expected counts; treated as taken`,
      );
      return;
    }
    stats.accepted += parsed.data.accepted;
    stats.duplicates += parsed.data.duplicates;
    stats.rejected += parsed.data.rejected.length;
    const refused = new Set(parsed.data.rejected.map((r) => r.index));
    msg.items.forEach((item, i) => {
      if (item.kind === "malformed" && !refused.has(i)) {
        stats.malformedAccepted += 1;
        event(
          `Plinth took a malformed reading (${item.flaw}, ${item.reading.sensor}) that it should have refused`,
        );
      }
    });
  }

  async function deliver(msg: WireMessage): Promise<Outcome> {
    for (let attempt = 0; ; attempt++) {
      if (stop.signal.aborted) return "stopped";
      let status = 0;
      let retryAfter: string | null = null;
      let text = "";
      try {
        const res = await fetch(url, {
          method: "POST",
          headers: { authorization: `Bearer ${options.key}`, "content-type": "application/json" },
          body: msg.body,
          signal: AbortSignal.any([stop.signal, AbortSignal.timeout(requestTimeoutMs)]),
        });
        status = res.status;
        retryAfter = res.headers.get("retry-after");
        text = await res.text();
      } catch (err) {
        if (stop.signal.aborted) return "stopped";
        stats.lastError = `cannot reach Plinth: ${describe(err)}`;
      }
      if (status > 0) stats.connected = true;
      else stats.connected = false;

      if (status >= 200 && status < 300) {
        stats.lastError = null;
        count(msg, safeJson(text));
        return "done";
      }
      if (status === 401 || status === 403) {
        options.onFatal?.(
          new Error(`Plinth refused the gateway key (${status}); check --gateway and --key`),
        );
        return "stopped";
      }
      if (status === 413 && msg.items.length > 1) {
        event(
          `Plinth found ${msg.items.length} readings too many for one request; sending smaller batches`,
        );
        return "smaller";
      }
      const retriable = status === 0 || status === 408 || status === 429 || status >= 500;
      if (!retriable) {
        // A definitive refusal: expected for a malformed message; worth a line for a good one.
        stats.rejected += msg.items.length;
        if (!msg.items.every((i) => i.kind === "malformed")) {
          event(
            `Plinth refused a batch of ${msg.items.length} (${status}): ${problemDetail(text)}`,
          );
        }
        return "done";
      }
      if (status > 0) stats.lastError = `Plinth answered ${status}`;
      stats.retries += 1;
      const wait = waitMs(attempt, retryAfter);
      event(
        `${stats.lastError ?? "send failed"}; trying again in ${(wait / 1000).toFixed(1)} s (${msg.items.length} readings kept)`,
      );
      await sleep(wait, stop.signal);
    }
  }

  async function pump(): Promise<void> {
    if (pumping) return;
    pumping = true;
    try {
      while (queue.length > 0 && !stop.signal.aborted) {
        const msg = packBatches(queue.slice(0, limit), limit, units, null)[0];
        if (!msg) break;
        inFlight = msg.items.length;
        const outcome = await deliver(msg);
        inFlight = 0;
        if (outcome === "stopped") break;
        if (outcome === "smaller") {
          limit = Math.max(1, Math.floor(msg.items.length / 2));
          continue;
        }
        queue.splice(0, msg.items.length);
        const malformed = msg.items.filter((i) => i.kind === "malformed").length;
        stats.sent += msg.items.length - malformed;
        stats.malformedSent += malformed;
        idle.check();
      }
    } finally {
      pumping = false;
      inFlight = 0;
      idle.check();
    }
  }

  return {
    kind: "http",
    enqueue(items) {
      if (stop.signal.aborted || items.length === 0) return;
      queue.push(...items);
      void pump();
    },
    room: () => Math.max(0, maxQueue - queue.length),
    stats: () => ({ ...stats, queued: queue.length - inFlight, inFlight }),
    idle: () => idle.wait(),
    async close({ drainMs = 5_000 } = {}) {
      await within(idle.wait(), drainMs);
      const undelivered = queue.length;
      stop.abort();
      return { undelivered };
    },
  };
}

function safeJson(text: string): unknown {
  try {
    return JSON.parse(text);
  } catch {
    return null;
  }
}

function problemDetail(text: string): string {
  const body = safeJson(text) as { detail?: unknown; title?: unknown } | null;
  const said = body?.detail ?? body?.title;
  return typeof said === "string" ? said : text.slice(0, 200) || "no detail";
}

function describe(err: unknown): string {
  if (err instanceof Error) {
    const cause = (err as Error & { cause?: { code?: string; message?: string } }).cause;
    return cause?.code ?? cause?.message ?? err.message;
  }
  return String(err);
}
