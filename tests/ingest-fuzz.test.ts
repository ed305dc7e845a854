import Database from "better-sqlite3";
import fc from "fast-check";
import mqtt, { type MqttClient } from "mqtt";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startPlinth, type RunningPlinth } from "./helpers/server";

// Property tests of reading ingest against the built server, over HTTP and over the
// embedded MQTT broker: whatever arrives, the server never fails, answers in the contract's
// shape, takes every good reading, and stores nothing that breaks the readings contract.

const GATEWAY = "demo-gateway";
const GATEWAY_KEY = "demo-gateway-key-0001";
const SENSOR_ID = /^[A-Za-z0-9][A-Za-z0-9._:-]{0,63}$/;
const MAX_BODY_BYTES = 1024 * 1024;
const MAX_READINGS = 5_000;
const MINUTE = 60_000;
const DAY = 24 * 60 * MINUTE;
const T0 = Date.now();

let plinth: RunningPlinth;
let db: Database.Database;
let sensorsBefore: Set<string>;
/** Every (sensor, ts) that was sent in a reading the server did not (or need not) reject. */
const sentOk = new Set<string>();
/** Every good reading sent, to find in the database at the end. */
const goodSent: Expected[] = [];

const keyOf = (sensor: string, tsMs: number) => `${sensor}\u0000${tsMs}`;

beforeAll(async () => {
  plinth = await startPlinth();
  db = new Database(plinth.dbPath, { readonly: true, fileMustExist: true });
  sensorsBefore = new Set(
    db
      .prepare<[], { id: string }>("select id from sensors")
      .all()
      .map((r) => r.id),
  );
});

afterAll(async () => {
  db?.close();
  await plinth?.stop();
});

// ---------------------------------------------------------------------------------------
// Readings: good ones (with what must be stored), ones the contract rejects (with the field
// the error must name), and wild ones (anything; only the invariants are checked).

interface Expected {
  sensor: string;
  tsMs: number;
  tempC: number;
  rh: number | null;
}

type Piece =
  | { kind: "good"; text: string; expected: Expected }
  | { kind: "reject"; text: string; field: RegExp }
  | { kind: "wild"; text: string };

let seq = 0;

/** ISO 8601 with an explicit offset, the instant unchanged. */
function isoAt(tsMs: number, offsetMin: number | "Z"): string {
  if (offsetMin === "Z") return new Date(tsMs).toISOString();
  const local = new Date(tsMs + offsetMin * MINUTE).toISOString().slice(0, 23);
  const sign = offsetMin < 0 ? "-" : "+";
  const abs = Math.abs(offsetMin);
  const hh = String(Math.floor(abs / 60)).padStart(2, "0");
  const mm = String(abs % 60).padStart(2, "0");
  return `${local}${sign}${hh}:${mm}`;
}

const tsForm = fc.constantFrom<number | "Z" | "ms">("ms", "Z", 330, -480, 60, -210, 0);
const formatTs = (tsMs: number, form: number | "Z" | "ms"): number | string =>
  form === "ms" ? tsMs : isoAt(tsMs, form);

const SQLISH = [
  "'; DROP TABLE readings; --",
  "1' OR '1'='1",
  '" OR 1=1 --',
  "x'); delete from sensors; --",
  "%' union select * from users --",
  "null",
];

/** A well-formed reading of a sensor never used before (unique sensor id per reading). */
const goodReading: fc.Arbitrary<{ obj: Record<string, unknown>; expected: Expected }> = fc
  .record({
    tag: fc.stringMatching(/^[A-Za-z0-9._:-]{0,12}$/),
    tsMs: fc.integer({ min: T0 - 365 * DAY, max: T0 + 8 * MINUTE }),
    form: tsForm,
    temp: fc.oneof(
      fc.record({
        unit: fc.constant("c" as const),
        v: fc.double({ min: -40, max: 120, noNaN: true }),
      }),
      fc.record({
        unit: fc.constant("f" as const),
        v: fc.double({ min: -39.9, max: 247.9, noNaN: true }),
      }),
    ),
    rh: fc.option(fc.oneof(fc.double({ min: 0, max: 100, noNaN: true }), fc.constant(null)), {
      nil: undefined,
    }),
    note: fc.option(fc.constantFrom(...SQLISH), { nil: undefined }),
  })
  .map(({ tag, tsMs, form, temp, rh, note }) => {
    const sensor = `FZ-${tag}.${seq++}`;
    const obj: Record<string, unknown> = { sensor, ts: formatTs(tsMs, form) };
    obj[temp.unit === "c" ? "temp_c" : "temp_f"] = temp.v;
    if (rh !== undefined) obj.rh = rh;
    if (note !== undefined) obj.note = note;
    const tempC = temp.unit === "c" ? temp.v : ((temp.v - 32) * 5) / 9;
    return { obj, expected: { sensor, tsMs, tempC: tempC === 0 ? 0 : tempC, rh: rh ?? null } };
  });

