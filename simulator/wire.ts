/**
 * How the engine's items are written on the wire, per the readings-in contract: one reading
 * on `plinth/readings/<sensor>`, or `{"readings": [...]}` over HTTP and on `plinth/readings`.
 * Malformed items are written broken on purpose. Those JSON can carry (wrong types, a
 * missing field) ride inside a batch like any reading; those it cannot (bad JSON, NaN) go
 * alone, since they would sink every reading sharing their message.
 */
import { MAX_BATCH_READINGS, MAX_BODY_BYTES, MQTT_BATCH_TOPIC, mqttSensorTopic } from "./contract";
import type { Flaw, Outgoing, Reading } from "./engine";

export type Units = "c" | "f";

const cToF = (c: number) => Math.round(((c * 9) / 5) * 10 + 320) / 10;

/** The members of a good reading (without `sensor`). */
export function readingMembers(r: Reading, units: Units): Record<string, unknown> {
  const m: Record<string, unknown> = { ts: new Date(r.ts).toISOString() };
  if (units === "f") m.temp_f = cToF(r.tempC);
  else m.temp_c = r.tempC;
  if (r.rhPct !== null) m.rh = r.rhPct;
  return m;
}

/** True when a flaw can only be written as text that is not JSON, so it must travel alone. */
export const travelsAlone = (flaw: Flaw) => flaw === "bad-json" || flaw === "nan";

/** A broken reading that is still JSON: a temperature as text and RH as a word, or a field left out. */
function brokenMembers(
  r: Reading,
  flaw: "wrong-type" | "missing-field",
  units: Units,
): Record<string, unknown> {
  const m = readingMembers(r, units);
  const tempKey = units === "f" ? "temp_f" : "temp_c";
  if (flaw === "wrong-type") {
    m[tempKey] = `${String(m[tempKey])} deg`;
    m.rh = r.rhPct === null ? "dry" : { value: r.rhPct };
    return m;
  }
  // missing-field: alternately the time or the temperature, by the reading's minute
  if (Math.floor(r.ts / 60_000) % 2 === 0) delete m.ts;
  else delete m[tempKey];
  return m;
}

/** Text that is not JSON: the reading cut off mid-number, or a bare NaN. */
function brokenText(
  r: Reading,
  flaw: "bad-json" | "nan",
  units: Units,
  withSensor: boolean,
): string {
  const m = readingMembers(r, units);
  const tempKey = units === "f" ? "temp_f" : "temp_c";
  const head = `{${withSensor ? `"sensor":${JSON.stringify(r.sensor)},` : ""}"ts":${JSON.stringify(m.ts)}`;
  if (flaw === "nan")
    return `${head},"${tempKey}":NaN${r.rhPct === null ? "" : `,"rh":${r.rhPct}`}}`;
  const t = String(m[tempKey]);
  return `${head},"${tempKey}":${t.slice(0, Math.max(1, t.length - 1))}`;
}

/** A message ready to send, with what it carries for the counts. */
export interface WireMessage {
  /** MQTT topic; null over HTTP. */
  topic: string | null;
  body: string;
  /** The items it carries, in order (the index Plinth answers with). */
  items: Outgoing[];
  /** True for a message holding one bad-JSON or NaN item. */
  alone: boolean;
}

/** One item as the payload for `plinth/readings/<sensor>`. */
export function singlePayload(item: Outgoing, units: Units): string {
  if (item.kind === "reading") return JSON.stringify(readingMembers(item.reading, units));
  if (travelsAlone(item.flaw))
    return brokenText(item.reading, item.flaw as "bad-json" | "nan", units, false);
  return JSON.stringify(
    brokenMembers(item.reading, item.flaw as "wrong-type" | "missing-field", units),
  );
}

/** One item as an element of `{"readings": [...]}`: JSON text, or null when it must travel alone. */
export function batchElement(item: Outgoing, units: Units): string | null {
  if (item.kind === "reading")
    return JSON.stringify({ sensor: item.reading.sensor, ...readingMembers(item.reading, units) });
  if (travelsAlone(item.flaw)) return null;
  return JSON.stringify({
    sensor: item.reading.sensor,
    ...brokenMembers(item.reading, item.flaw as "wrong-type" | "missing-field", units),
  });
}

/** A bad-JSON or NaN item as a whole batch body of its own. */
export function aloneBatchBody(item: Outgoing & { kind: "malformed" }, units: Units): string {
  return `{"readings":[${brokenText(item.reading, item.flaw as "bad-json" | "nan", units, true)}]}`;
}

/**
 * Packs items, in order, into batch messages of at most `batch` readings and 1 MiB; a
 * bad-JSON or NaN item becomes a message of its own.
 */
export function packBatches(
  items: readonly Outgoing[],
  batch: number,
  units: Units,
  topic: string | null,
): WireMessage[] {
  const size = Math.max(1, Math.min(batch, MAX_BATCH_READINGS));
  const out: WireMessage[] = [];
  let parts: string[] = [];
  let carried: Outgoing[] = [];
  let bytes = 0;
  const close = () => {
    if (carried.length)
      out.push({ topic, body: `{"readings":[${parts.join(",")}]}`, items: carried, alone: false });
    parts = [];
    carried = [];
    bytes = 0;
  };
  for (const item of items) {
    const el = batchElement(item, units);
    if (el === null) {
      close();
      out.push({
        topic,
        body: aloneBatchBody(item as Outgoing & { kind: "malformed" }, units),
        items: [item],
        alone: true,
      });
      continue;
    }
    const elBytes = Buffer.byteLength(el) + 1;
    if (carried.length >= size || bytes + elBytes + 16 > MAX_BODY_BYTES) close();
    parts.push(el);
    carried.push(item);
    bytes += elBytes;
  }
  close();
  return out;
}

/** MQTT messages: one a reading on `plinth/readings/<sensor>` when `batch` is 1, else batches on `plinth/readings`. */
export function mqttMessages(
  items: readonly Outgoing[],
  batch: number,
  units: Units,
): WireMessage[] {
  if (batch > 1) return packBatches(items, batch, units, MQTT_BATCH_TOPIC);
  return items.map((item) => ({
    topic: mqttSensorTopic(item.reading.sensor),
    body: singlePayload(item, units),
    items: [item],
    alone: item.kind === "malformed" && travelsAlone(item.flaw),
  }));
}
