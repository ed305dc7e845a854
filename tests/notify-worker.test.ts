import { createHmac } from "node:crypto";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { waitFor as waitUntil } from "./helpers/wait";

/** The worker runs in this process on short timers: look often, give up after 15 s. */
const waitFor = <T>(what: string, probe: () => T | undefined | null | false, timeoutMs = 15_000) =>
  waitUntil(what, probe, timeoutMs, 25);

// The notice worker in this process against a real SQLite file migrated by the real
// migrations, the real mail and SMS SDKs, and the real local fakes on loopback.
const dir = fs.mkdtempSync(path.join(os.tmpdir(), "plinth-notify-"));
const saved = { db: process.env.DATABASE_PATH, level: process.env.LOG_LEVEL };
process.env.DATABASE_PATH = path.join(dir, "notify.db");
process.env.LOG_LEVEL = "error";

const { closeDatabase, getDb, getSqlite, migrateDatabase } = await import("@/lib/server/db/client");
const { claimNextDueNotice, getNoticeByDedupeKey } = await import("@/lib/server/db/queries/outbox");
const { enqueueNotice, listOutbox } = await import("@/lib/server/notify/outbox");
const { startNotifyWorker } = await import("@/lib/server/notify/worker");
const { createEmailSender, noticeMessageId } = await import("@/lib/server/notify/email");
const { createSmsSender, rebase } = await import("@/lib/server/notify/sms");
const { startFakeSmtp } = await import("@/lib/server/notify/fakes/smtp");
const { startFakeSms } = await import("@/lib/server/notify/fakes/sms");
const { handleInboundSms, parseReply, setReplyHandler, NOTHING_WAITING, REPLY_HELP, twiml } =
  await import("@/lib/server/notify/inbound");
const { insertUser } = await import("@/lib/server/db/queries/users");
type FakeSmtp = Awaited<ReturnType<typeof startFakeSmtp>>;
type FakeSms = Awaited<ReturnType<typeof startFakeSms>>;
type Worker = ReturnType<typeof startNotifyWorker>;

// Short waits so the retries happen within a test; the shape of the policy is the same.
const quick = { backoff: { baseMs: 50, capMs: 400 }, pollMs: 100 };
const FROM = "Plinth at Brindle Hollow <plinth@plant.example>";

let smtp: FakeSmtp;
let sms: FakeSms;
let worker: Worker | null = null;

const sentRow = (key: string) =>
  waitFor(`${key} sent`, () => {
    const r = getNoticeByDedupeKey(key);
    return r?.status === "sent" ? r : undefined;
  });

function emailSender() {
  return createEmailSender({ url: smtp.url, from: FROM, ignoreTLS: true });
}
function smsSender() {
  return createSmsSender({
    accountSid: sms.accountSid,
    authToken: sms.authToken,
    from: "+15550109999",
    apiBase: sms.baseUrl,
  });
}

beforeAll(async () => {
  migrateDatabase(getDb());
  smtp = await startFakeSmtp();
  sms = await startFakeSms({ accountSid: "AC0123456789abcdef0123456789abcdef" });
});

afterEach(async () => {
  await worker?.stop();
  worker = null;
  sms.recover();
  await smtp.up();
  getSqlite().exec("delete from notification_outbox");
});

afterAll(async () => {
  await smtp?.close();
  await sms?.close();
  closeDatabase();
  process.env.DATABASE_PATH = saved.db;
  process.env.LOG_LEVEL = saved.level;
  if (saved.db === undefined) delete process.env.DATABASE_PATH;
  if (saved.level === undefined) delete process.env.LOG_LEVEL;
  fs.rmSync(dir, { recursive: true, force: true });
});

