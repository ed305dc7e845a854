/**
 * The sender loop: one loop per channel takes the next due notice from the outbox, hands it
 * to the channel's provider, and records the outcome. Notices of one channel go one at a
 * time; a dead mail server never holds up texts.
 *
 * Exactly once, and where it is only at least once:
 * - A notice becomes "sent" in one UPDATE (markNoticeSent), run synchronously as soon as the
 *   provider's yes has arrived: an SMTP 250 after the message data, or the SMS API's 2xx.
 *   Nothing else runs between the two.
 * - There is no "sending" state. Taking a notice (claimNextDueNotice) counts the attempt and
 *   pushes its next attempt a lease ahead; a crash mid-send leaves it pending, due again when
 *   the lease ends. A restart therefore resends only what was not confirmed.
 * - The window that remains: the provider accepted, but its answer never reached Plinth (the
 *   connection dropped, the send timed out) or the process died in the microseconds between
 *   the answer and the UPDATE's commit, or the machine lost power before the WAL reached
 *   disk (the database runs with synchronous = NORMAL). Plinth then tries again and the
 *   person may get the notice twice. To shrink this, each text carries an Idempotency-Key
 *   header made from the notice's dedupe key (the local fake honours it; the real service is
 *   not known to) and each e-mail a Message-ID made from the notice, which lets mail
 *   systems that drop duplicate Message-IDs show it once. A duplicate alert is the lesser
 *   harm: a lost one can leave a dry cure bag unseen.
 */
import { log } from "../log";
import {
  claimNextDueNotice,
  failPendingNoticesOfChannel,
  markNoticeFailed,
  markNoticeRetry,
  markNoticeSent,
  nextNoticeDueAt,
  type NoticeChannel,
  type OutboxRow,
} from "../db/queries/outbox";
import { defaultBackoff, retryDelayMs, type BackoffPolicy } from "./backoff";
import { noticeSignal } from "./outbox";

/** A channel's provider: resolves only when the provider accepted the notice. */
export interface Sender {
  channel: NoticeChannel;
  /** What the provider answered for the record: its message id or queue id. */
  send(notice: OutboxRow): Promise<{ providerId: string | null }>;
  close?(): Promise<void> | void;
}

/** A failed send, with what the provider's answer says about trying again. */
export class SendError extends Error {
  /** True when trying again cannot help (an address the provider refuses). */
  readonly permanent: boolean;
  /** The provider asked for this wait (Retry-After), in ms. */
  readonly retryAfterMs: number | null;
  constructor(message: string, opts: { permanent?: boolean; retryAfterMs?: number | null } = {}) {
    super(message);
    this.name = "SendError";
    this.permanent = opts.permanent ?? false;
    this.retryAfterMs = opts.retryAfterMs ?? null;
  }
}

export interface WorkerOptions {
  backoff?: BackoffPolicy;
  /** After this many attempts a notice is marked failed. */
  maxAttempts?: number;
  /** How often the outbox is looked at when nothing wakes the worker (another process may queue). */
  pollMs?: number;
  /** Longest a send may take before it counts as failed. */
  sendTimeoutMs?: number;
  /** A taken notice is not taken again before this; longer than any send. */
  leaseMs?: number;
  /** Channels with no provider: their pending notices fail with this reason. */
  disabled?: Partial<Record<NoticeChannel, string>>;
  now?: () => number;
  random?: () => number;
}

export interface NotifyWorker {
  /** Looks at the outbox now. */
  wake(): void;
  /** Finishes the sends in flight, then stops. */
  stop(): Promise<void>;
}

const channels: readonly NoticeChannel[] = ["email", "sms"];

function describe(err: unknown): string {
  if (err instanceof Error) {
    const code = (err as { code?: unknown }).code;
    return code !== undefined ? `${String(code)}: ${err.message}` : err.message;
  }
  return String(err);
}

function withTimeout<T>(p: Promise<T>, ms: number): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new SendError(`no answer from the provider in ${ms} ms`)), ms);
  });
  return Promise.race([p, timeout]).finally(() => clearTimeout(timer));
}

