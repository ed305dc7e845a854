import type { AuthErrorCode } from "aedes";
import net from "node:net";
import { timingSafeEqual } from "node:crypto";
import { findGatewayByName } from "../db/queries/gateways";
import { hashKey } from "../auth";
import { bus, type GatewayEvent } from "../live/bus";
import { log } from "../log";
import { ingestMqttMessage, isReadingsTopic } from "./messages";

export interface EmbeddedBroker {
  port: number;
  close: () => Promise<void>;
}

function sameHash(a: string, b: string): boolean {
  const x = Buffer.from(a, "hex");
  const y = Buffer.from(b, "hex");
  return x.length === y.length && timingSafeEqual(x, y);
}

/**
 * The embedded MQTT broker. Gateways sign in with their name and key. A reading published
 * at QoS 1 is committed to the database inside authorizePublish, before the broker sends
 * the PUBACK, so an acknowledged reading is never lost.
 */
export async function startEmbeddedBroker(host: string, port: number): Promise<EmbeddedBroker> {
  const { Aedes } = await import("aedes");
  const gatewayOf = new WeakMap<object, number>();
  const broker = await Aedes.createBroker({
    id: "plinth",
    authenticate: (client, username, password, done) => {
      const gw = username ? findGatewayByName(username) : undefined;
      const ok =
        gw && !gw.revokedAt && password && sameHash(gw.keyHash, hashKey(password.toString("utf8")));
      if (!ok) {
        // CONNACK return code 4: bad user name or password (MQTT 3.1.1 §3.2.2.3).
        const err = Object.assign(new Error("bad gateway name or key"), {
          returnCode: 4 as AuthErrorCode,
        });
        log.warn("mqtt sign-in refused", { username, clientId: client.id });
        return done(err, false);
      }
      gatewayOf.set(client, gw.id);
      done(null, true);
    },
    authorizePublish: (client, packet, done) => {
      if (!client || !isReadingsTopic(packet.topic))
        return done(new Error("gateways may publish only on plinth/readings"));
      try {
        ingestMqttMessage(packet.topic, packet.payload as Buffer, gatewayOf.get(client) ?? null);
        done(null);
      } catch (err) {
        log.error("mqtt ingest failed; not acknowledged", { err, topic: packet.topic });
        done(err as Error);
      }
    },
    authorizeSubscribe: (_client, sub, done) =>
      done(new Error(`subscriptions are not offered (${sub.topic})`), null),
  });
  // A revoked gateway's open connections end at once; its next sign-in is refused.
  const onGateway = (e: GatewayEvent) => {
    if (e.change !== "revoked") return;
    for (const c of Object.values(
      (broker as unknown as { clients: Record<string, { close: () => void }> }).clients,
    )) {
      if (gatewayOf.get(c) === e.gatewayId) c.close();
    }
  };
  bus().on("gateway", onGateway);
  const server = net.createServer(broker.handle);
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(port, host, () => resolve());
  });
  const actual = (server.address() as net.AddressInfo).port;
  log.info("mqtt broker listening", { host, port: actual });
  return {
    port: actual,
    close: () =>
      new Promise<void>((resolve) => {
        bus().off("gateway", onGateway);
        broker.close(() => server.close(() => resolve()));
        for (const c of Object.values(
          (broker as unknown as { clients: Record<string, { conn?: net.Socket }> }).clients,
        ))
          c.conn?.destroy();
      }),
  };
}
