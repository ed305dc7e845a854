/**
 * A local stand-in for a mail server, for the demo and tests: an SMTP server on loopback
 * that accepts every message (any or no sign-in, no TLS) and keeps it in memory. Nothing
 * leaves the machine. Tests can take it down (it stops listening) and bring it back.
 */
import { SMTPServer } from "smtp-server";
import type { AddressInfo } from "node:net";

export interface FakeMail {
  from: string;
  to: string[];
  subject: string;
  text: string;
  messageId: string | null;
  atMs: number;
  /** The user name it signed in with, if any. */
  authUser: string | null;
}

export interface FakeSmtp {
  port: number;
  /** What to give the mail transport (SMTP_URL). */
  url: string;
  /** Every message accepted, oldest first. */
  received: FakeMail[];
  isUp(): boolean;
  /** Stops listening (connections are refused) until up(). */
  down(): Promise<void>;
  /** Listens again on the same port. */
  up(): Promise<void>;
  close(): Promise<void>;
}

export interface FakeSmtpOptions {
  host?: string;
  port?: number;
}

const KEEP = 5_000;

/** RFC 2047 encoded words (=?charset?B|Q?text?=) in a header, decoded. */
export function decodeHeader(value: string): string {
  const joined = value.replace(/\?=\s+=\?/g, "?==?");
  return joined.replace(
    /=\?([^?]+)\?([BbQq])\?([^?]*)\?=/g,
    (_, _charset: string, enc: string, text: string) => {
      if (enc.toUpperCase() === "B") return Buffer.from(text, "base64").toString("utf8");
      return decodeQuotedPrintable(text.replace(/_/g, " "));
    },
  );
}

/** Quoted-printable (RFC 2045, section 6.7) to text, read as UTF-8. */
export function decodeQuotedPrintable(text: string): string {
  const soft = text.replace(/=\r?\n/g, "");
  const bytes: number[] = [];
  for (let i = 0; i < soft.length; i++) {
    const c = soft[i]!;
    const hex = soft.slice(i + 1, i + 3);
    if (c === "=" && /^[0-9A-Fa-f]{2}$/.test(hex)) {
      bytes.push(parseInt(hex, 16));
      i += 2;
    } else {
      for (const b of Buffer.from(c, "utf8")) bytes.push(b);
    }
  }
  return Buffer.from(bytes).toString("utf8");
}

/** The headers and the decoded text of a single-part message. */
export function parseMessage(raw: string): {
  headers: Map<string, string>;
  subject: string;
  text: string;
  messageId: string | null;
} {
  const split = raw.search(/\r?\n\r?\n/);
  const head = split === -1 ? raw : raw.slice(0, split);
  const bodyRaw = split === -1 ? "" : raw.slice(split).replace(/^\r?\n\r?\n/, "");
  const headers = new Map<string, string>();
  for (const line of head.replace(/\r?\n[ \t]+/g, " ").split(/\r?\n/)) {
    const at = line.indexOf(":");
    if (at > 0) headers.set(line.slice(0, at).trim().toLowerCase(), line.slice(at + 1).trim());
  }
  const cte = (headers.get("content-transfer-encoding") ?? "7bit").toLowerCase();
  let text: string;
  if (cte === "base64") text = Buffer.from(bodyRaw.replace(/\s+/g, ""), "base64").toString("utf8");
  else if (cte === "quoted-printable") text = decodeQuotedPrintable(bodyRaw);
  else text = bodyRaw;
  return {
    headers,
    subject: decodeHeader(headers.get("subject") ?? ""),
    text: text.replace(/\r\n/g, "\n").replace(/\n$/, ""),
    messageId: headers.get("message-id") ?? null,
  };
}

/** Starts the fake on loopback (a free port unless one is given). */
export async function startFakeSmtp(options: FakeSmtpOptions = {}): Promise<FakeSmtp> {
  const host = options.host ?? "127.0.0.1";
  const received: FakeMail[] = [];
  let server: SMTPServer | null = null;
  let port = options.port ?? 0;

  function make(): SMTPServer {
    return new SMTPServer({
      name: "plinth-fake-smtp",
      banner: "Plinth's local mail fake: nothing leaves this machine",
      authOptional: true,
      allowInsecureAuth: true,
      disabledCommands: ["STARTTLS"],
      logger: false,
      size: 1024 * 1024,
      closeTimeout: 200,
      onAuth(auth, _session, callback) {
        callback(null, { user: auth.username ?? "anonymous" });
      },
      onData(stream, session, callback) {
        const chunks: Buffer[] = [];
        stream.on("data", (c: Buffer) => chunks.push(c));
        stream.on("end", () => {
          if (stream.sizeExceeded) {
            callback(Object.assign(new Error("Message too large"), { responseCode: 552 }));
            return;
          }
          const parsed = parseMessage(Buffer.concat(chunks).toString("utf8"));
          const mailFrom = session.envelope.mailFrom;
          received.push({
            from: mailFrom ? mailFrom.address : "",
            to: session.envelope.rcptTo.map((r) => r.address),
            subject: parsed.subject,
            text: parsed.text,
            messageId: parsed.messageId,
            atMs: Date.now(),
            authUser: typeof session.user === "string" ? session.user : null,
          });
          if (received.length > KEEP) received.shift();
          callback(null, `Message queued as fake-${received.length}`);
        });
      },
    });
  }

  async function listen() {
    const s = make();
    await new Promise<void>((resolve, reject) => {
      s.server.once("error", reject);
      s.listen(port, host, () => {
        s.server.off("error", reject);
        resolve();
      });
    });
    s.on("error", () => {
      // A client that hangs up mid-message is its own problem; the fake keeps listening.
    });
    port = (s.server.address() as AddressInfo).port;
    server = s;
  }

  async function stop() {
    const s = server;
    server = null;
    if (!s) return;
    await new Promise<void>((resolve) => s.close(() => resolve()));
  }

  await listen();
  return {
    get port() {
      return port;
    },
    get url() {
      return `smtp://${host}:${port}`;
    },
    received,
    isUp: () => server !== null,
    down: stop,
    async up() {
      if (!server) await listen();
    },
    close: stop,
  };
}
