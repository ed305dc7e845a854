import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { call, demoEmail, signIn, startPlinth, type RunningPlinth } from "./helpers/server";

// Logger uploads against the built server with the demo plant: preview stores nothing,
// import stores the good rows once, the history and the audit log record each upload.
let plinth: RunningPlinth;
let operator: string;
let viewer: string;
let manager: string;

beforeAll(async () => {
  plinth = await startPlinth();
  operator = await signIn(plinth.url, demoEmail("operator"));
  viewer = await signIn(plinth.url, demoEmail("viewer"));
  manager = await signIn(plinth.url, demoEmail("manager"));
});
afterAll(async () => {
  await plinth?.stop();
});

const postJson = (cookie: string, path: string, body: unknown) =>
  call(plinth.url, cookie, path, {
    method: "POST",
    headers: { "content-type": "application/json" },
    body: JSON.stringify(body),
  });

async function storedReadings(sensor: string, from: string, to: string) {
  const res = await call(
    plinth.url,
    operator,
    `/api/v1/sensors/${sensor}/readings?from=${from}&to=${to}&max_points=20000`,
  );
  if (res.status === 404) return null;
  expect(res.status).toBe(200);
  return ((await res.json()) as { readings: { ts: string; temp_c: number; rh: number | null }[] })
    .readings;
}

interface ImportAnswer {
  id: number;
  sensor: string;
  rows_in: number;
  rows_accepted: number;
  rows_duplicate: number;
  rows_rejected: number;
  errors: { row: number; error: string }[];
  new_sensor: boolean;
}

// Row 3 has no usable temperature; rows 2 and 4 are good. Times are UTC wall times.
const withOneBadRow = {
  file_name: "bag-7-march.csv",
  csv: "Date/Time,Temp (°C),RH %\n2026-03-02 04:10,31.2,96.5\n2026-03-02 04:20,--,96.0\n2026-03-02 04:30,31.6,95.8\n",
  sensor: "LOG-UPL-1",
  time_zone: "UTC",
  columns: { time: "Date/Time", temp: "Temp (°C)", rh: "RH %" },
  temp_unit: "c",
};