const goodPiece: fc.Arbitrary<Piece> = goodReading.map(({ obj, expected }) => ({
  kind: "good",
  text: JSON.stringify(obj),
  expected,
}));

/** A good reading with deep nesting in a field Plinth does not read: still good. */
const deepExtraPiece: fc.Arbitrary<Piece> = fc
  .tuple(goodReading, fc.integer({ min: 1, max: 20_000 }))
  .map(([{ obj, expected }, depth]) => ({
    kind: "good",
    text: `${JSON.stringify(obj).slice(0, -1)},"x":${"[".repeat(depth)}${"]".repeat(depth)}}`,
    expected,
  }));

const ODD_CHARS = [
  "ü",
  "é",
  "ß",
  "İ",
  "ı",
  "Ω",
  "٣",
  "𝟘",
  "０",
  "🙂",
  "\u200b",
  "\u202e",
  "\u00a0",
  "\u0000",
  "\n",
  "\t",
  " ",
  "/",
  "\\",
  "'",
  '"',
  ";",
  "%",
  "+",
  "#",
  "*",
  "?",
  "<",
  ">",
  "&",
  "=",
  "|",
  "$",
  "@",
  "!",
  "~",
  "`",
  "^",
  ",",
  "\ud800",
  "\udfff",
];

/** Sensor ids the contract refuses: odd Unicode, SQL, punctuation, too long, empty. */
const oddSensorId: fc.Arbitrary<string> = fc.oneof(
  fc.string({ unit: "grapheme", minLength: 1, maxLength: 70 }).filter((s) => !SENSOR_ID.test(s)),
  fc.string({ unit: "binary", minLength: 1, maxLength: 70 }).filter((s) => !SENSOR_ID.test(s)),
  fc
    .tuple(
      fc.stringMatching(/^[A-Za-z0-9]{1,10}$/),
      fc.constantFrom(...ODD_CHARS),
      fc.stringMatching(/^[A-Za-z0-9]{0,10}$/),
    )
    .map(([a, c, b]) => `FZ-${a}${c}${b}`),
  fc.constantFrom(
    "",
    "FZ-1\n",
    "-FZ",
    ".FZ",
    "_FZ",
    "ＦＺ-1",
    "FZ-1'; DROP TABLE readings; --",
    "x' OR '1'='1",
    `FZ-${"a".repeat(62)}`,
  ),
);

const badSensorPiece: fc.Arbitrary<Piece> = fc
  .tuple(
    fc.oneof(
      oddSensorId,
      fc.oneof(fc.integer(), fc.constant(null), fc.boolean(), fc.constant([]), fc.constant({})),
    ),
    fc.integer({ min: T0 - 30 * DAY, max: T0 }),
  )
  .map(([sensor, ts]) => ({
    kind: "reject",
    text: JSON.stringify({ sensor, ts, temp_c: 20 }),
    field: /sensor/i,
  }));

/** Numbers sent as strings, and other non-numbers. */
const nonNumber = fc.oneof(
  fc.double({ noNaN: true, noDefaultInfinity: true }).map(String),
  fc.integer().map(String),
  fc.constant(null),
  fc.boolean(),
  fc.constant([20]),
  fc.constant({ value: 20 }),
  fc.string({ maxLength: 10 }),
);

const badTempPiece: fc.Arbitrary<Piece> = fc
  .tuple(
    fc.oneof(
      fc
        .double({ min: 120, max: 1e308, minExcluded: true, noNaN: true })
        .map((v) => ({ temp_c: v })),
      fc
        .double({ min: -1e308, max: -40, maxExcluded: true, noNaN: true })
        .map((v) => ({ temp_c: v })),
      fc.double({ min: 248.5, max: 1e308, noNaN: true }).map((v) => ({ temp_f: v })),
      fc.double({ min: -1e308, max: -40.5, noNaN: true }).map((v) => ({ temp_f: v })),
      nonNumber.map((v) => ({ temp_c: v })),
      nonNumber.map((v) => ({ temp_f: v })),
      fc.constant({}),
    ),
    fc.integer({ min: T0 - 30 * DAY, max: T0 }),
    fc.integer({ min: 0, max: 1e9 }),
  )
  .map(([temp, ts, n]) => ({
    kind: "reject",
    text: JSON.stringify({ sensor: `FZ-badtemp.${n}`, ts, ...temp }),
    field: /temp/i,
  }));

const badRhPiece: fc.Arbitrary<Piece> = fc
  .tuple(
    fc.oneof(
      fc.double({ min: 100, max: 1e308, minExcluded: true, noNaN: true }),
      fc.double({ min: -1e308, max: -Number.MIN_VALUE, noNaN: true }),
      nonNumber.filter((v) => v !== null),
    ),
    fc.integer({ min: T0 - 30 * DAY, max: T0 }),
    fc.integer({ min: 0, max: 1e9 }),
  )
  .map(([rh, ts, n]) => ({
    kind: "reject",
    text: JSON.stringify({ sensor: `FZ-badrh.${n}`, ts, temp_c: 20, rh }),
    field: /rh/i,
  }));

