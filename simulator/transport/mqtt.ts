/**
 * Readings over MQTT, as a gateway publishes them: one reading on `plinth/readings/<sensor>`,
 * or `{"readings": [...]}` on `plinth/readings` when batching; username the gateway's name,
 * password its key; QoS 1.
 *
 * The client reconnects by itself (every `reconnectPeriodMs`) and keeps every unacknowledged
 * QoS 1 message in its in-flight store, sending it again after a reconnect; the simulator's own
 * queue holds the rest so that no more than `maxInFlight` messages sit in the client at once.
 * Messages carrying only malformed items go at QoS 0: a broker that drops a bad message
 * without a PUBACK cannot then stall the stream by having it resent forever.
 */
import { connect, type MqttClient } from "mqtt";
import type { Outgoing } from "../engine";
import { mqttMessages, type Units, type WireMessage } from "../wire";
import { emptyStats, Waiters, within, type Transport, type TransportEvents } from "./types";

export interface MqttTransportOptions extends TransportEvents {
  url: string;
  gateway: string;
  key: string;
  /** 1 (the default): a message a reading on its sensor's topic; more: batches on `plinth/readings`. */
  batch?: number;
  units?: Units;
  maxQueue?: number;
  /** Messages handed to the client and not yet acknowledged, at most. */
  maxInFlight?: number;
  reconnectPeriodMs?: number;
  clientId?: string;
}

/** CONNACK codes that say the name or key is wrong (MQTT 3.1.1: 4, 5; MQTT 5: 134, 135). */
const REFUSED_CODES = new Set([4, 5, 134, 135]);

export function createMqttTransport(options: MqttTransportOptions): Transport {
  const batch = Math.max(1, Math.min(options.batch ?? 1, 5_000));
  const units = options.units ?? "c";
  const maxQueue = options.maxQueue ?? 50_000;
  const maxInFlight = options.maxInFlight ?? 200;
  const event = options.onEvent ?? (() => {});

  const stats = emptyStats();
  const queue: Outgoing[] = [];
  let inFlightMessages = 0;
  let inFlightItems = 0;
  let closing = false;
  let wasConnected = false;
  let saidOffline = false;
  let refused = false;
  /**
   * True from the client's `connect` event (sent once it has re-sent its in-flight store) to
   * the connection's close. New messages go out only then; in between they wait here.
   */
  let ready = false;
  const idle = new Waiters(() => queue.length === 0 && inFlightMessages === 0);

  const client: MqttClient = connect(options.url, {
    username: options.gateway,
    password: options.key,
    clientId:
      options.clientId ??
      `plinth-sim-${options.gateway}-${process.pid}-${Math.random().toString(16).slice(2, 8)}`,
    clean: true,
    reconnectPeriod: options.reconnectPeriodMs ?? 1_000,
    connectTimeout: 10_000,
    reconnectOnConnackError: true,
  });

  client.on("connect", () => {
    ready = true;
    stats.connected = true;
    stats.lastError = null;
    saidOffline = false;
    event(
      wasConnected
        ? `reconnected to the broker at ${options.url}`
        : `connected to the broker at ${options.url} as ${options.gateway}`,
    );
    wasConnected = true;
    pump();
  });
  client.on("offline", () => {
    ready = false;
    stats.connected = false;
    if (!saidOffline && !closing && !refused) {
      saidOffline = true;
      const waiting = inFlightItems + queue.length;
      event(
        wasConnected
          ? `lost the broker at ${options.url}; reconnecting, ${waiting} readings kept`
          : `cannot reach the broker at ${options.url}${stats.lastError ? ` (${stats.lastError})` : ""}; trying again, ${waiting} readings kept`,
      );
    }
  });
  client.on("close", () => {
    ready = false;
    stats.connected = false;
  });
  client.on("error", (err) => {
    stats.lastError = err.message;
    const code = Number((err as { code?: unknown }).code);
    if (REFUSED_CODES.has(code) && !refused) {
      refused = true;
      options.onFatal?.(
        new Error(
          `the broker refused gateway "${options.gateway}" (${err.message}); check --gateway and --key`,
        ),
      );
    }
  });

  function send(msg: WireMessage): void {
    const carriesReadings = msg.items.some((i) => i.kind === "reading");
    const malformed = msg.items.filter((i) => i.kind === "malformed").length;
    inFlightMessages += 1;
    inFlightItems += msg.items.length;
    stats.sent += msg.items.length - malformed;
    stats.malformedSent += malformed;
    client.publish(
      msg.topic ?? "plinth/readings",
      msg.body,
      { qos: carriesReadings ? 1 : 0 },
      (err) => {
        inFlightMessages -= 1;
        inFlightItems -= msg.items.length;
        if (err) {
          stats.lastError = err.message;
          if (!closing) {
            // The client gave the message up before sending it (the connection closed while it
            // was re-sending its store): queue it again, to go out once reconnected.
            queue.unshift(...msg.items);
            stats.sent -= msg.items.length - malformed;
            stats.malformedSent -= malformed;
            stats.retries += 1;
          }
        } else if (carriesReadings) {
          stats.acked += msg.items.length - malformed;
        }
        // Not from inside the client's callback: it may be walking a list that publish adds to.
        setImmediate(pump);
        idle.check();
      },
    );
  }

  function pump(): void {
    while (ready && !closing && queue.length > 0 && inFlightMessages < maxInFlight) {
      const msg = mqttMessages(queue.slice(0, batch), batch, units)[0];
      if (!msg) break;
      queue.splice(0, msg.items.length);
      send(msg);
    }
    idle.check();
  }

  return {
    kind: "mqtt",
    enqueue(items) {
      if (closing || items.length === 0) return;
      queue.push(...items);
      pump();
    },
    room: () => Math.max(0, maxQueue - queue.length - inFlightItems),
    stats: () => ({
      ...stats,
      connected: ready,
      queued: queue.length,
      inFlight: inFlightItems,
    }),
    idle: () => idle.wait(),
    async close({ drainMs = 5_000 } = {}) {
      await within(idle.wait(), drainMs);
      closing = true;
      const undelivered = queue.length + inFlightItems;
      await new Promise<void>((resolve) => client.end(true, {}, () => resolve()));
      return { undelivered };
    },
  };
}