describe("logger uploads", () => {
  it("a preview with one bad row shows its error and stores nothing", async () => {
    const res = await postJson(operator, "/api/v1/uploads/preview", withOneBadRow);
    expect(res.status).toBe(200);
    const p = (await res.json()) as {
      rows_in: number;
      rows_good: number;
      rows_bad: number;
      delimiter: string;
      header_row: number;
      already_stored: number;
      previous_upload: unknown;
      rows: { row: number; ts: string | null; temp_c: number | null; error: string | null }[];
      errors: { row: number; error: string }[];
    };
    expect(p).toMatchObject({
      rows_in: 3,
      rows_good: 2,
      rows_bad: 1,
      delimiter: ",",
      header_row: 1,
      already_stored: 0,
      previous_upload: null,
    });
    expect(p.errors).toEqual([{ row: 3, error: 'temperature "--" is not a number' }]);
    expect(p.rows.map((r) => [r.row, r.ts, r.temp_c])).toEqual([
      [2, "2026-03-02T04:10:00.000Z", 31.2],
      [3, "2026-03-02T04:20:00.000Z", null],
      [4, "2026-03-02T04:30:00.000Z", 31.6],
    ]);

    expect(
      await storedReadings("LOG-UPL-1", "2026-03-01T00:00:00Z", "2026-03-03T00:00:00Z"),
    ).toBeNull();
    const history = (await (await call(plinth.url, operator, "/api/v1/uploads")).json()) as {
      uploads: { file_name: string }[];
    };
    expect(history.uploads.map((u) => u.file_name)).not.toContain("bag-7-march.csv");
  });

  it("an import stores the good rows, lists the bad one and records the upload", async () => {
    const res = await postJson(operator, "/api/v1/uploads", withOneBadRow);
    expect(res.status).toBe(201);
    const a = (await res.json()) as ImportAnswer;
    expect(a).toMatchObject({
      sensor: "LOG-UPL-1",
      rows_in: 3,
      rows_accepted: 2,
      rows_duplicate: 0,
      rows_rejected: 1,
      new_sensor: true,
    });
    expect(a.errors).toEqual([{ row: 3, error: 'temperature "--" is not a number' }]);

    const stored = await storedReadings(
      "LOG-UPL-1",
      "2026-03-01T00:00:00Z",
      "2026-03-03T00:00:00Z",
    );
    expect(stored).toEqual([
      { ts: "2026-03-02T04:10:00.000Z", temp_c: 31.2, rh: 96.5 },
      { ts: "2026-03-02T04:30:00.000Z", temp_c: 31.6, rh: 95.8 },
    ]);

    const me = (await (await call(plinth.url, operator, "/api/v1/me")).json()) as { name: string };
    const history = (await (await call(plinth.url, viewer, "/api/v1/uploads")).json()) as {
      uploads: Record<string, unknown>[];
    };
    expect(history.uploads[0]).toEqual({
      id: a.id,
      file_name: "bag-7-march.csv",
      sensor: "LOG-UPL-1",
      uploaded_by: me.name,
      created_at: expect.stringMatching(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{3}Z$/),
      rows_in: 3,
      rows_accepted: 2,
      rows_duplicate: 0,
      rows_rejected: 1,
      time_zone: "UTC",
    });

    const audit = (await (
      await call(plinth.url, manager, "/api/v1/audit?action=upload.imported")
    ).json()) as {
      entries: {
        action: string;
        entity_id: string;
        actor: string;
        detail: Record<string, unknown>;
      }[];
    };
    expect(audit.entries[0]).toMatchObject({
      action: "upload.imported",
      entity_id: String(a.id),
      actor: "operator@example.com",
      detail: {
        file_name: "bag-7-march.csv",
        sensor: "LOG-UPL-1",
        rows_accepted: 2,
        rows_rejected: 1,
      },
    });
  });

  it("importing the same file again skips every reading as a duplicate and doubles nothing", async () => {
    const preview = (await (
      await postJson(operator, "/api/v1/uploads/preview", withOneBadRow)
    ).json()) as {
      already_stored: number;
      previous_upload: { file_name: string } | null;
    };
    expect(preview.already_stored).toBe(2);
    expect(preview.previous_upload?.file_name).toBe("bag-7-march.csv");

    const res = await postJson(operator, "/api/v1/uploads", withOneBadRow);
    expect(res.status).toBe(201);
    expect(await res.json()).toMatchObject({
      rows_in: 3,
      rows_accepted: 0,
      rows_duplicate: 2,
      rows_rejected: 1,
      new_sensor: false,
    });
    expect(
      await storedReadings("LOG-UPL-1", "2026-03-01T00:00:00Z", "2026-03-03T00:00:00Z"),
    ).toHaveLength(2);
  });

  it("a viewer reads the history but may neither preview nor import", async () => {
    expect((await call(plinth.url, viewer, "/api/v1/uploads")).status).toBe(200);
    for (const path of ["/api/v1/uploads", "/api/v1/uploads/preview"]) {
      const res = await postJson(viewer, path, { ...withOneBadRow, sensor: "LOG-UPL-VIEW" });
      expect(res.status, path).toBe(403);
      expect(res.headers.get("content-type")).toContain("application/problem+json");
    }
    expect(
      await storedReadings("LOG-UPL-VIEW", "2026-03-01T00:00:00Z", "2026-03-03T00:00:00Z"),
    ).toBeNull();
  });

  it("semicolon-separated °F values in America/Chicago land at the right UTC instants", async () => {
    // A byte-order mark, a title line, semicolons, decimal commas and US dates. CST is
    // UTC−06:00 and CDT UTC−05:00; 01:30 on 2026-11-01 happens twice, and a logger writing
    // through the repeated hour records it twice: first CDT, then CST. domain.md §8.3:
    // 68 °F = 20 °C, 86 °F = 30 °C, 50 °F = 10 °C.
    const csv = [
      "\uFEFFYard logger 4",
      "Date/Time;Temp (°F);RH %",
      "03/02/2026 4:10:00 AM;68,0;95",
      "07/01/2026 4:10:00 PM;86,0;",
      "11/01/2026 1:30:00 AM;50,0;90",
      "11/01/2026 1:30:00 AM;50,0;91",
      "",
    ].join("\r\n");
    const request = {
      file_name: "yard-4.csv",
      csv,
      sensor: "LOG-CHI-4",
      time_zone: "America/Chicago",
    };

    // Without a mapping, the preview proposes one from the header, unit included.
    const guessed = await postJson(operator, "/api/v1/uploads/preview", request);
    expect(guessed.status).toBe(200);
    const g = (await guessed.json()) as {
      delimiter: string;
      header_row: number;
      headers: string[];
      columns: { time: number; date: number | null; temp: number; rh: number | null };
      temp_unit: string;
      time_format: string;
      rows_good: number;
      rows_above_header: number;
    };
    expect(g).toMatchObject({
      delimiter: ";",
      header_row: 2,
      headers: ["Date/Time", "Temp (°F)", "RH %"],
      columns: { time: 0, date: null, temp: 1, rh: 2 },
      temp_unit: "f",
      time_format: "mdy",
      rows_good: 4,
      rows_above_header: 1,
    });

    const res = await postJson(operator, "/api/v1/uploads", {
      ...request,
      columns: g.columns,
      temp_unit: "f",
    });
    expect(res.status).toBe(201);
    expect(await res.json()).toMatchObject({
      rows_in: 4,
      rows_accepted: 4,
      rows_duplicate: 0,
      rows_rejected: 0,
    });

    const stored = await storedReadings(
      "LOG-CHI-4",
      "2026-03-01T00:00:00Z",
      "2026-11-02T00:00:00Z",
    );
    expect(stored!.map((r) => r.ts)).toEqual([
      "2026-03-02T10:10:00.000Z",
      "2026-07-01T21:10:00.000Z",
      "2026-11-01T06:30:00.000Z",
      "2026-11-01T07:30:00.000Z",
    ]);
    const temps = stored!.map((r) => r.temp_c);
    [20, 30, 10, 10].forEach((c, i) => expect(temps[i]).toBeCloseTo(c, 9));
    expect(stored!.map((r) => r.rh)).toEqual([95, null, 90, 91]);
  });

  it("refuses a request that does not fit, field by field", async () => {
    const badZone = await postJson(operator, "/api/v1/uploads", {
      ...withOneBadRow,
      time_zone: "Central",
    });
    expect(badZone.status).toBe(400);
    const z = (await badZone.json()) as { errors: { field: string }[] };
    expect(z.errors.map((e) => e.field)).toEqual(["time_zone"]);

    const badColumn = await postJson(operator, "/api/v1/uploads", {
      ...withOneBadRow,
      columns: { time: "Date/Time", temp: "Temperature" },
    });
    expect(badColumn.status).toBe(400);
    const c = (await badColumn.json()) as { errors: { field: string; error: string }[] };
    expect(c.errors).toEqual([
      { field: "columns.temp", error: expect.stringMatching(/no column is named "Temperature"/) },
    ]);

    const badSensor = await postJson(operator, "/api/v1/uploads", {
      ...withOneBadRow,
      sensor: "bag 7; drop",
    });
    expect(badSensor.status).toBe(400);

    const tooBig = await postJson(operator, "/api/v1/uploads/preview", {
      ...withOneBadRow,
      csv: `Time,Temp\n${"2026-03-02 04:10,20.0\n".repeat(260_000)}`,
    });
    expect(tooBig.status).toBe(413);

    const history = (await (await call(plinth.url, operator, "/api/v1/uploads")).json()) as {
      uploads: { file_name: string }[];
    };
    expect(history.uploads.filter((u) => u.file_name === "bag-7-march.csv")).toHaveLength(2);
  });
});
