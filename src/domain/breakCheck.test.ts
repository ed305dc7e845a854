import { describe, expect, it } from "vitest";
import { compareBreak, estimateAtTime, RECALIBRATE_WARNING } from "./breakCheck";
import { MS_PER_H } from "./maturity/readings";
import { CAST_AT_MS, expectWithin, readingsAt } from "./maturity/testFixtures";
import type { StrengthCurve } from "./strength/curves";

const params = { datumC: -10, activationEnergyJMol: 41_570 };
const hours = (n: number) => Array.from({ length: n + 1 }, (_, i) => i);
const constant = (n: number, tempC: number) =>
  readingsAt(
    hours(n),
    hours(n).map(() => tempC),
  );
// domain.md §3.3 Set H log fit: a = −50.0515 MPa, b = 22.2045 MPa per decade.
const setH: StrengthCurve = { model: "log", aMpa: -50.0515, bMpaPerDecade: 22.2045 };

describe("the estimate at the time of a break", () => {
  // domain.md §1.5 N-2 (ASTM C1074 Eq. 1): 24 h at 20 °C with datum −10 °C is 720 °C·h.
  it("counts each sensor's maturity up to the break and no further", () => {
    const est = estimateAtTime(
      [{ sensorId: "CB-01", fromMs: CAST_AT_MS, toMs: null, readings: constant(48, 20) }],
      CAST_AT_MS,
      CAST_AT_MS + 24 * MS_PER_H,
      params,
      setH,
    );
    expect(est?.governingSensor).toBe("CB-01");
    expectWithin(est!.ttfCH, 720, 1e-9);
    expect(est!.completeRecord).toBe(true);
    // Set H log form at 720 °C·h: −50.0515 + 22.2045·log10(720) (domain.md §3.3 formula).
    expectWithin(est!.estimateMpa!, -50.0515 + 22.2045 * Math.log10(720), 1e-9);
  });

  // domain.md §1.5 N-1 and N-2: the cold sensor (20 °C) governs over the warm one.
  it("takes the coldest sensor as governing", () => {
    const est = estimateAtTime(
      [
        { sensorId: "warm", fromMs: CAST_AT_MS, toMs: null, readings: constant(24, 40) },
        { sensorId: "cold", fromMs: CAST_AT_MS, toMs: null, readings: constant(24, 20) },
      ],
      CAST_AT_MS,
      CAST_AT_MS + 24 * MS_PER_H,
      params,
      setH,
    );
    expect(est?.governingSensor).toBe("cold");
    expectWithin(est!.ttfCH, 720, 1e-9);
  });

  it("prefers sensors still on the pour at the break over one taken off earlier", () => {
    const est = estimateAtTime(
      [
        {
          sensorId: "gone",
          fromMs: CAST_AT_MS,
          toMs: CAST_AT_MS + 6 * MS_PER_H,
          readings: constant(24, 20),
        },
        { sensorId: "on", fromMs: CAST_AT_MS, toMs: null, readings: constant(24, 20) },
      ],
      CAST_AT_MS,
      CAST_AT_MS + 24 * MS_PER_H,
      params,
      null,
    );
    expect(est).toMatchObject({ governingSensor: "on", estimateMpa: null });
  });

  it("has no estimate before any sensor was on the pour", () => {
    expect(
      estimateAtTime(
        [
          {
            sensorId: "late",
            fromMs: CAST_AT_MS + 10 * MS_PER_H,
            toMs: null,
            readings: constant(24, 20),
          },
        ],
        CAST_AT_MS,
        CAST_AT_MS + 5 * MS_PER_H,
        params,
        setH,
      ),
    ).toBeNull();
  });

  // Plinth contract: a gap over 2 h adds nothing and makes the record incomplete.
  it("reports an incomplete record when the readings have a gap over 2 h", () => {
    const readings = readingsAt([0, 1, 4, 5], [20, 20, 20, 20]);
    const est = estimateAtTime(
      [{ sensorId: "CB-02", fromMs: CAST_AT_MS, toMs: null, readings }],
      CAST_AT_MS,
      CAST_AT_MS + 5 * MS_PER_H,
      params,
      setH,
    );
    expectWithin(est!.ttfCH, 60, 1e-9); // two 1 h intervals at 30 °C above datum
    expect(est!.completeRecord).toBe(false);
  });
});

describe("a break against the estimate", () => {
  // The 90 % rule is Plinth's (the product owner's); the boundary is exclusive.
  it.each([
    [17.9, 20, RECALIBRATE_WARNING],
    [18, 20, null],
    [22, 20, null],
  ])("%f MPa against an estimate of %f MPa warns %s", (s, e, warning) => {
    const c = compareBreak(s, e);
    expect(c.warning).toBe(warning);
    expect(c.ratio).toBeCloseTo(s / e, 12);
  });
  it("has no ratio and no warning without an estimate", () => {
    expect(compareBreak(20, null)).toEqual({ ratio: null, warning: null });
    expect(compareBreak(20, 0)).toEqual({ ratio: null, warning: null });
  });
});
