import { ingestReadings, MAX_BATCH_READINGS, type IngestAnswer } from "../ingest/ingest";
import { log } from "../log";

export const READINGS_TOPIC = "plinth/readings";
const PER_SENSOR = /^plinth\/readings\/([^/]+)$/;

/** True for the topics Plinth takes readings on. */
export function isReadingsTopic(topic: string): boolean {
  return topic === READINGS_TOPIC || PER_SENSOR.test(topic);
}

/**
 * Ingests one MQTT message: a single reading on plinth/readings/<sensor id>, or a batch
 * {"readings": [...]} on plinth/readings, with the same checks as HTTP. A message that is
 * not JSON, or not of that shape, is logged and counted as rejected; it is acknowledged all
 * the same, since sending it again would not mend it. Throws only when the database fails,
 * so the message is not acknowledged and the sender (or broker) delivers it again.
 */
export function ingestMqttMessage(
  topic: string,
  payload: Buffer,
  gatewayId: number | null,
): IngestAnswer {
  const perSensor = PER_SENSOR.exec(topic);
  let body: unknown;
  try {
    body = JSON.parse(new TextDecoder("utf-8", { fatal: true }).decode(payload));
  } catch {
    log.warn("mqtt message rejected: not UTF-8 JSON", { topic, bytes: payload.length });
    return {
      accepted: 0,
      duplicates: 0,
      rejected: [{ index: 0, error: "the payload is not valid UTF-8 JSON" }],
    };
  }
  let answer: IngestAnswer;
  if (perSensor) {
    let sensorFromTopic: string;
    try {
      sensorFromTopic = decodeURIComponent(perSensor[1]!);
    } catch {
      // Acknowledged and dropped: sending it again would not mend it.
      log.warn("mqtt message rejected: bad percent-encoding in the topic", { topic });
      return {
        accepted: 0,
        duplicates: 0,
        rejected: [{ index: 0, error: "the topic's sensor id is not valid percent-encoding" }],
      };
    }
    answer = ingestReadings([body], "mqtt", { gatewayId, sensorFromTopic });
  } else {
    const readings = (body as { readings?: unknown } | null)?.readings;
    if (!Array.isArray(readings)) {
      answer = {
        accepted: 0,
        duplicates: 0,
        rejected: [{ index: 0, error: 'send {"readings": [...]} on plinth/readings' }],
      };
    } else if (readings.length > MAX_BATCH_READINGS) {
      answer = {
        accepted: 0,
        duplicates: 0,
        rejected: [{ index: 0, error: `at most ${MAX_BATCH_READINGS} readings a message` }],
      };
    } else {
      answer = ingestReadings(readings, "mqtt", { gatewayId });
    }
  }
  if (answer.rejected.length > 0) {
    log.warn("mqtt readings rejected", {
      topic,
      rejected: answer.rejected.slice(0, 5),
      count: answer.rejected.length,
    });
  }
  return answer;
}
