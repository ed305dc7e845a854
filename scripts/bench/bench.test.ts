// The bench's own small pieces: statistics, the event-stream reader, the options. (The
// benchmarks themselves run only under `npm run bench`; no test here times anything.)
import { describe, expect, it } from "vitest";
import { benchmarkNames, readOptions } from "./options";
import { drainEvents, type SseEvent } from "./sse";
import { median, percentile, randomSource, worst } from "./stats";

describe("bench statistics", () => {
  it.each([
    { values: [3, 1, 2], median: 2, p90: 3, worst: 3 },
    { values: [4, 1, 3, 2], median: 2.5, p90: 4, worst: 4 },
    { values: [7], median: 7, p90: 7, worst: 7 },
  ])("median, p90 and worst of $values", ({ values, median: m, p90, worst: w }) => {
    expect(median(values)).toBe(m);
    expect(percentile(values, 90)).toBe(p90);
    expect(worst(values)).toBe(w);
  });

  it("gives NaN for no samples", () => {
    expect(median([])).toBeNaN();
    expect(percentile([], 50)).toBeNaN();
    expect(worst([])).toBeNaN();
  });

  it("repeats its pseudo-random sequence for a seed, within [0, 1)", () => {
    const a = randomSource(7);
    const b = randomSource(7);
    const xs = Array.from({ length: 100 }, () => a());
    expect(xs).toEqual(Array.from({ length: 100 }, () => b()));
    expect(xs.every((x) => x >= 0 && x < 1)).toBe(true);
  });
});

describe("bench event-stream reader", () => {
  it("takes complete events and keeps a partial one for the next chunk", () => {
    const seen: SseEvent[] = [];
    const rest = drainEvents(
      'retry: 2000\nevent: hello\ndata: {"at":1}\n\n: keep-alive\n\nevent: readings\ndata: [1]\n\nevent: rea',
      (e) => seen.push(e),
    );
    expect(seen).toEqual([
      { event: "hello", data: '{"at":1}' },
      { event: "readings", data: "[1]" },
    ]);
    expect(rest).toBe("event: rea");
    drainEvents(`${rest}dings\ndata: [2]\n\n`, (e) => seen.push(e));
    expect(seen.at(-1)).toEqual({ event: "readings", data: "[2]" });
  });

  it("joins multi-line data and reads CRLF line ends", () => {
    const seen: SseEvent[] = [];
    drainEvents("data: a\r\ndata: b\r\n\r\n", (e) => seen.push(e));
    expect(seen).toEqual([{ event: "message", data: "a\nb" }]);
  });
});

describe("bench options", () => {
  it("runs every benchmark at full size by default", () => {
    const o = readOptions([]);
    expect(o.quick).toBe(false);
    expect(o.only).toEqual([...benchmarkNames]);
    expect(o.only.slice(0, 6)).toEqual(["ingest", "mqtt", "chart", "live", "strength", "history"]);
  });

  it("takes --quick and --only, repeated or comma-separated", () => {
    const o = readOptions(["--quick", "--only", "chart,live", "--only", "mqtt"]);
    expect(o.quick).toBe(true);
    expect(o.only).toEqual(["chart", "live", "mqtt"]);
    expect(o.sizes.mqttMessages).toBeLessThan(readOptions([]).sizes.mqttMessages);
  });

  it("runs the strength and history benchmarks smaller in a quick run", () => {
    const quick = readOptions(["--quick", "--only", "strength,history"]);
    const full = readOptions(["--only", "strength", "--only", "history"]);
    expect(quick.only).toEqual(["strength", "history"]);
    expect(full.sizes.strengthPours).toBe(500);
    expect(full.sizes.historySensors * full.sizes.historyDays).toBe(70);
    expect(quick.sizes.strengthPours).toBeLessThan(full.sizes.strengthPours);
    expect(quick.sizes.historyRuns).toBeLessThan(full.sizes.historyRuns);
  });
});