const badTsPiece: fc.Arbitrary<Piece> = fc
  .tuple(
    fc.oneof(
      // More than 10 minutes ahead (with room for the time the test itself takes).
      fc.integer({ min: T0 + 15 * MINUTE, max: 8.64e15 - 1 }).map((ms) => ({ ts: ms })),
      fc
        .tuple(fc.integer({ min: T0 + 15 * MINUTE, max: T0 + 3650 * DAY }), tsForm)
        .map(([ms, form]) => ({ ts: formatTs(ms, form) })),
      fc
        .constantFrom(
          "",
          "yesterday",
          "2026-03-02T04:10:00",
          "2026-03-02",
          "04:10",
          "2026-13-45T99:99:99Z",
          "NaN",
        )
        .map((ts) => ({ ts })),
      fc
        .double({ min: 1, max: 1e12, noNaN: true })
        .filter((v) => !Number.isInteger(v))
        .map((ts) => ({ ts })),
      fc.integer({ min: -1e12, max: -1 }).map((ts) => ({ ts })),
      fc.constantFrom<unknown>(null, true, false, [], {}, [T0]).map((ts) => ({ ts })),
      fc.constant({}),
    ),
    fc.integer({ min: 0, max: 1e9 }),
  )
  .map(([ts, n]) => ({
    kind: "reject",
    text: JSON.stringify({ sensor: `FZ-badts.${n}`, ...ts, temp_c: 20 }),
    field: /\bts\b/i,
  }));

/** Numbers JSON accepts but that overflow to ±Infinity, and deep nesting where a number belongs. */
const overflowPiece: fc.Arbitrary<Piece> = fc
  .tuple(
    fc.constantFrom("temp_c", "temp_f", "rh"),
    fc.constantFrom("1e999", "-1e999", "1e5000", "-2e400"),
    fc.integer({ min: 0, max: 1e9 }),
  )
  .map(([field, token, n]) => ({
    kind: "reject",
    text:
      field === "rh"
        ? `{"sensor":"FZ-inf.${n}","ts":${T0 - DAY},"temp_c":20,"rh":${token}}`
        : `{"sensor":"FZ-inf.${n}","ts":${T0 - DAY},"${field}":${token}}`,
    field: field === "rh" ? /rh/i : /temp/i,
  }));

const deepTempPiece: fc.Arbitrary<Piece> = fc
  .tuple(fc.integer({ min: 1, max: 5_000 }), fc.integer({ min: 0, max: 1e9 }))
  .map(([depth, n]) => ({
    kind: "reject",
    text: `{"sensor":"FZ-deep.${n}","ts":${T0 - DAY},"temp_c":${"[".repeat(depth)}20${"]".repeat(depth)}}`,
    field: /temp/i,
  }));

const notObjectPiece: fc.Arbitrary<Piece> = fc
  .oneof(
    fc.integer(),
    fc.string({ maxLength: 20 }),
    fc.constant(null),
    fc.array(fc.integer(), { maxLength: 3 }),
  )
  .map((v) => ({ kind: "reject", text: JSON.stringify(v), field: /object/i }));

/** Not JSON at all: NaN and Infinity literals, hex, leading zeros, single quotes. */
const poisonPiece: fc.Arbitrary<Piece> = fc
  .constantFrom("NaN", "Infinity", "-Infinity", "+1", "01", ".5", "1.", "0x1F", "undefined", "'20'")
  .map((token) => ({
    kind: "wild",
    text: `{"sensor":"FZ-poison","ts":${T0 - DAY},"temp_c":${token}}`,
  }));

const READING_KEYS = ["sensor", "ts", "temp_c", "temp_f", "rh", "battery"];
const wildPiece: fc.Arbitrary<Piece> = fc
  .oneof(
    fc.jsonValue({ maxDepth: 3 }),
    fc.dictionary(fc.constantFrom(...READING_KEYS), fc.jsonValue({ maxDepth: 2 })),
    fc.record({
      sensor: fc.stringMatching(/^[A-Za-z0-9][A-Za-z0-9._:-]{0,8}$/),
      ts: fc.oneof(
        fc.integer({ min: T0 - DAY, max: T0 }).map(String),
        fc.integer({ min: 0, max: T0 }),
      ),
      temp_c: fc.oneof(fc.double(), fc.integer().map(String)),
      temp_f: fc.oneof(fc.constant(undefined), fc.double()),
    }),
  )
  .map((v) => ({ kind: "wild", text: JSON.stringify(v) ?? "null" }));