/** Starts one sender loop per channel that has a provider. */
export function startNotifyWorker(
  senders: Partial<Record<NoticeChannel, Sender>>,
  options: WorkerOptions = {},
): NotifyWorker {
  const backoff = options.backoff ?? defaultBackoff;
  const maxAttempts = options.maxAttempts ?? 12;
  const pollMs = options.pollMs ?? 1_000;
  const sendTimeoutMs = options.sendTimeoutMs ?? 30_000;
  const leaseMs = Math.max(options.leaseMs ?? sendTimeoutMs + 15_000, sendTimeoutMs + 1_000);
  const now = options.now ?? Date.now;
  const random = options.random ?? Math.random;

  let running = true;
  const wakers = new Set<() => void>();
  const wakeAll = () => {
    for (const w of [...wakers]) w();
  };
  const signal = noticeSignal();
  signal.on("queued", wakeAll);

  /** Sleeps until woken, or for at most `ms`. */
  function rest(ms: number): Promise<void> {
    return new Promise((resolve) => {
      const done = () => {
        clearTimeout(timer);
        wakers.delete(done);
        resolve();
      };
      const timer = setTimeout(done, Math.max(0, ms));
      wakers.add(done);
    });
  }

  async function attempt(sender: Sender, notice: OutboxRow, pause: { untilMs: number }) {
    let providerId: string | null;
    try {
      ({ providerId } = await withTimeout(sender.send(notice), sendTimeoutMs));
    } catch (err) {
      recordFailure(notice, err, pause);
      return;
    }
    // The provider said yes: record it before anything else can happen.
    markNoticeSent(notice.id, providerId, now());
    log.info("notice sent", {
      id: notice.id,
      channel: notice.channel,
      attempts: notice.attempts,
      providerId,
    });
  }

  function recordFailure(notice: OutboxRow, err: unknown, pause: { untilMs: number }) {
    const why = describe(err);
    const sendError = err instanceof SendError ? err : null;
    if (sendError?.permanent) {
      markNoticeFailed(notice.id, why);
      log.error("notice refused by the provider; not retried", {
        id: notice.id,
        channel: notice.channel,
        error: why,
      });
      return;
    }
    if (notice.attempts >= maxAttempts) {
      markNoticeFailed(notice.id, `gave up after ${notice.attempts} attempts: ${why}`);
      log.error("notice failed after every attempt", {
        id: notice.id,
        channel: notice.channel,
        attempts: notice.attempts,
        error: why,
      });
      return;
    }
    const askedMs = sendError?.retryAfterMs ?? null;
    const waitMs = askedMs ?? retryDelayMs(notice.attempts, backoff, random());
    const at = now() + waitMs;
    markNoticeRetry(notice.id, why, at);
    // A provider that asks for a pause gets it for the whole channel, not only this notice.
    if (askedMs !== null) pause.untilMs = Math.max(pause.untilMs, at);
    log.warn("notice not sent; will retry", {
      id: notice.id,
      channel: notice.channel,
      attempts: notice.attempts,
      retryInMs: waitMs,
      error: why,
    });
  }

  async function loop(channel: NoticeChannel, sender: Sender) {
    const pause = { untilMs: 0 };
    while (running) {
      try {
        const t = now();
        if (pause.untilMs > t) {
          await rest(pause.untilMs - t);
          continue;
        }
        const notice = claimNextDueNotice(channel, t, leaseMs);
        if (notice) {
          await attempt(sender, notice, pause);
          continue;
        }
        const dueAt = nextNoticeDueAt(channel);
        await rest(dueAt === null ? pollMs : Math.min(pollMs, Math.max(10, dueAt - now())));
      } catch (err) {
        // The database itself failed (locked, closed): wait and look again.
        log.error("notice worker error", { channel, err });
        await rest(pollMs);
      }
    }
  }

  async function failDisabled(channel: NoticeChannel, reason: string) {
    while (running) {
      try {
        const n = failPendingNoticesOfChannel(channel, reason);
        if (n > 0) log.warn(`${channel} notices cannot be sent: ${reason}`, { failed: n });
      } catch (err) {
        log.error("notice worker error", { channel, err });
      }
      await rest(pollMs);
    }
  }

  const loops: Promise<void>[] = [];
  for (const channel of channels) {
    const sender = senders[channel];
    if (sender) loops.push(loop(channel, sender));
    else if (options.disabled?.[channel])
      loops.push(failDisabled(channel, options.disabled[channel]));
  }

  return {
    wake: wakeAll,
    async stop() {
      if (!running) return;
      running = false;
      signal.off("queued", wakeAll);
      wakeAll();
      await Promise.all(loops);
      for (const s of Object.values(senders)) await s?.close?.();
    },
  };
}
