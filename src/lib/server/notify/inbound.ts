/**
 * Texts coming back: the SMS provider posts each reply to POST /api/v1/sms/inbound. A reply
 * of ACK, OK or 1 (or ACK and a note) from a person's phone acknowledges that person's latest
 * open alert that told them. The alert side registers how (setReplyHandler); this module
 * checks the provider's signature, finds the person, reads the reply and words the answer.
 */
import twilio from "twilio";
import { findActiveUserByPhone } from "../db/queries/phones";

export interface SmsReply {
  /** The sender's number as the provider gave it. */
  fromPhone: string;
  /** The whole text as received. */
  body: string;
  /** The person the number belongs to. */
  userId: number;
  /** What followed "ACK", if anything. */
  note: string | null;
}

/** What the alert side did with a reply; `message` is texted back. */
export type ReplyHandler = (reply: SmsReply) => { ok: boolean; message: string };

const KEY = Symbol.for("plinth.notify.replyHandler");
const g = globalThis as unknown as { [KEY]?: ReplyHandler | null };

/** Registers (or, with null, removes) what an acknowledging reply does. */
export function setReplyHandler(fn: ReplyHandler | null): void {
  g[KEY] = fn;
}

export const NOTHING_WAITING = "Thanks: no alert is waiting for you";
export const REPLY_HELP =
  "Plinth: reply ACK to acknowledge your latest alert, or ACK and a note (ACK bag re-wetted).";
export const REPLY_FAILED =
  "Plinth could not record your reply. Please acknowledge in Plinth on your phone.";

/**
 * Reads a reply: "ACK", "OK" or "1" alone, or "ACK" followed by a note, in any case and with
 * surrounding spaces or a trailing full stop. Anything else is not an acknowledgement.
 */
export function parseReply(text: string): { ack: true; note: string | null } | { ack: false } {
  const t = text.trim();
  if (/^(ack|ok|1)[.!]?$/i.test(t)) return { ack: true, note: null };
  const m = /^ack[\s:,.;-]+([\s\S]+)$/i.exec(t);
  if (m) {
    const note = m[1]!.trim().slice(0, 500);
    return { ack: true, note: note || null };
  }
  return { ack: false };
}

/**
 * The URL the provider signed: the public address (PUBLIC_URL, e.g. behind a proxy) with the
 * request's path and query, or the request's own URL when no public address is set.
 */
export function signedUrl(requestUrl: URL, publicUrl: string | undefined): string {
  if (!publicUrl) return requestUrl.href;
  const base = publicUrl.replace(/\/+$/, "");
  return `${base}${requestUrl.pathname}${requestUrl.search}`;
}

/** True when the signature is the provider's for this URL and these parameters. */
export function signatureValid(
  authToken: string,
  signature: string | null,
  url: string,
  params: Record<string, string>,
): boolean {
  if (!signature) return false;
  return twilio.validateRequest(authToken, signature, url, params);
}

/** A TwiML answer that texts `message` back, or says nothing when it is null. */
export function twiml(message: string | null): string {
  const head = '<?xml version="1.0" encoding="UTF-8"?>';
  if (message === null) return `${head}<Response></Response>`;
  const escaped = message
    .replace(/&/g, "&amp;")
    .replace(/</g, "&lt;")
    .replace(/>/g, "&gt;")
    .replace(/"/g, "&quot;")
    .replace(/'/g, "&apos;");
  return `${head}<Response><Message>${escaped}</Message></Response>`;
}

export type InboundOutcome =
  | { kind: "forbidden"; detail: string }
  | {
      kind: "answer";
      /** Texted back; null answers nothing (a number Plinth does not know). */
      message: string | null;
      user: { id: number; email: string } | null;
      ack: boolean;
      handled: boolean;
    };

/**
 * The whole of a reply's handling, apart from HTTP: the signature, the person, the reply,
 * the handler. `authToken` null means texts are not set up, so no reply can be trusted.
 */
export function handleInboundSms(input: {
  authToken: string | null;
  signature: string | null;
  url: string;
  params: Record<string, string>;
  onError?: (err: unknown) => void;
}): InboundOutcome {
  if (!input.authToken)
    return { kind: "forbidden", detail: "Texts are not set up on this Plinth." };
  if (!signatureValid(input.authToken, input.signature, input.url, input.params))
    return { kind: "forbidden", detail: "The request's signature is not valid." };
  const from = input.params.From ?? "";
  const body = input.params.Body ?? "";
  const user = from ? findActiveUserByPhone(from) : undefined;
  if (!user) return { kind: "answer", message: null, user: null, ack: false, handled: false };
  const who = { id: user.id, email: user.email };
  const reply = parseReply(body);
  if (!reply.ack)
    return { kind: "answer", message: REPLY_HELP, user: who, ack: false, handled: false };
  const handler = g[KEY];
  if (!handler)
    return { kind: "answer", message: NOTHING_WAITING, user: who, ack: true, handled: false };
  try {
    const result = handler({ fromPhone: from, body, userId: user.id, note: reply.note });
    return {
      kind: "answer",
      message: result.message || NOTHING_WAITING,
      user: who,
      ack: true,
      handled: result.ok,
    };
  } catch (err) {
    input.onError?.(err);
    return { kind: "answer", message: REPLY_FAILED, user: who, ack: true, handled: false };
  }
}