const piece: fc.Arbitrary<Piece> = fc.oneof(
  { arbitrary: goodPiece, weight: 6 },
  { arbitrary: deepExtraPiece, weight: 1 },
  { arbitrary: badSensorPiece, weight: 3 },
  { arbitrary: badTempPiece, weight: 2 },
  { arbitrary: badRhPiece, weight: 1 },
  { arbitrary: badTsPiece, weight: 2 },
  { arbitrary: overflowPiece, weight: 1 },
  { arbitrary: deepTempPiece, weight: 1 },
  { arbitrary: notObjectPiece, weight: 1 },
  { arbitrary: wildPiece, weight: 2 },
  { arbitrary: poisonPiece, weight: 1 },
);

// ---------------------------------------------------------------------------------------
// Bodies

interface FuzzBody {
  bytes: Uint8Array;
  /** The pieces in the order they appear in "readings", when the body was built from them. */
  pieces: Piece[] | null;
  /** A good reading inside a body that must be refused whole. */
  mustNotStore?: Expected | null;
}

const enc = new TextEncoder();

const piecesBody: fc.Arbitrary<FuzzBody> = fc
  .tuple(
    fc.array(piece, { maxLength: 25 }),
    fc.constantFrom("plain", "spaced", "extra", "extraAfter"),
  )
  .map(([pieces, wrap]) => {
    const list = pieces.map((p) => p.text);
    const text =
      wrap === "plain"
        ? `{"readings":[${list.join(",")}]}`
        : wrap === "spaced"
          ? `\n { "readings" : [ ${list.join(" ,\n\t")} ] } \r\n`
          : wrap === "extra"
            ? `{"gateway":"'; DROP TABLE gateways; --","n":1e999,"readings":[${list.join(",")}]}`
            : `{"readings":[${list.join(",")}],"meta":{"a":[{"b":null}]}}`;
    return { bytes: enc.encode(text), pieces };
  });

/** A good body cut short, or with a stray byte that is not UTF-8 in its first sensor id. */
const brokenBody: fc.Arbitrary<FuzzBody> = fc
  .tuple(
    fc.array(goodPiece, { minLength: 1, maxLength: 5 }),
    fc.nat(),
    fc.constantFrom("cut", "ff", "overlong", "surrogate"),
  )
  .map(([pieces, at, how]) => {
    const bytes = enc.encode(`{"readings":[${pieces.map((p) => p.text).join(",")}]}`);
    const first = pieces[0]!;
    const mustNotStore = first.kind === "good" ? first.expected : null;
    if (how === "cut")
      return { bytes: bytes.slice(0, at % bytes.length), pieces: null, mustNotStore };
    const inSensor = enc.encode('{"readings":[{"sensor":"FZ-').length;
    const bad = how === "ff" ? [0xff] : how === "overlong" ? [0xc0, 0x80] : [0xed, 0xa0, 0x80];
    const out = new Uint8Array(bytes.length + bad.length);
    out.set(bytes.slice(0, inSensor), 0);
    out.set(bad, inSensor);
    out.set(bytes.slice(inSensor), inSensor + bad.length);
    return { bytes: out, pieces: null, mustNotStore };
  });

/** Bodies not of the shape {"readings": [...]}. */
const offShapeBody: fc.Arbitrary<FuzzBody> = fc
  .oneof(
    fc.jsonValue({ maxDepth: 4 }).map((v) => JSON.stringify(v) ?? ""),
    fc.constantFrom(
      "",
      "null",
      "[]",
      '{"readings":{}}',
      '{"readings":null}',
      '{"readings":"[]"}',
      '{"Readings":[]}',
      '[{"readings":[]}]',
      '{"readings":[{"sensor":"A","ts":1,"temp_c":NaN}]}',
      '{"readings":[{"sensor":"A","ts":1,"temp_c":Infinity}]}',
      '{"readings":[{"sensor":"A","ts":1,"temp_c":-Infinity}]}',
      "{'readings':[]}",
      '{"readings":[],}',
      "SELECT * FROM readings;",
    ),
    fc.integer({ min: 1, max: 100_000 }).map((d) => `${"[".repeat(d)}${"]".repeat(d)}`),
    fc.integer({ min: 1, max: 20_000 }).map((d) => `${'{"readings":'.repeat(d)}[]${"}".repeat(d)}`),
    fc.string({ unit: "binary", maxLength: 200 }),
  )
  .map((text) => ({ bytes: enc.encode(text), pieces: null }));

const randomBytesBody: fc.Arbitrary<FuzzBody> = fc
  .uint8Array({ maxLength: 2_000 })
  .map((bytes) => ({ bytes, pieces: null }));

type Verdict = { status: 400 } | { status: 413 } | { status: 200; readings: unknown[] };

