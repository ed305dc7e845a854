import { describe, expect, it } from "vitest";
import { detectDelimiter, loggerUploadBody, parseCsvText } from "./parse";

// RFC 4180 shapes (quotes, CRLF) and the two delimiters loggers commonly use besides the comma.
describe("splitting a logger file into cells", () => {
  it.each([
    ["Time,Temp\n2026-03-02 04:10,20.5\n", ","],
    ["Time;Temp;RH\n2026-03-02 04:10;20,5;95\n", ";"],
    ["2026-03-02 04:10;68,0\n2026-03-02 04:20;68,5\n", ";"],
    ["Time\tTemp\n2026-03-02 04:10\t20.5\n\n2026-03-02 04:20\t20.6", "\t"],
    [
      "Logger 4\nSerial 1\nModel A\nDate/Time;Temp, °F;RH\n03/02/2026 4:10;68,0;95\n03/02/2026 4:20;68,5;96\n",
      ";",
    ],
  ])("%j is split on %j", (text, delimiter) => {
    expect(detectDelimiter(text)).toBe(delimiter);
  });

  it("strips a byte-order mark and keeps blank lines, so row numbers match a spreadsheet's", () => {
    const t = parseCsvText(
      '\uFEFF"Date/Time","Temp (°F)"\r\n03/02/2026 4:10:00 AM,68.0\r\n\r\n"03/02/2026 4:20:00 AM",68.5\r\n',
    );
    expect(t.delimiter).toBe(",");
    expect(t.rows).toEqual([
      ["Date/Time", "Temp (°F)"],
      ["03/02/2026 4:10:00 AM", "68.0"],
      [""],
      ["03/02/2026 4:20:00 AM", "68.5"],
    ]);
    expect(t.warnings).toEqual([]);
  });

  it("reads on past a quote that is never closed instead of losing the rest of the file", () => {
    const t = parseCsvText(
      'Time,Temp\n2026-03-02 04:10,"20.5\n2026-03-02 04:20,20.6\n2026-03-02 04:30,20.7\n',
    );
    expect(t.rows).toHaveLength(4);
    expect(t.rows[3]).toEqual(["2026-03-02 04:30", "20.7"]);
    expect(t.warnings[0]).toMatch(/never closed/);
  });
});

describe("the upload body", () => {
  const body = {
    file_name: "C:\\loggers\\bag-7.csv",
    csv: "Time,Temp\n2026-03-02 04:10,20.5\n",
    sensor: " CB-07 ",
    time_zone: "america/chicago",
    columns: { time: "Time", temp: 1 },
    temp_unit: "c",
  };

  it("keeps the file's own name, a trimmed sensor id and the zone's canonical name", () => {
    expect(loggerUploadBody.parse(body)).toMatchObject({
      file_name: "bag-7.csv",
      sensor: "CB-07",
      time_zone: "America/Chicago",
      time_format: "auto",
    });
  });

  it.each([
    ["time_zone", { time_zone: "Central Time" }],
    ["time_zone", { time_zone: "+01:00" }],
    ["sensor", { sensor: "CB 07" }],
    ["temp_unit", { temp_unit: "k" }],
    ["columns.temp", { columns: { time: "Time", temp: -1 } }],
    ["csv", { csv: "" }],
  ])("refuses a bad %s", (field, change) => {
    const r = loggerUploadBody.safeParse({ ...body, ...change });
    expect(r.success).toBe(false);
    expect(r.error!.issues.map((i) => i.path.join("."))).toContain(field);
  });
});
