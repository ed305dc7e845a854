/**
 * Texts out through the SMS provider's SDK: pointed at the local fake in demo and tests
 * (SMS_API_BASE), at the real service otherwise.
 */
import twilio from "twilio";
import type BaseRequestClient from "twilio/lib/base/RequestClient";
import type TwilioResponse from "twilio/lib/http/response";
import type { OutboxRow } from "../db/queries/outbox";
import { retryAfterMs } from "./backoff";
import { SendError, type Sender } from "./worker";

export interface SmsConfig {
  /** Starts with "AC". */
  accountSid: string;
  authToken: string;
  /** The sending number, international form. */
  from: string;
  /** Where the API lives when it is not the real service, e.g. http://127.0.0.1:4010. */
  apiBase?: string | undefined;
  timeoutMs?: number;
}

/**
 * The SDK's HTTP client, with two changes: each request's URL is moved onto `apiBase`
 * (path and query kept) when one is given, and an Idempotency-Key header goes with it when
 * one is given. The headers of the last answer are kept, for Retry-After.
 */
export class PlinthRequestClient extends twilio.RequestClient {
  lastHeaders: Record<string, unknown> | null = null;
  constructor(
    private readonly apiBase: string | undefined,
    private readonly idempotencyKey: string | undefined,
    timeoutMs: number,
  ) {
    super({ timeout: timeoutMs, autoRetry: false });
  }

  override async request<TData>(
    opts: BaseRequestClient.RequestOptions<TData>,
  ): Promise<TwilioResponse<TData>> {
    const next: BaseRequestClient.RequestOptions<TData> = { ...opts, headers: { ...opts.headers } };
    if (this.apiBase) next.uri = rebase(opts.uri, this.apiBase);
    if (this.idempotencyKey) next.headers!["Idempotency-Key"] = this.idempotencyKey;
    const res = await super.request<TData>(next);
    this.lastHeaders = (res.headers ?? null) as Record<string, unknown> | null;
    return res;
  }
}

/** The same path and query on another base URL (whose own path, if any, is kept in front). */
export function rebase(uri: string, base: string): string {
  const from = new URL(uri);
  const to = new URL(base);
  const prefix = to.pathname.replace(/\/+$/, "");
  return `${to.origin}${prefix}${from.pathname}${from.search}`;
}

/** An SDK client for the configured account, on the fake when `apiBase` is set. */
export function createSmsClient(
  config: Pick<SmsConfig, "accountSid" | "authToken" | "apiBase" | "timeoutMs">,
  idempotencyKey?: string,
): { client: twilio.Twilio; http: PlinthRequestClient } {
  const http = new PlinthRequestClient(config.apiBase, idempotencyKey, config.timeoutMs ?? 15_000);
  const client = twilio(config.accountSid, config.authToken, { httpClient: http });
  return { client, http };
}

interface RestFailure {
  status?: number;
  code?: number | string;
  message?: string;
}

/** A sender that resolves only when the SMS API answered 2xx with the message's id. */
export function createSmsSender(config: SmsConfig): Sender {
  return {
    channel: "sms",
    async send(notice: OutboxRow) {
      // Stable across this row's retries, and distinct from another database's row with
      // the same dedupe key (a second installation, a restored backup): the queueing time
      // goes with it.
      const { client, http } = createSmsClient(
        config,
        `plinth-notice-${notice.dedupeKey}-${notice.createdAt}`,
      );
      try {
        const message = await client.messages.create({
          to: notice.toAddress,
          from: config.from,
          body: notice.body,
        });
        return { providerId: message.sid ?? null };
      } catch (err) {
        const e = (err ?? {}) as RestFailure;
        const status = typeof e.status === "number" ? e.status : null;
        const text = [status !== null ? `HTTP ${status}` : null, e.code, e.message ?? String(err)]
          .filter((x) => x !== null && x !== undefined)
          .join(" ");
        if (status === 429) {
          const header = http.lastHeaders?.["retry-after"];
          throw new SendError(text, {
            retryAfterMs: retryAfterMs(typeof header === "string" ? header : null, Date.now()),
          });
        }
        // A request the API refuses as malformed (a number it cannot text) will not get better.
        throw new SendError(text, { permanent: status === 400 });
      }
    },
  };
}