/** What the contract says the answer to these bytes must be. */
function verdictFor(bytes: Uint8Array): Verdict {
  if (bytes.byteLength > MAX_BODY_BYTES) return { status: 413 };
  let body: unknown;
  try {
    body = JSON.parse(new TextDecoder("utf-8", { fatal: true }).decode(bytes));
  } catch {
    return { status: 400 };
  }
  if (typeof body !== "object" || body === null || Array.isArray(body)) return { status: 400 };
  const readings = (body as { readings?: unknown }).readings;
  if (!Array.isArray(readings)) return { status: 400 };
  if (readings.length > MAX_READINGS) return { status: 413 };
  return { status: 200, readings };
}

function postReadings(
  body: string | Uint8Array,
  headers: Record<string, string> = {},
): Promise<Response> {
  return fetch(`${plinth.url}/api/v1/readings`, {
    method: "POST",
    headers: {
      authorization: `Bearer ${GATEWAY_KEY}`,
      "content-type": "application/json",
      ...headers,
    },
    body: typeof body === "string" ? body : new Uint8Array(body),
  });
}

const findRow = (sensor: string, tsMs: number) =>
  db
    .prepare<[string, number], { temp_c: number; rh_pct: number | null; source: string }>(
      "select temp_c, rh_pct, source from readings where sensor_id = ? and ts = ?",
    )
    .get(sensor, tsMs);

function expectStored(e: Expected) {
  const row = findRow(e.sensor, e.tsMs);
  expect(row, `${e.sensor} at ${e.tsMs} is stored`).toEqual(
    expect.objectContaining({ temp_c: expect.any(Number) }),
  );
  expect(Math.abs(row!.temp_c - e.tempC)).toBeLessThan(1e-9);
  if (e.rh === null) expect(row!.rh_pct).toBeNull();
  else expect(Math.abs(row!.rh_pct! - e.rh)).toBeLessThan(1e-9);
}

function expectNotStored(e: Expected) {
  expect(findRow(e.sensor, e.tsMs), `${e.sensor} at ${e.tsMs} is not stored`).toBeUndefined();
}

/** The (sensor, ts) a reading names, when it names one, for the provenance check at the end. */
function noteSent(reading: unknown, topicSensor?: string) {
  if (typeof reading !== "object" || reading === null) return;
  const r = reading as { sensor?: unknown; ts?: unknown };
  const sensor = r.sensor ?? topicSensor;
  if (typeof sensor !== "string") return;
  const tsMs = typeof r.ts === "number" ? r.ts : typeof r.ts === "string" ? Date.parse(r.ts) : NaN;
  if (Number.isFinite(tsMs)) sentOk.add(keyOf(sensor, tsMs));
}

async function expectProblem(res: Response, status: number) {
  expect(res.status).toBe(status);
  expect(res.headers.get("content-type")).toMatch(/^application\/problem\+json/);
  const p = (await res.json()) as { status?: unknown; title?: unknown };
  expect(p.status).toBe(status);
  expect(typeof p.title).toBe("string");
}

/** Sends one body and checks the answer against the contract. */
async function sendAndCheck(body: FuzzBody) {
  const verdict = verdictFor(body.bytes);
  const res = await postReadings(body.bytes);
  expect(res.status, "never a server error").toBeLessThan(500);
  if (verdict.status !== 200) {
    await expectProblem(res, verdict.status);
    for (const p of body.pieces ?? []) if (p.kind === "good") expectNotStored(p.expected);
    if (body.mustNotStore) expectNotStored(body.mustNotStore);
    return;
  }
  expect(res.status).toBe(200);
  const answer = (await res.json()) as {
    accepted: number;
    duplicates: number;
    rejected: { index: unknown; error: unknown }[];
  };
  const n = verdict.readings.length;
  expect(Number.isInteger(answer.accepted) && answer.accepted >= 0).toBe(true);
  expect(Number.isInteger(answer.duplicates) && answer.duplicates >= 0).toBe(true);
  expect(Array.isArray(answer.rejected)).toBe(true);
  expect(answer.accepted + answer.duplicates + answer.rejected.length).toBe(n);
  const errors = new Map<number, string>();
  for (const r of answer.rejected) {
    expect(Number.isInteger(r.index)).toBe(true);
    const index = r.index as number;
    expect(index >= 0 && index < n).toBe(true);
    expect(typeof r.error === "string" && r.error.trim().length > 0).toBe(true);
    expect(errors.has(index), `index ${index} rejected once`).toBe(false);
    errors.set(index, r.error as string);
  }
  verdict.readings.forEach((r, i) => {
    if (!errors.has(i)) noteSent(r);
  });
  if (body.pieces) {
    expect(body.pieces.length).toBe(n);
    body.pieces.forEach((p, i) => {
      if (p.kind === "good") {
        expect(errors.get(i), `reading ${i} is good: ${p.text.slice(0, 200)}`).toBeUndefined();
        // 2xx only after the commit: the row is there now.
        expectStored(p.expected);
        goodSent.push(p.expected);
      } else if (p.kind === "reject") {
        const error = errors.get(i);
        expect(error, `reading ${i} must be rejected: ${p.text.slice(0, 200)}`).toEqual(
          expect.any(String),
        );
        expect(error).toMatch(p.field);
      }
    });
  }
}