describe("the notice worker", () => {
  it("delivers an e-mail to the mail fake with its address, subject and body", async () => {
    worker = startNotifyWorker({ email: emailSender() }, quick);
    const subject = "Cure bag CB-14 is dry: 41 % RH at 54.5 °F";
    const body = "Pour P-2611-03, Room B.\nRe-wet the bag.\nReply ACK to acknowledge.";
    const { id } = enqueueNotice({
      dedupeKey: "t1:email",
      channel: "email",
      to: "operator@example.com",
      subject,
      body,
    });
    const row = await sentRow("t1:email");
    expect(smtp.received).toHaveLength(1);
    const mail = smtp.received[0]!;
    expect(mail.to).toEqual(["operator@example.com"]);
    expect(mail.from).toBe("plinth@plant.example");
    expect(mail.subject).toBe(subject);
    expect(mail.text).toBe(body);
    expect(mail.messageId).toBe(noticeMessageId({ id, dedupeKey: "t1:email" }, FROM));
    expect(row.attempts).toBe(1);
    expect(row.providerId).toBeTruthy();
    expect(row.sentAt).toBeGreaterThanOrEqual(row.createdAt);
    smtp.received.length = 0;
  });

  it("keeps an e-mail while the mail server is down and delivers it once when it is back", async () => {
    await smtp.down();
    worker = startNotifyWorker({ email: emailSender() }, quick);
    enqueueNotice({
      dedupeKey: "t2:email",
      channel: "email",
      to: "qc@example.com",
      subject: "Room A is cold",
      body: "Room A air at 38 °F.",
    });
    const failing = await waitFor("two failed attempts", () => {
      const r = getNoticeByDedupeKey("t2:email");
      return r && r.attempts >= 2 ? r : undefined;
    });
    expect(failing.status).toBe("pending");
    expect(failing.lastError).toMatch(/ECONNREFUSED|ECONNECTION|connect/i);
    expect(smtp.received).toHaveLength(0);

    await smtp.up();
    await sentRow("t2:email");
    // A later notice on the same channel goes through after it: the first is not sent again.
    enqueueNotice({
      dedupeKey: "t2:marker",
      channel: "email",
      to: "qc@example.com",
      subject: "marker",
      body: "marker",
    });
    await sentRow("t2:marker");
    expect(smtp.received.filter((m) => m.subject === "Room A is cold")).toHaveLength(1);
    smtp.received.length = 0;
  });

  it("gets a text through a 500 and a 429 with Retry-After, and it arrives exactly once", async () => {
    sms.failNext(1, 500);
    sms.failNext(1, 429, { retryAfterS: 1 });
    const before = sms.requests.length;
    worker = startNotifyWorker({ sms: smsSender() }, quick);
    enqueueNotice({
      dedupeKey: "t3:sms",
      channel: "sms",
      to: "+15550100003",
      body: "Plinth: CB-14 dry (41 % RH). Reply ACK to acknowledge.",
    });
    const row = await sentRow("t3:sms");
    const requests = sms.requests.slice(before);
    expect(requests.map((r) => r.status)).toEqual([500, 429, 201]);
    // Retry-After: 1 (RFC 9110, section 10.2.3) is honoured; the base back-off here is 50 ms.
    expect(requests[2]!.atMs - requests[1]!.atMs).toBeGreaterThanOrEqual(1_000);
    const texts = sms.received.filter((m) => m.body.startsWith("Plinth: CB-14 dry"));
    expect(texts).toHaveLength(1);
    expect(texts[0]).toMatchObject({ to: "+15550100003", from: "+15550109999" });
    expect(texts[0]!.idempotencyKey).toBe(`plinth-notice-t3:sms-${row.createdAt}`);
    expect(row.providerId).toBe(texts[0]!.sid);
    expect(row.attempts).toBe(3);
    expect(sms.replays).toBe(0);
  });

  it("makes one notice of a dedupe key queued twice", async () => {
    const input = {
      dedupeKey: "episode:7:first:user:3:sms",
      channel: "sms" as const,
      to: "+15550100003",
      body: "Plinth: Room B below 50 °F. Reply ACK to acknowledge.",
    };
    const first = enqueueNotice(input);
    const second = enqueueNotice({ ...input, body: "a retry of the same decision" });
    expect(first.created).toBe(true);
    expect(second).toEqual({ id: first.id, created: false });
    expect(listOutbox().filter((r) => r.dedupeKey === input.dedupeKey)).toHaveLength(1);
    worker = startNotifyWorker({ sms: smsSender() }, quick);
    await sentRow(input.dedupeKey);
    expect(sms.received.filter((m) => m.body.includes("Room B below 50"))).toHaveLength(1);
    expect(sms.received.some((m) => m.body === "a retry of the same decision")).toBe(false);
  });

  it("never sends a notice queued in a transaction that rolled back", async () => {
    worker = startNotifyWorker({ sms: smsSender() }, quick);
    expect(() =>
      getDb().transaction((tx) => {
        enqueueNotice(
          { dedupeKey: "t5:rolled-back", channel: "sms", to: "+15550100003", body: "never" },
          tx,
        );
        throw new Error("the alert's own write failed");
      }),
    ).toThrow("the alert's own write failed");
    getDb().transaction((tx) => {
      enqueueNotice(
        { dedupeKey: "t5:committed", channel: "sms", to: "+15550100003", body: "committed" },
        tx,
      );
    });
    await sentRow("t5:committed");
    expect(getNoticeByDedupeKey("t5:rolled-back")).toBeUndefined();
    expect(sms.received.some((m) => m.body === "never")).toBe(false);
  });

  it("marks a notice failed after its last attempt", async () => {
    sms.failNext(50, 503);
    const before = sms.requests.length;
    worker = startNotifyWorker({ sms: smsSender() }, { ...quick, maxAttempts: 3 });
    enqueueNotice({ dedupeKey: "t6:sms", channel: "sms", to: "+15550100003", body: "t6" });
    const row = await waitFor("t6 failed", () => {
      const r = getNoticeByDedupeKey("t6:sms");
      return r?.status === "failed" ? r : undefined;
    });
    expect(row.attempts).toBe(3);
    expect(row.lastError).toMatch(/gave up after 3 attempts: HTTP 503/);
    expect(sms.requests.length - before).toBe(3);
    expect(row.sentAt).toBeNull();
  });

  it("fails at once a text the provider refuses as malformed", async () => {
    worker = startNotifyWorker({ sms: smsSender() }, quick);
    enqueueNotice({
      dedupeKey: "t7:sms",
      channel: "sms",
      to: "+1 555 010 0003 0000 0000 00",
      body: "t7",
    });
    const row = await waitFor("t7 failed", () => {
      const r = getNoticeByDedupeKey("t7:sms");
      return r?.status === "failed" ? r : undefined;
    });
    expect(row.attempts).toBe(1);
    expect(row.lastError).toMatch(/HTTP 400/);
  });

  it("fails the notices of a channel that is not set up, with the reason", async () => {
    worker = startNotifyWorker({}, { ...quick, disabled: { email: "e-mail is not set up" } });
    enqueueNotice({
      dedupeKey: "t8:email",
      channel: "email",
      to: "qc@example.com",
      body: "t8",
    });
    const row = await waitFor("t8 failed", () => {
      const r = getNoticeByDedupeKey("t8:email");
      return r?.status === "failed" ? r : undefined;
    });
    expect(row.lastError).toBe("e-mail is not set up");
    expect(row.attempts).toBe(0);
  });

  it("lets the send in flight finish and records it before stopping", async () => {
    sms.holdNext(400);
    const w = startNotifyWorker({ sms: smsSender() }, quick);
    enqueueNotice({ dedupeKey: "t9:sms", channel: "sms", to: "+15550100003", body: "t9" });
    await waitFor("the send in flight", () => sms.inFlight > 0);
    await w.stop();
    const row = getNoticeByDedupeKey("t9:sms")!;
    expect(row.status).toBe("sent");
    expect(sms.received.filter((m) => m.body === "t9")).toHaveLength(1);
  });

  it("sends again, after its lease, a notice taken by a worker that died mid-send, and only once", async () => {
    enqueueNotice({ dedupeKey: "t10:sms", channel: "sms", to: "+15550100003", body: "t10" });
    // A worker takes it and dies before any answer: nothing says "sent".
    const taken = claimNextDueNotice("sms", Date.now(), 600);
    expect(taken?.dedupeKey).toBe("t10:sms");
    expect(claimNextDueNotice("sms", Date.now(), 600)).toBeUndefined();
    worker = startNotifyWorker({ sms: smsSender() }, { ...quick, leaseMs: 600 });
    const row = await sentRow("t10:sms");
    expect(row.attempts).toBe(2);
    expect(sms.received.filter((m) => m.body === "t10")).toHaveLength(1);
  });

  it("retries a text whose answer was lost with the same Idempotency-Key, which the fake honours", async () => {
    // The provider accepts but answers after the worker gave up waiting: the at-least-once
    // window. The retry carries the same key, so the fake does not send it a second time.
    sms.holdNext(1_500);
    worker = startNotifyWorker(
      { sms: smsSender() },
      { ...quick, sendTimeoutMs: 300, leaseMs: 1_400 },
    );
    enqueueNotice({ dedupeKey: "t11:sms", channel: "sms", to: "+15550100003", body: "t11" });
    const row = await sentRow("t11:sms");
    expect(row.attempts).toBeGreaterThanOrEqual(2);
    expect(sms.received.filter((m) => m.body === "t11")).toHaveLength(1);
    expect(sms.replays).toBeGreaterThanOrEqual(1);
  });

  it("moves the SDK's requests onto the fake's base, keeping path and query", () => {
    expect(
      rebase(
        "https://api.twilio.com/2010-04-01/Accounts/AC1/Messages.json?PageSize=5",
        "http://127.0.0.1:4010",
      ),
    ).toBe("http://127.0.0.1:4010/2010-04-01/Accounts/AC1/Messages.json?PageSize=5");
    expect(
      rebase("https://api.twilio.com/2010-04-01/Accounts/AC1/Messages.json", "http://h:1/sms/"),
    ).toBe("http://h:1/sms/2010-04-01/Accounts/AC1/Messages.json");
  });
});

