import { describe, expect, it } from "vitest";
import { faultKey, formatFault, parseFault, parseFaults, switchFault } from "./faults";
import { HELP, parseCli, parseTime } from "./options";
import { demoSensors } from "./plant";

const NOW = Date.UTC(2026, 2, 2, 4, 10, 0);

describe("faults as written", () => {
  it("reads each fault with its argument or its default", () => {
    expect(
      parseFaults(
        "dry-bag:CB-17,cold-snap,silent:EP-03,duplicates,out-of-order,malformed",
        demoSensors,
      ),
    ).toEqual([
      { name: "dry-bag", sensors: ["CB-17"] },
      { name: "cold-snap", dropC: 8 },
      { name: "silent", sensors: ["EP-03"] },
      { name: "duplicates", share: 0.1 },
      { name: "out-of-order", windowTicks: 5 },
      { name: "malformed", share: 0.05 },
    ]);
    expect(parseFault("cold-snap:12", demoSensors)).toEqual({ name: "cold-snap", dropC: 12 });
    expect(parseFault("duplicates:25%", demoSensors)).toEqual({ name: "duplicates", share: 0.25 });
    expect(parseFault("silent:ep-03+EP-04", demoSensors)).toEqual({
      name: "silent",
      sensors: ["EP-03", "EP-04"],
    });
    expect(parseFault("out-of-order:8", demoSensors)).toEqual({
      name: "out-of-order",
      windowTicks: 8,
    });
  });

  it("picks a wet bag on a pour and a probe on a pour when none is named", () => {
    expect(parseFault("dry-bag", demoSensors)).toEqual({ name: "dry-bag", sensors: ["CB-01"] });
    expect(parseFault("silent", demoSensors)).toEqual({ name: "silent", sensors: ["EP-01"] });
    const roomTwo = demoSensors.filter((s) => s.area === "Cure Room 2");
    expect(parseFault("dry-bag", roomTwo)).toEqual({ name: "dry-bag", sensors: ["CB-13"] });
  });

  it("says what is wrong with a fault it cannot read", () => {
    expect(() => parseFault("flood", demoSensors)).toThrow(/unknown fault "flood"/);
    expect(() => parseFault("dry-bag:EP-01", demoSensors)).toThrow(/no cure-bag sensor/);
    expect(() => parseFault("silent:QQ-*", demoSensors)).toThrow(/names no/);
    expect(() => parseFault("duplicates:2", demoSensors)).toThrow(/share/);
    expect(() => parseFault("cold-snap:-3", demoSensors)).toThrow(/drop/);
    expect(() => parseFault("out-of-order:1", demoSensors)).toThrow(/window/);
    expect(() =>
      parseFault(
        "dry-bag",
        demoSensors.filter((s) => s.kind === "bin"),
      ),
    ).toThrow(/no cure-bag sensor/);
  });

  it("switches a fault on, off and over, one cold snap at a time and one switch per bag", () => {
    const a = parseFault("dry-bag:CB-14", demoSensors);
    const b = parseFault("dry-bag:CB-15", demoSensors);
    let on = switchFault([], a, "toggle");
    on = switchFault(on, b, "toggle");
    expect(on.map(formatFault)).toEqual(["dry-bag:CB-14", "dry-bag:CB-15"]);
    on = switchFault(on, a, "toggle");
    expect(on.map(formatFault)).toEqual(["dry-bag:CB-15"]);
    on = switchFault(on, parseFault("cold-snap:5", demoSensors), "on");
    on = switchFault(on, parseFault("cold-snap:9", demoSensors), "on");
    expect(on.map(formatFault)).toEqual(["dry-bag:CB-15", "cold-snap:9"]);
    on = switchFault(on, parseFault("cold-snap", demoSensors), "off");
    expect(on.map(formatFault)).toEqual(["dry-bag:CB-15"]);
    expect(switchFault(on, b, "on")).toHaveLength(1);
    expect(faultKey(parseFault("duplicates:0.2", demoSensors))).toBe("duplicates");
  });
});