describe("POST /api/v1/readings with arbitrary bodies", () => {
  it("answers 200 with a full account of each reading, or 400/413 problem details, never 5xx", async () => {
    await fc.assert(fc.asyncProperty(piecesBody, sendAndCheck), { numRuns: 200 });
  });

  it("answers 400 to bodies that are not JSON of the shape, cut short or not UTF-8", async () => {
    await fc.assert(
      fc.asyncProperty(fc.oneof(offShapeBody, brokenBody, randomBytesBody), sendAndCheck),
      { numRuns: 150 },
    );
  });

  it("rejects NaN and Infinity sent as literals, which are not JSON", async () => {
    for (const token of ["NaN", "Infinity", "-Infinity"]) {
      const res = await postReadings(
        `{"readings":[{"sensor":"FZ-nan","ts":${T0 - DAY},"temp_c":${token}}]}`,
      );
      await expectProblem(res, 400);
    }
    expect(db.prepare("select 1 from sensors where id = 'FZ-nan'").get()).toBeUndefined();
  });

  it("takes 5,000 readings in one request and refuses 5,001 with 413, storing none of them", async () => {
    const sensor = `FZ-many.${seq++}`;
    const readings = Array.from({ length: MAX_READINGS + 1 }, (_, i) => ({
      sensor,
      ts: T0 - DAY + i * 1000,
      temp_c: 20 + (i % 10),
    }));
    await expectProblem(await postReadings(JSON.stringify({ readings })), 413);
    expect(
      db.prepare("select count(*) as n from readings where sensor_id = ?").get(sensor),
    ).toEqual({ n: 0 });

    const res = await postReadings(JSON.stringify({ readings: readings.slice(0, MAX_READINGS) }));
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ accepted: MAX_READINGS, duplicates: 0, rejected: [] });
    expect(
      db.prepare("select count(*) as n from readings where sensor_id = ?").get(sensor),
    ).toEqual({
      n: MAX_READINGS,
    });
    for (const r of readings.slice(0, MAX_READINGS)) sentOk.add(keyOf(sensor, r.ts));
  });

  it("refuses a body over 1 MiB with 413, with or without a content-length, and takes one of exactly 1 MiB", async () => {
    const sensor = `FZ-mib.${seq++}`;
    const reading = (ts: number) =>
      `{"readings":[{"sensor":"${sensor}","ts":${ts},"temp_c":21.5}]}`;
    const padded = (text: string, size: number) =>
      text + " ".repeat(size - enc.encode(text).length);

    const over = padded(reading(T0 - DAY), MAX_BODY_BYTES + 1);
    await expectProblem(await postReadings(over), 413);

    const big = enc.encode(padded(reading(T0 - DAY + 1), MAX_BODY_BYTES + 64 * 1024));
    const chunked = new ReadableStream<Uint8Array>({
      start(controller) {
        for (let i = 0; i < big.length; i += 64 * 1024)
          controller.enqueue(big.slice(i, i + 64 * 1024));
        controller.close();
      },
    });
    const res = await fetch(`${plinth.url}/api/v1/readings`, {
      method: "POST",
      headers: { authorization: `Bearer ${GATEWAY_KEY}`, "content-type": "application/json" },
      body: chunked,
      duplex: "half",
    } as RequestInit);
    await expectProblem(res, 413);
    expect(
      db.prepare("select count(*) as n from readings where sensor_id = ?").get(sensor),
    ).toEqual({ n: 0 });

    const exact = padded(reading(T0 - DAY + 2), MAX_BODY_BYTES);
    const ok = await postReadings(exact);
    expect(ok.status).toBe(200);
    expect(await ok.json()).toEqual({ accepted: 1, duplicates: 0, rejected: [] });
    sentOk.add(keyOf(sensor, T0 - DAY + 2));
  });

  it("refuses a body that is not sent as JSON, and stores nothing from it", async () => {
    const sensor = `FZ-type.${seq++}`;
    const body = JSON.stringify({ readings: [{ sensor, ts: T0 - DAY, temp_c: 20 }] });
    for (const type of ["text/plain", "application/x-www-form-urlencoded", "multipart/form-data"]) {
      const res = await postReadings(body, { "content-type": type });
      expect(res.status).toBeGreaterThanOrEqual(400);
      expect(res.status).toBeLessThan(500);
    }
    expect(db.prepare("select 1 from sensors where id = ?").get(sensor)).toBeUndefined();
  });
});

// ---------------------------------------------------------------------------------------
// MQTT over the embedded broker

interface MqttCase {
  topic: string;
  payload: Uint8Array;
  good: Expected[];
  bad: Expected[];
}

function mqttConnect(): Promise<MqttClient> {
  return mqtt.connectAsync(`mqtt://127.0.0.1:${plinth.mqttPort}`, {
    username: GATEWAY,
    password: GATEWAY_KEY,
    clientId: `fuzz-${process.pid}-${seq++}`,
    reconnectPeriod: 0,
    connectTimeout: 5_000,
  });
}

