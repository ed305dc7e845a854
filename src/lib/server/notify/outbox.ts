/**
 * The notification outbox: every e-mail and text Plinth is to send is first a row here,
 * written (where the caller passes its transaction) together with the event that caused
 * it. The worker (worker.ts) sends the rows and marks one sent only after the provider
 * accepted it.
 */
import { EventEmitter } from "node:events";
import {
  insertNotice,
  listOutboxRows,
  type DbOrTx,
  type NoticeChannel,
  type OutboxFilter,
  type OutboxRow,
} from "../db/queries/outbox";

export type { NoticeChannel, OutboxRow } from "../db/queries/outbox";

export interface NoticeInput {
  /**
   * Unique per notice, chosen by the caller so that a retry of the same decision is
   * harmless, e.g. "episode:42:first:user:7:sms". A second enqueue with the same key
   * changes nothing.
   */
  dedupeKey: string;
  channel: NoticeChannel;
  /** An e-mail address, or a phone number in international form (+15550100003). */
  to: string;
  body: string;
  /** E-mail only; texts have no subject. */
  subject?: string | null;
  userId?: number | null;
  episodeId?: number | null;
  /** Why it is sent (first, escalate, repeat, cleared…), for the record. */
  reason?: string | null;
  /** Not before this time (epoch ms); now when omitted. */
  notBeforeMs?: number;
}

const KEY = Symbol.for("plinth.notify.signal");
const g = globalThis as unknown as { [KEY]?: EventEmitter };

/** The in-process signal that wakes the worker when a notice is queued. */
export function noticeSignal(): EventEmitter {
  if (!g[KEY]) {
    const e = new EventEmitter();
    e.setMaxListeners(0);
    g[KEY] = e;
  }
  return g[KEY];
}

/**
 * Queues a notice. Inside a caller's transaction (`tx`) the row commits or rolls back with
 * it; the worker is woken on the next turn of the event loop, after a synchronous
 * transaction has finished either way. Returns the notice's id and whether it was new.
 */
export function enqueueNotice(input: NoticeInput, tx?: DbOrTx): { id: number; created: boolean } {
  const to = input.to.trim();
  const dedupeKey = input.dedupeKey.trim();
  if (!dedupeKey || dedupeKey.length > 300)
    throw new Error("a notice needs a dedupe key of 1 to 300 characters");
  if (!to) throw new Error("a notice needs an address");
  if (!input.body.trim()) throw new Error("a notice needs a body");
  if (input.channel === "email" && !to.includes("@"))
    throw new Error(`not an e-mail address: ${to}`);
  if (input.channel === "sms" && !/^\+?[0-9][0-9 ()-]{4,}$/.test(to))
    throw new Error(`not a phone number: ${to}`);
  const result = insertNotice(
    {
      dedupeKey,
      channel: input.channel,
      toAddress: to,
      body: input.body,
      subject: input.channel === "email" ? (input.subject ?? "Plinth notice") : null,
      userId: input.userId ?? null,
      episodeId: input.episodeId ?? null,
      reason: input.reason ?? null,
      nextAttemptAtMs: input.notBeforeMs ?? Date.now(),
    },
    tx,
  );
  if (result.created) setImmediate(() => noticeSignal().emit("queued", input.channel));
  return result;
}

/** Notices as stored, newest first (for the dev outbox page and for tests). */
export function listOutbox(filter: OutboxFilter = {}): OutboxRow[] {
  return listOutboxRows(filter);
}
