/**
 * Stand-ins for the other end of the wire, for the simulator's own tests: a readings endpoint
 * that answers as the contract says, and an MQTT broker that asks for the gateway's name and
 * key. Loopback only, on ports the system picks.
 */
import http from "node:http";
import net from "node:net";
import type { AddressInfo } from "node:net";
import { batchReading, READINGS_PATH, readingBatchBody } from "./contract";

export interface StoredReading {
  sensor: string;
  tsMs: number;
  tempC: number | null;
  tempF: number | null;
  rhPct: number | null;
}

export interface FakePlinth {
  url: string;
  port: number;
  /** Every reading stored, by `sensor|ts`: the first value stands. */
  stored: Map<string, StoredReading>;
  /** What each request carried and how it was answered. */
  requests: { authorization: string | undefined; body: string; status: number }[];
  totals: { accepted: number; duplicates: number; rejected: number };
  /** Answers the next `n` requests with this status instead of taking them. */
  failNext(n: number, status: number): void;
  close(): Promise<void>;
}

/** A readings endpoint that checks the key, validates each reading, and counts duplicates. */
export async function startFakePlinth(key: string, port = 0): Promise<FakePlinth> {
  const stored = new Map<string, StoredReading>();
  const requests: FakePlinth["requests"] = [];
  const totals = { accepted: 0, duplicates: 0, rejected: 0 };
  let failing = { n: 0, status: 503 };

  const server = http.createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on("data", (c: Buffer) => chunks.push(c));
    req.on("end", () => {
      const body = Buffer.concat(chunks).toString("utf8");
      const answer = (status: number, payload: unknown, type = "application/json") => {
        requests.push({ authorization: req.headers.authorization, body, status });
        res.writeHead(status, { "content-type": type });
        res.end(JSON.stringify(payload));
      };
      if (req.method !== "POST" || req.url !== READINGS_PATH)
        return answer(404, { title: "not found" });
      if (req.headers.authorization !== `Bearer ${key}`)
        return answer(401, { title: "unauthorized", status: 401 }, "application/problem+json");
      if (failing.n > 0) {
        failing.n -= 1;
        return answer(
          failing.status,
          { title: "unavailable", status: failing.status },
          "application/problem+json",
        );
      }
      let json: unknown;
      try {
        json = JSON.parse(body);
      } catch {
        return answer(400, { title: "not JSON", status: 400 }, "application/problem+json");
      }
      const batch = readingBatchBody.safeParse(json);
      if (!batch.success)
        return answer(
          400,
          { title: "not a batch of readings", status: 400 },
          "application/problem+json",
        );
      let accepted = 0;
      let duplicates = 0;
      const rejected: { index: number; error: string }[] = [];
      batch.data.readings.forEach((raw, index) => {
        const r = batchReading.safeParse(raw);
        if (!r.success)
          return rejected.push({ index, error: r.error.issues[0]?.message ?? "invalid" });
        const tsMs = typeof r.data.ts === "number" ? r.data.ts : Date.parse(r.data.ts);
        const k = `${r.data.sensor}|${tsMs}`;
        if (stored.has(k)) return duplicates++;
        stored.set(k, {
          sensor: r.data.sensor,
          tsMs,
          tempC: r.data.temp_c ?? null,
          tempF: r.data.temp_f ?? null,
          rhPct: r.data.rh ?? null,
        });
        return accepted++;
      });
      totals.accepted += accepted;
      totals.duplicates += duplicates;
      totals.rejected += rejected.length;
      answer(200, { accepted, duplicates, rejected });
    });
  });
  await new Promise<void>((resolve) => server.listen(port, "127.0.0.1", resolve));
  const bound = (server.address() as AddressInfo).port;
  return {
    url: `http://127.0.0.1:${bound}`,
    port: bound,
    stored,
    requests,
    totals,
    failNext(n, status) {
      failing = { n, status };
    },
    close: () =>
      new Promise<void>((resolve) => {
        server.closeAllConnections();
        server.close(() => resolve());
      }),
  };
}

export interface PublishedMessage {
  topic: string;
  payload: string;
  qos: number;
  clientId: string;
}

export interface TestBroker {
  url: string;
  port: number;
  published: PublishedMessage[];
  /** Usernames that connected with the right key, and those refused. */
  accepted: string[];
  refused: string[];
  /** Cuts every client's connection, as a broker restart or a network blip would. */
  dropClients(): void;
  close(): Promise<void>;
}

/** An aedes broker on loopback that lets in only `gateway` with `key`. */
export async function startTestBroker(gateway: string, key: string): Promise<TestBroker> {
  const { Aedes } = await import("aedes");
  const broker = await Aedes.createBroker();
  const published: PublishedMessage[] = [];
  const accepted: string[] = [];
  const refused: string[] = [];
  broker.authenticate = (_client, username, password, done) => {
    if (username === gateway && password?.toString("utf8") === key) {
      accepted.push(username);
      return done(null, true);
    }
    refused.push(username ?? "");
    const err = Object.assign(new Error("bad gateway name or key"), { returnCode: 4 as const });
    return done(err, false);
  };
  broker.on("publish", (packet, client) => {
    if (!client) return;
    published.push({
      topic: packet.topic,
      payload: Buffer.from(packet.payload).toString("utf8"),
      qos: packet.qos,
      clientId: client.id,
    });
  });
  const sockets = new Set<net.Socket>();
  const server = net.createServer((socket) => {
    sockets.add(socket);
    socket.on("close", () => sockets.delete(socket));
    broker.handle(socket);
  });
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  const port = (server.address() as AddressInfo).port;
  return {
    url: `mqtt://127.0.0.1:${port}`,
    port,
    published,
    accepted,
    refused,
    dropClients() {
      for (const s of sockets) s.destroy();
    },
    close: () =>
      new Promise<void>((resolve) => {
        for (const s of sockets) s.destroy();
        server.close(() => broker.close(() => resolve()));
      }),
  };
}