/**
 * Publishes at QoS 1 and resolves on the PUBACK. Rejects when the broker closes the
 * connection instead (mqtt.js would otherwise keep the message for a reconnect that a
 * client without reconnects never makes).
 */
function publishAcked(
  client: MqttClient,
  topic: string,
  payload: string | Uint8Array,
): Promise<void> {
  return new Promise((resolve, reject) => {
    const onClose = () =>
      reject(new Error(`the broker closed the connection instead of acknowledging ${topic}`));
    if (!client.connected) return onClose();
    client.once("close", onClose);
    client.publish(topic, Buffer.from(payload), { qos: 1 }, (err) => {
      client.removeListener("close", onClose);
      if (err) reject(err);
      else resolve();
    });
  });
}

/** A reading on its sensor's own topic, with or without the sensor in the body. */
const perSensorGood: fc.Arbitrary<MqttCase> = fc
  .tuple(goodReading, fc.boolean())
  .map(([{ obj, expected }, keepSensor]) => {
    const body = { ...obj };
    if (!keepSensor) delete body.sensor;
    return {
      topic: `plinth/readings/${expected.sensor}`,
      payload: enc.encode(JSON.stringify(body)),
      good: [expected],
      bad: [],
    };
  });

/** A reading the contract rejects, on a good sensor's topic. */
const perSensorBad: fc.Arbitrary<MqttCase> = fc
  .oneof(
    badTempPiece,
    badRhPiece,
    badTsPiece,
    overflowPiece,
    notObjectPiece,
    wildPiece,
    poisonPiece,
    deepTempPiece,
  )
  .map((p) => ({
    topic: `plinth/readings/FZ-topic.${seq++}`,
    payload: enc.encode(p.text),
    good: [],
    bad: [],
  }));

/** A good reading with a stray byte that is not UTF-8: dropped whole. */
const perSensorNotUtf8: fc.Arbitrary<MqttCase> = fc
  .tuple(
    goodReading,
    fc.constantFrom([0xff], [0xc0, 0x80], [0xed, 0xa0, 0x80], [0xf8, 0x88, 0x80, 0x80, 0x80]),
  )
  .map(([{ obj, expected }, bad]) => {
    const text = enc.encode(JSON.stringify({ ...obj, sensor: undefined, note: "x" }));
    const at = text.lastIndexOf(0x78); // inside the note's string
    const out = new Uint8Array(text.length + bad.length);
    out.set(text.slice(0, at), 0);
    out.set(bad, at);
    out.set(text.slice(at), at + bad.length);
    return { topic: `plinth/readings/${expected.sensor}`, payload: out, good: [], bad: [expected] };
  });

const batchCase: fc.Arbitrary<MqttCase> = piecesBody.map(({ bytes, pieces }) => ({
  topic: "plinth/readings",
  payload: bytes,
  // A poison piece makes the whole message not JSON, and then nothing of it is stored.
  good: pieces!.some((p) => p.kind === "wild" && p.text.startsWith('{"sensor":"FZ-poison"'))
    ? []
    : pieces!.flatMap((p) => (p.kind === "good" ? [p.expected] : [])),
  bad: pieces!.some((p) => p.kind === "wild" && p.text.startsWith('{"sensor":"FZ-poison"'))
    ? pieces!.flatMap((p) => (p.kind === "good" ? [p.expected] : []))
    : [],
}));

const bytesCase: fc.Arbitrary<MqttCase> = fc
  .tuple(
    fc.oneof(
      fc.uint8Array({ maxLength: 1_024 }),
      fc.string({ unit: "binary", maxLength: 300 }).map((s) => enc.encode(s)),
      fc.jsonValue({ maxDepth: 4 }).map((v) => enc.encode(JSON.stringify(v) ?? "")),
      offShapeBody.map((b) => b.bytes),
    ),
    fc.boolean(),
  )
  .map(([payload, batch]) => ({
    topic: batch ? "plinth/readings" : `plinth/readings/FZ-bytes.${seq++}`,
    payload,
    good: [],
    bad: [],
  }));

function noteMqttSent(c: MqttCase) {
  let body: unknown;
  try {
    body = JSON.parse(new TextDecoder("utf-8", { fatal: true }).decode(c.payload));
  } catch {
    return;
  }
  if (c.topic === "plinth/readings") {
    const readings = (body as { readings?: unknown } | null)?.readings;
    if (Array.isArray(readings)) for (const r of readings) noteSent(r);
  } else {
    noteSent(body, decodeURIComponent(c.topic.slice("plinth/readings/".length)));
  }
}

/**
 * Code points on which MQTT 3.1.1 (§1.5.3) lets a receiver close the connection: U+0000,
 * control characters and non-characters. Such ids are sent percent-encoded instead.
 */