describe("the command line", () => {
  it("runs with the demo defaults when given nothing", () => {
    const cmd = parseCli([], {}, NOW);
    expect(cmd.kind).toBe("run");
    if (cmd.kind !== "run") return;
    expect(cmd.options).toMatchObject({ transport: "mqtt", units: "c", once: false, faults: [] });
    expect(cmd.options.sensors).toHaveLength(demoSensors.length);
    expect(cmd.options.key).toBeUndefined();
  });

  it("reads every option", () => {
    const cmd = parseCli(
      [
        "--transport",
        "http",
        "--http-url",
        "http://127.0.0.1:9999",
        "--mqtt-url",
        "mqtt://127.0.0.1:1999",
        "--gateway",
        "yard-gw",
        "--key",
        "k-1",
        "--interval",
        "30",
        "--speed",
        "120",
        "--sensors",
        "CB-0*,EP-05",
        "--batch",
        "250",
        "--units",
        "f",
        "--once",
        "--faults",
        "dry-bag:CB-07,cold-snap:6",
        "--start",
        "-6h",
        "--demo-now",
        "2026-03-01T10:00:00-06:00",
        "--seed",
        "42",
        "--status",
        "0",
      ],
      {},
      NOW,
    );
    if (cmd.kind !== "run") throw new Error("expected a run");
    const o = cmd.options;
    expect(o).toMatchObject({
      transport: "http",
      httpUrl: "http://127.0.0.1:9999",
      mqttUrl: "mqtt://127.0.0.1:1999",
      gateway: "yard-gw",
      key: "k-1",
      intervalS: 30,
      speed: 120,
      batch: 250,
      units: "f",
      once: true,
      startMs: NOW - 6 * 3_600_000,
      demoNowMs: Date.UTC(2026, 2, 1, 16, 0, 0),
      seed: 42,
      statusEveryS: 0,
    });
    expect((o.sensors as readonly { id: string }[]).map((s) => s.id)).toEqual([
      "CB-01",
      "CB-02",
      "CB-03",
      "CB-04",
      "CB-05",
      "CB-06",
      "CB-07",
      "CB-08",
      "CB-09",
      "EP-05",
    ]);
    expect(o.faults).toEqual([
      { name: "dry-bag", sensors: ["CB-07"] },
      { name: "cold-snap", dropC: 6 },
    ]);
  });

  it("takes the key from PLINTH_GATEWAY_KEY, the flag winning", () => {
    const fromEnv = parseCli([], { PLINTH_GATEWAY_KEY: "env-key" }, NOW);
    const fromFlag = parseCli(["--key", "flag-key"], { PLINTH_GATEWAY_KEY: "env-key" }, NOW);
    expect(fromEnv.kind === "run" && fromEnv.options.key).toBe("env-key");
    expect(fromFlag.kind === "run" && fromFlag.options.key).toBe("flag-key");
  });

  it("refuses what it cannot use, saying which option", () => {
    expect(() => parseCli(["--transport", "serial"], {}, NOW)).toThrow(/--transport/);
    expect(() => parseCli(["--units", "k"], {}, NOW)).toThrow(/--units/);
    expect(() => parseCli(["--interval", "0"], {}, NOW)).toThrow(/--interval/);
    expect(() => parseCli(["--speed", "fast"], {}, NOW)).toThrow(/--speed/);
    expect(() => parseCli(["--batch", "6000"], {}, NOW)).toThrow(/--batch/);
    expect(() => parseCli(["--batch", "2.5"], {}, NOW)).toThrow(/--batch/);
    expect(() => parseCli(["--http-url", "ftp://x"], {}, NOW)).toThrow(/--http-url/);
    expect(() => parseCli(["--mqtt-url", "not a url"], {}, NOW)).toThrow(/--mqtt-url/);
    expect(() => parseCli(["--start", "yesterday"], {}, NOW)).toThrow(/--start/);
    expect(() => parseCli(["--faults", "fire"], {}, NOW)).toThrow(/unknown fault/);
    expect(() => parseCli(["--sensors", "QQ-*"], {}, NOW)).toThrow(/--sensors/);
    expect(() => parseCli(["--frobnicate"], {}, NOW)).toThrow();
    expect(() => parseCli(["extra"], {}, NOW)).toThrow(/unexpected/);
  });

  it("answers --help with a text that names every option and fault", () => {
    expect(parseCli(["--help"], {}, NOW)).toEqual({ kind: "help" });
    for (const word of [
      "--help",
      "--transport",
      "--mqtt-url",
      "--http-url",
      "--gateway",
      "--key",
      "--interval",
      "--speed",
      "--sensors",
      "--batch",
      "--units",
      "--once",
      "--faults",
      "--start",
      "--demo-now",
      "--seed",
      "--status",
      "dry-bag",
      "cold-snap",
      "silent",
      "duplicates",
      "out-of-order",
      "malformed",
      "Ctrl-C",
      "/api/v1/readings",
      "plinth/readings",
    ]) {
      expect(HELP).toContain(word);
    }
  });

  it("reads times as ISO 8601 with an offset, epoch ms, or back from now", () => {
    expect(parseTime("now", NOW, "t")).toBe(NOW);
    expect(parseTime("-90m", NOW, "t")).toBe(NOW - 90 * 60_000);
    expect(parseTime("-2d", NOW, "t")).toBe(NOW - 2 * 86_400_000);
    expect(parseTime("2026-03-02T04:10:00Z", NOW, "t")).toBe(NOW);
    expect(parseTime("2026-03-01T22:10:00-06:00", NOW, "t")).toBe(NOW);
    expect(parseTime(String(NOW), NOW, "t")).toBe(NOW);
    expect(() => parseTime("2026-03-02T04:10:00", NOW, "t")).toThrow(/offset/);
  });
});
