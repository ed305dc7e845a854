/**
 * A local stand-in for the SMS provider's HTTP API, for the demo and tests: it answers
 * `POST /2010-04-01/Accounts/{sid}/Messages.json` (form-encoded, Basic auth) with 201 and
 * the message as JSON, and keeps in memory what it received. Nothing leaves the machine.
 * Tests can make it fail (`failNext`), and can text Plinth back as a phone would
 * (`sendReply`, signed as the provider signs its webhooks).
 */
import { createHmac, randomBytes } from "node:crypto";
import http from "node:http";
import type { AddressInfo } from "node:net";

export interface FakeSmsMessage {
  sid: string;
  to: string;
  from: string;
  body: string;
  atMs: number;
  idempotencyKey: string | null;
}

export interface FakeSmsRequest {
  atMs: number;
  status: number;
}

export interface FakeSms {
  port: number;
  /** Where the SDK should send its requests (SMS_API_BASE). */
  baseUrl: string;
  accountSid: string;
  authToken: string;
  /** Every message accepted, oldest first. */
  received: FakeSmsMessage[];
  /** Every request to the messages endpoint with the status it got, oldest first. */
  requests: FakeSmsRequest[];
  /** Requests that repeated an accepted Idempotency-Key: answered, not sent again. */
  replays: number;
  /** The next `count` requests get `status` (e.g. 500, 429 with Retry-After). */
  failNext(count: number, status: number, opts?: { retryAfterS?: number }): void;
  /** Forgets the failures still planned: the next request succeeds. */
  recover(): void;
  /** The next accepted message is answered only after `ms` (a slow provider). */
  holdNext(ms: number): void;
  /** Requests being answered right now. */
  readonly inFlight: number;
  /** Texts Plinth back from `from`, as the provider would post a reply to its webhook. */
  sendReply(reply: {
    webhookUrl: string;
    from: string;
    body: string;
    to?: string;
  }): Promise<{ status: number; contentType: string | null; text: string }>;
  close(): Promise<void>;
}

export interface FakeSmsOptions {
  host?: string;
  port?: number;
  accountSid?: string;
  authToken?: string;
  /** The fake's own number, used as To on replies. */
  number?: string;
}

/** At most this many messages are kept; the oldest go first. */
const KEEP = 5_000;

/**
 * The provider's webhook signature: HMAC-SHA1, keyed with the auth token, of the full URL
 * followed by each POST parameter's name and value in name order, in base64.
 */
export function signWebhook(authToken: string, url: string, params: Record<string, string>) {
  const data = Object.keys(params)
    .sort()
    .reduce((acc, k) => acc + k + params[k], url);
  return createHmac("sha1", authToken).update(Buffer.from(data, "utf8")).digest("base64");
}

function problem(res: http.ServerResponse, status: number, message: string, extra = {}) {
  res.writeHead(status, { "content-type": "application/json", ...extra });
  res.end(JSON.stringify({ code: status * 100, message, status }));
}

function readBody(req: http.IncomingMessage, limit = 64 * 1024): Promise<string | null> {
  return new Promise((resolve, reject) => {
    let size = 0;
    const chunks: Buffer[] = [];
    req.on("data", (c: Buffer) => {
      size += c.length;
      if (size > limit) {
        resolve(null);
        req.destroy();
        return;
      }
      chunks.push(c);
    });
    req.on("end", () => resolve(Buffer.concat(chunks).toString("utf8")));
    req.on("error", reject);
  });
}