function hasMayCloseCodePoint(s: string): boolean {
  return [...s].some((ch) => {
    const c = ch.codePointAt(0)!;
    return (
      c < 0x20 ||
      (c >= 0x7f && c <= 0x9f) ||
      (c >= 0xfdd0 && c <= 0xfdef) ||
      (c & 0xfffe) === 0xfffe
    );
  });
}

/** A lone UTF-16 surrogate cannot be sent in a topic (UTF-8) at all. */
const LONE_SURROGATE = /[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/;

describe("MQTT ingest on the embedded broker with arbitrary payloads", () => {
  let client: MqttClient;
  let closes = 0;

  beforeAll(async () => {
    client = await mqttConnect();
    client.on("close", () => closes++);
  });
  afterAll(async () => {
    await client?.endAsync(true);
  });

  it("acknowledges every message at QoS 1 (a bad one is dropped), stays connected, and stores the good ones before the PUBACK", async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.oneof(
          { arbitrary: perSensorGood, weight: 3 },
          { arbitrary: perSensorBad, weight: 3 },
          { arbitrary: perSensorNotUtf8, weight: 1 },
          { arbitrary: batchCase, weight: 3 },
          { arbitrary: bytesCase, weight: 3 },
        ),
        async (c) => {
          noteMqttSent(c);
          await publishAcked(client, c.topic, c.payload);
          expect(client.connected).toBe(true);
          for (const e of c.good) {
            expectStored(e);
            goodSent.push(e);
          }
          for (const e of c.bad) expectNotStored(e);
        },
      ),
      { numRuns: 200 },
    );
    expect(closes).toBe(0);
    const health = await fetch(`${plinth.url}/api/health`);
    expect(health.status).toBe(200);
    expect(await health.json()).toEqual({ ok: true, db: "ok", mqtt: "ok" });
  });

  it("acknowledges and drops a good reading on a topic naming an odd sensor id", async () => {
    await fc.assert(
      fc.asyncProperty(
        oddSensorId.filter((s) => s.length > 0 && !LONE_SURROGATE.test(s)),
        fc.boolean(),
        async (odd, encoded) => {
          // Raw, the id must still be a single topic level a client may publish to.
          const raw = !encoded && !/[/+#%]/.test(odd) && !hasMayCloseCodePoint(odd);
          const topic = `plinth/readings/${raw ? odd : encodeURIComponent(odd)}`;
          await publishAcked(client, topic, JSON.stringify({ ts: T0 - DAY, temp_c: 20 }));
          expect(client.connected).toBe(true);
          expect(db.prepare("select 1 from sensors where id = ?").get(odd)).toBeUndefined();
        },
      ),
      { numRuns: 100 },
    );
    expect(closes).toBe(0);
  });

  it("acknowledges and drops a reading whose topic has a malformed percent-escape", async () => {
    const other = await mqttConnect();
    try {
      for (const segment of ["%", "%E0%A4", "FZ-%zz", "%FF"]) {
        await publishAcked(
          other,
          `plinth/readings/${segment}`,
          JSON.stringify({ ts: T0 - DAY, temp_c: 20 }),
        );
        expect(other.connected).toBe(true);
      }
    } finally {
      await other.endAsync(true);
    }
  });
});

// ---------------------------------------------------------------------------------------

describe("after the fuzzing", () => {
  it("has stored every good reading, nothing unsent, and nothing that breaks the readings contract", async () => {
    const health = await fetch(`${plinth.url}/api/health`);
    expect(health.status).toBe(200);
    expect(goodSent.length).toBeGreaterThan(100);
    for (const e of goodSent) expectStored(e);

    const nowMs = Date.now();
    const rows = db
      .prepare<[], { sensor_id: string; ts: number; temp_c: number; rh_pct: number | null }>(
        "select sensor_id, ts, temp_c, rh_pct from readings",
      )
      .all();
    const broken = rows.filter(
      (r) =>
        !SENSOR_ID.test(r.sensor_id) ||
        !(r.temp_c >= -40 && r.temp_c <= 120) ||
        !(r.rh_pct === null || (r.rh_pct >= 0 && r.rh_pct <= 100)) ||
        !(Number.isInteger(r.ts) && r.ts <= nowMs + 10 * MINUTE),
    );
    expect(broken).toEqual([]);

    const sensors = db.prepare<[], { id: string }>("select id from sensors").all();
    expect(sensors.filter((s) => !SENSOR_ID.test(s.id))).toEqual([]);

    const unsent = rows.filter(
      (r) => !sensorsBefore.has(r.sensor_id) && !sentOk.has(keyOf(r.sensor_id, r.ts)),
    );
    expect(unsent.slice(0, 5)).toEqual([]);

    const integrity = db.prepare<[], { integrity_check: string }>("pragma integrity_check").get();
    expect(integrity?.integrity_check).toBe("ok");
  });
});