describe("a text reply", () => {
  const token = "reply-test-auth-token-0001";
  const url = "https://plinth.plant.example/api/v1/sms/inbound";
  // The provider's documented webhook signature, computed here on its own: HMAC-SHA1 with the
  // auth token over the URL followed by each parameter's name and value in name order, base64.
  const sign = (u: string, params: Record<string, string>) =>
    createHmac("sha1", token)
      .update(
        Object.keys(params)
          .sort()
          .reduce((acc, k) => acc + k + params[k], u),
      )
      .digest("base64");
  const params = (from: string, body: string) => ({
    AccountSid: "AC0123456789abcdef0123456789abcdef",
    MessageSid: "SM0123456789abcdef0123456789abcdef",
    From: from,
    To: "+15550109999",
    Body: body,
  });
  let operatorId = 0;

  beforeAll(() => {
    operatorId = insertUser({
      email: "night@plant.example",
      name: "Night Operator",
      role: "operator",
      passwordHash: "not-used",
      phone: "+1 (555) 010-0003",
    }).id;
  });
  afterEach(() => setReplyHandler(null));

  it.each([
    ["ACK", { ack: true, note: null }],
    ["ack", { ack: true, note: null }],
    [" Ok. ", { ack: true, note: null }],
    ["1", { ack: true, note: null }],
    ["ACK bag re-wetted, heater on", { ack: true, note: "bag re-wetted, heater on" }],
    ["Ack: on my way", { ack: true, note: "on my way" }],
    ["acknowledged", { ack: false }],
    ["11", { ack: false }],
    ["what is this", { ack: false }],
    ["", { ack: false }],
  ])("reads %j", (text, expected) => {
    expect(parseReply(text)).toEqual(expected);
  });

  it("reaches the handler when correctly signed, from a person's phone", () => {
    const seen: unknown[] = [];
    setReplyHandler((reply) => {
      seen.push(reply);
      return { ok: true, message: "Acknowledged: CB-14 dry. Thanks." };
    });
    const p = params("+15550100003", "ACK bag re-wetted");
    const out = handleInboundSms({ authToken: token, signature: sign(url, p), url, params: p });
    expect(out).toMatchObject({ kind: "answer", message: "Acknowledged: CB-14 dry. Thanks." });
    expect(seen).toEqual([
      {
        fromPhone: "+15550100003",
        body: "ACK bag re-wetted",
        userId: operatorId,
        note: "bag re-wetted",
      },
    ]);
  });

  it("is refused with a bad signature, a changed body, or no token", () => {
    let called = false;
    setReplyHandler(() => {
      called = true;
      return { ok: true, message: "no" };
    });
    const p = params("+15550100003", "ACK");
    const good = sign(url, p);
    expect(handleInboundSms({ authToken: token, signature: "AAAA", url, params: p }).kind).toBe(
      "forbidden",
    );
    expect(
      handleInboundSms({ authToken: token, signature: good, url, params: { ...p, Body: "1" } })
        .kind,
    ).toBe("forbidden");
    expect(
      handleInboundSms({
        authToken: token,
        signature: good,
        url: "http://127.0.0.1:4321/api/v1/sms/inbound",
        params: p,
      }).kind,
    ).toBe("forbidden");
    expect(handleInboundSms({ authToken: null, signature: good, url, params: p }).kind).toBe(
      "forbidden",
    );
    expect(called).toBe(false);
  });

  it("thanks the sender when no handler waits, helps with a reply it cannot read, and ignores strangers", () => {
    const ack = params("+15550100003", "OK");
    expect(
      handleInboundSms({ authToken: token, signature: sign(url, ack), url, params: ack }),
    ).toMatchObject({
      kind: "answer",
      message: NOTHING_WAITING,
      ack: true,
    });
    let called = false;
    setReplyHandler(() => {
      called = true;
      return { ok: true, message: "no" };
    });
    const chat = params("+15550100003", "is the kiln on?");
    expect(
      handleInboundSms({ authToken: token, signature: sign(url, chat), url, params: chat }),
    ).toMatchObject({ message: REPLY_HELP, ack: false });
    const stranger = params("+15550100999", "ACK");
    expect(
      handleInboundSms({ authToken: token, signature: sign(url, stranger), url, params: stranger }),
    ).toMatchObject({ kind: "answer", message: null, user: null });
    expect(called).toBe(false);
  });

  it("credits a reply to the one person with that number, and to nobody when two share it", () => {
    const seen: number[] = [];
    setReplyHandler((r) => {
      seen.push(r.userId);
      return { ok: true, message: "done" };
    });
    const local = insertUser({
      email: "day@plant.example",
      name: "Day Operator",
      role: "operator",
      passwordHash: "not-used",
      phone: "555-010-0004",
    }).id;
    for (const email of ["a@plant.example", "b@plant.example"])
      insertUser({
        email,
        name: email,
        role: "operator",
        passwordHash: "not-used",
        phone: "+15550100005",
      });
    const fromLocal = params("+15550100004", "ACK");
    expect(
      handleInboundSms({
        authToken: token,
        signature: sign(url, fromLocal),
        url,
        params: fromLocal,
      }),
    ).toMatchObject({ message: "done", user: { id: local } });
    const shared = params("+15550100005", "ACK");
    expect(
      handleInboundSms({ authToken: token, signature: sign(url, shared), url, params: shared }),
    ).toMatchObject({ message: null, user: null });
    expect(seen).toEqual([local]);
  });

  it("answers TwiML with the message escaped", () => {
    expect(twiml("Thanks <3 & 'bye'")).toBe(
      '<?xml version="1.0" encoding="UTF-8"?><Response><Message>Thanks &lt;3 &amp; &apos;bye&apos;</Message></Response>',
    );
    expect(twiml(null)).toBe('<?xml version="1.0" encoding="UTF-8"?><Response></Response>');
  });
});