/** Starts the fake on loopback (a free port unless one is given). */
export async function startFakeSms(options: FakeSmsOptions = {}): Promise<FakeSms> {
  const accountSid = options.accountSid ?? `AC${randomBytes(16).toString("hex")}`;
  const authToken = options.authToken ?? randomBytes(16).toString("hex");
  const ownNumber = options.number ?? "+15550109999";
  const received: FakeSmsMessage[] = [];
  const requests: FakeSmsRequest[] = [];
  const byKey = new Map<string, FakeSmsMessage>();
  const plan: { status: number; retryAfterS?: number | undefined }[] = [];
  const path = `/2010-04-01/Accounts/${accountSid}/Messages.json`;
  const expectedAuth = `Basic ${Buffer.from(`${accountSid}:${authToken}`).toString("base64")}`;
  let replays = 0;
  let holdMs = 0;
  let inFlight = 0;

  const server = http.createServer((req, res) => {
    inFlight++;
    res.on("close", () => inFlight--);
    void (async () => {
      const url = new URL(req.url ?? "/", "http://fake.invalid");
      if (req.method !== "POST" || url.pathname !== path) {
        problem(res, 404, "The requested resource was not found.");
        return;
      }
      const atMs = Date.now();
      const answer = (status: number) => requests.push({ atMs, status });
      const raw = await readBody(req);
      if (raw === null) {
        answer(413);
        problem(res, 413, "Too large.");
        return;
      }
      if (req.headers.authorization !== expectedAuth) {
        answer(401);
        problem(res, 401, "Authentication failed.");
        return;
      }
      const failure = plan.shift();
      if (failure) {
        answer(failure.status);
        problem(
          res,
          failure.status,
          failure.status === 429 ? "Too many requests." : "The fake was told to fail.",
          failure.retryAfterS !== undefined ? { "retry-after": String(failure.retryAfterS) } : {},
        );
        return;
      }
      const form = new URLSearchParams(raw);
      const to = form.get("To");
      const body = form.get("Body") ?? "";
      const from = form.get("From") ?? "";
      if (!to || !/^\+?[0-9]{5,15}$/.test(to.replace(/[\s()-]/g, ""))) {
        answer(400);
        problem(res, 400, `'To' is not a phone number: ${to ?? "(missing)"}`);
        return;
      }
      if (!body) {
        answer(400);
        problem(res, 400, "A message needs a 'Body'.");
        return;
      }
      const key = req.headers["idempotency-key"];
      const idempotencyKey = typeof key === "string" && key ? key : null;
      const earlier = idempotencyKey ? byKey.get(idempotencyKey) : undefined;
      let message: FakeSmsMessage;
      if (earlier) {
        replays++;
        message = earlier;
      } else {
        message = {
          sid: `SM${randomBytes(16).toString("hex")}`,
          to,
          from,
          body,
          atMs,
          idempotencyKey,
        };
        received.push(message);
        if (received.length > KEEP) {
          const dropped = received.shift()!;
          if (dropped.idempotencyKey) byKey.delete(dropped.idempotencyKey);
        }
        if (idempotencyKey) byKey.set(idempotencyKey, message);
      }
      if (holdMs > 0) {
        const wait = holdMs;
        holdMs = 0;
        await new Promise((r) => setTimeout(r, wait));
      }
      answer(201);
      res.writeHead(201, { "content-type": "application/json" });
      res.end(
        JSON.stringify({
          sid: message.sid,
          account_sid: accountSid,
          to: message.to,
          from: message.from,
          body: message.body,
          status: "queued",
          num_segments: String(Math.max(1, Math.ceil(message.body.length / 153))),
          direction: "outbound-api",
          date_created: new Date(message.atMs).toUTCString(),
          date_updated: new Date(message.atMs).toUTCString(),
          date_sent: null,
          error_code: null,
          error_message: null,
          uri: `${path.replace(/\.json$/, "")}/${message.sid}.json`,
        }),
      );
    })().catch(() => {
      if (!res.headersSent) problem(res, 500, "The fake failed.");
      else res.destroy();
    });
  });

  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(options.port ?? 0, options.host ?? "127.0.0.1", () => resolve());
  });
  const port = (server.address() as AddressInfo).port;

  return {
    port,
    baseUrl: `http://${options.host ?? "127.0.0.1"}:${port}`,
    accountSid,
    authToken,
    received,
    requests,
    get replays() {
      return replays;
    },
    get inFlight() {
      return inFlight;
    },
    failNext(count, status, opts = {}) {
      for (let i = 0; i < count; i++) plan.push({ status, retryAfterS: opts.retryAfterS });
    },
    recover() {
      plan.length = 0;
    },
    holdNext(ms) {
      holdMs = ms;
    },
    async sendReply({ webhookUrl, from, body, to }) {
      const params: Record<string, string> = {
        AccountSid: accountSid,
        MessageSid: `SM${randomBytes(16).toString("hex")}`,
        From: from,
        To: to ?? ownNumber,
        Body: body,
        NumMedia: "0",
      };
      const res = await fetch(webhookUrl, {
        method: "POST",
        headers: {
          "content-type": "application/x-www-form-urlencoded",
          "x-twilio-signature": signWebhook(authToken, webhookUrl, params),
        },
        body: new URLSearchParams(params).toString(),
      });
      return {
        status: res.status,
        contentType: res.headers.get("content-type"),
        text: await res.text(),
      };
    },
    close() {
      return new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeAllConnections();
      });
    },
  };
}
