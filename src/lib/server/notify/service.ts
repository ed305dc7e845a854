/**
 * Notices at run time: which providers are set up, the local fakes when they run, and the
 * worker. Started and stopped by services.ts; state on globalThis so pages and the worker
 * share it however often this module is evaluated.
 */
import { randomBytes } from "node:crypto";
import { env, type Env } from "../env";
import { log } from "../log";
import type { NoticeChannel } from "../db/queries/outbox";
import { createEmailSender } from "./email";
import { startFakeSmtp, type FakeSmtp } from "./fakes/smtp";
import { startFakeSms, type FakeSms } from "./fakes/sms";
import { createSmsSender } from "./sms";
import { startNotifyWorker, type NotifyWorker, type Sender, type WorkerOptions } from "./worker";

/** An invented sending number for the demo (555-01xx numbers are set aside for fiction). */
export const DEMO_SMS_FROM = "+15550109999";
/** The demo's account id at the fake SMS API (the SDK insists on the AC prefix). */
export const DEMO_SMS_ACCOUNT_SID = "AC00000000000000000000000000000001";

interface NotifyState {
  worker: NotifyWorker;
  fakes: { smtp: FakeSmtp; sms: FakeSms } | null;
  /** The SMS auth token in use, for checking replies' signatures; null when texts are off. */
  smsAuthToken: string | null;
  enabled: Record<NoticeChannel, boolean>;
}

const KEY = Symbol.for("plinth.notify.state");
const g = globalThis as unknown as { [KEY]?: NotifyState };

/** True when the local fakes should run: NOTIFY_FAKES=1, or demo mode unless NOTIFY_FAKES=0. */
export function fakesWanted(e: Env, demo: boolean): boolean {
  return e.NOTIFY_FAKES === "1" || (e.NOTIFY_FAKES === undefined && demo);
}

/**
 * Starts the fakes where wanted, the providers that are set up, and the worker. A channel
 * with no provider is logged once; its notices fail with the reason (they are not kept to
 * be sent hours late).
 */
export async function startNotifications(
  opts: { demo: boolean; worker?: WorkerOptions } = { demo: false },
): Promise<void> {
  if (g[KEY]) return;
  const e = env();
  const senders: Partial<Record<NoticeChannel, Sender>> = {};
  const disabled: Partial<Record<NoticeChannel, string>> = {};
  let fakes: NotifyState["fakes"] = null;
  let smsAuthToken: string | null = null;

  if (fakesWanted(e, opts.demo)) {
    const smsAccountSid = e.SMS_ACCOUNT_SID ?? DEMO_SMS_ACCOUNT_SID;
    const token = e.SMS_AUTH_TOKEN ?? randomBytes(16).toString("hex");
    const from = e.SMS_FROM ?? DEMO_SMS_FROM;
    const smtp = await startFakeSmtp({ port: e.NOTIFY_FAKE_SMTP_PORT });
    const sms = await startFakeSms({
      port: e.NOTIFY_FAKE_SMS_PORT,
      accountSid: smsAccountSid,
      authToken: token,
      number: from,
    });
    fakes = { smtp, sms };
    smsAuthToken = token;
    senders.email = createEmailSender({ url: smtp.url, from: e.MAIL_FROM, ignoreTLS: true });
    senders.sms = createSmsSender({
      accountSid: smsAccountSid,
      authToken: token,
      from,
      apiBase: sms.baseUrl,
    });
    if (e.SMTP_URL || e.SMS_API_BASE)
      log.warn("local notice fakes are running; SMTP_URL and SMS_API_BASE are not used");
    log.info("local notice fakes running: nothing leaves this machine", {
      smtp: smtp.url,
      sms: sms.baseUrl,
    });
  } else {
    if (e.SMTP_URL) senders.email = createEmailSender({ url: e.SMTP_URL, from: e.MAIL_FROM });
    else {
      disabled.email = "e-mail is not set up (SMTP_URL)";
      log.info("e-mail notices are off: SMTP_URL is not set");
    }
    if (e.SMS_ACCOUNT_SID && e.SMS_AUTH_TOKEN && e.SMS_FROM) {
      smsAuthToken = e.SMS_AUTH_TOKEN;
      senders.sms = createSmsSender({
        accountSid: e.SMS_ACCOUNT_SID,
        authToken: e.SMS_AUTH_TOKEN,
        from: e.SMS_FROM,
        apiBase: e.SMS_API_BASE,
      });
    } else {
      disabled.sms = "texts are not set up (SMS_ACCOUNT_SID, SMS_AUTH_TOKEN, SMS_FROM)";
      log.info("text notices are off: SMS_ACCOUNT_SID, SMS_AUTH_TOKEN and SMS_FROM are needed");
    }
  }

  const worker = startNotifyWorker(senders, { ...opts.worker, disabled });
  g[KEY] = {
    worker,
    fakes,
    smsAuthToken,
    enabled: { email: Boolean(senders.email), sms: Boolean(senders.sms) },
  };
}

/** Lets the sends in flight finish, stops the worker, then the fakes. */
export async function stopNotifications(): Promise<void> {
  const state = g[KEY];
  if (!state) return;
  delete g[KEY];
  await state.worker.stop();
  if (state.fakes) {
    await state.fakes.smtp.close();
    await state.fakes.sms.close();
  }
}

/** Whether notices on a channel can be sent (a caller may skip a channel that is off). */
export function channelEnabled(channel: NoticeChannel): boolean {
  return g[KEY]?.enabled[channel] ?? false;
}

/** The auth token replies are signed with, or null when texts are off. */
export function smsAuthToken(): string | null {
  return g[KEY]?.smsAuthToken ?? null;
}

/** The local fakes, while they run in this process. */
export function runningFakes(): { smtp: FakeSmtp; sms: FakeSms } | null {
  return g[KEY]?.fakes ?? null;
}

/** One message a fake received, as GET /api/v1/dev/outbox answers it. */
export interface DevOutboxItem {
  channel: "sms" | "email";
  to: string;
  body: string;
  sent_at: string;
}

/** A message a fake received, with what the page shows beside the contract's fields. */
export interface FakeReceived extends DevOutboxItem {
  subject: string | null;
  atMs: number;
}

/** Everything the running fakes received, newest first; null when they do not run. */
export function fakeReceived(): FakeReceived[] | null {
  const fakes = runningFakes();
  if (!fakes) return null;
  const mails: FakeReceived[] = fakes.smtp.received.map((m) => ({
    channel: "email",
    to: m.to.join(", "),
    body: m.text,
    sent_at: new Date(m.atMs).toISOString(),
    subject: m.subject,
    atMs: m.atMs,
  }));
  const texts: FakeReceived[] = fakes.sms.received.map((m) => ({
    channel: "sms",
    to: m.to,
    body: m.body,
    sent_at: new Date(m.atMs).toISOString(),
    subject: null,
    atMs: m.atMs,
  }));
  // Newest first; a stable sort keeps arrival order (reversed) within one millisecond.
  return [...mails, ...texts]
    .map((item, i) => ({ item, i }))
    .sort((a, b) => b.item.atMs - a.item.atMs || b.i - a.i)
    .map(({ item }) => item);
}

/** The contract's shape: channel, to, body, sent_at. */
export function devOutbox(): DevOutboxItem[] | null {
  return (
    fakeReceived()?.map(({ channel, to, body, sent_at }) => ({ channel, to, body, sent_at })) ??
    null
  );
}
