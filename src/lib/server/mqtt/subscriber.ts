import mqtt, { type MqttClient } from "mqtt";
import { log } from "../log";
import { ingestMqttMessage, READINGS_TOPIC } from "./messages";

export interface Subscriber {
  connected: () => boolean;
  close: () => Promise<void>;
}

/**
 * Subscribes to an external broker at QoS 1 with a persistent session (clean: false and a
 * fixed client id), so readings published while Plinth is down are delivered when it is
 * back. Each message is committed before mqtt.js sends its PUBACK.
 */
export function startSubscriber(url: string, clientId: string): Subscriber {
  const client: MqttClient = mqtt.connect(url, {
    clientId,
    clean: false,
    reconnectPeriod: 1_000,
    connectTimeout: 10_000,
    protocolVersion: 4,
  });
  let subscribed = false;
  client.on("close", () => (subscribed = false));
  client.handleMessage = (packet, callback) => {
    try {
      ingestMqttMessage(packet.topic, packet.payload as Buffer, null);
      callback();
    } catch (err) {
      log.error("mqtt ingest failed; not acknowledged", { err, topic: packet.topic });
      callback(err as Error);
    }
  };
  client.on("connect", (ack) => {
    log.info("mqtt subscriber connected", {
      url: url.replace(/\/\/[^@]*@/, "//***@"),
      sessionPresent: ack.sessionPresent,
    });
    if (ack.sessionPresent) {
      subscribed = true;
      return;
    }
    client.subscribe([READINGS_TOPIC, `${READINGS_TOPIC}/+`], { qos: 1 }, (err) => {
      if (err) log.error("mqtt subscribe failed", { err });
      else subscribed = true;
    });
  });
  client.on("error", (err) => log.warn("mqtt subscriber error", { err }));
  return {
    // Ready only once the subscription stands (or the broker kept Plinth's session).
    connected: () => client.connected && subscribed,
    close: () => new Promise<void>((resolve) => client.end(false, {}, () => resolve())),
  };
}
