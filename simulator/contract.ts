/**
 * The readings-in contract as the simulator understands it (see the shared contracts page):
 * the shape of one reading, of a batch, the MQTT topics and the HTTP path. Kept beside the
 * simulator so that it can run against any Plinth instance without importing the server.
 */
import { z } from "zod";

export const READINGS_PATH = "/api/v1/readings";
export const MQTT_BATCH_TOPIC = "plinth/readings";
export const mqttSensorTopic = (sensor: string) => `${MQTT_BATCH_TOPIC}/${sensor}`;
/** At most this many readings in one HTTP request, and this many bytes. */
export const MAX_BATCH_READINGS = 5_000;
export const MAX_BODY_BYTES = 1_048_576;

const finite = z.number().refine(Number.isFinite, "a finite number");
const ts = z.union([z.iso.datetime({ offset: true }), z.number().int()]);

const members = z.object({
  ts,
  temp_c: finite.optional(),
  temp_f: finite.optional(),
  rh: finite.optional(),
});
const oneTemperature = (r: { temp_c?: number | undefined; temp_f?: number | undefined }) =>
  (r.temp_c === undefined) !== (r.temp_f === undefined);

/** One reading on `plinth/readings/<sensor id>`: the sensor is in the topic. */
export const singleReadingPayload = members.refine(
  oneTemperature,
  "exactly one of temp_c and temp_f",
);

/** One element of `{"readings": [...]}`, over HTTP or on `plinth/readings`. */
export const batchReading = members
  .extend({ sensor: z.string().min(1) })
  .refine(oneTemperature, "exactly one of temp_c and temp_f");

export const readingBatchBody = z.object({
  readings: z.array(z.unknown()).max(MAX_BATCH_READINGS),
});

/** Plinth's answer to a batch over HTTP. */
export const readingBatchAnswer = z.object({
  accepted: z.number().int().nonnegative(),
  duplicates: z.number().int().nonnegative(),
  rejected: z.array(z.object({ index: z.number().int().nonnegative(), error: z.string() })),
});
export type ReadingBatchAnswer = z.infer<typeof readingBatchAnswer>;
