import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { cToF, fToC } from "../units";
import {
  advanceMaturity,
  initialMaturity,
  maturityFromHistory,
  recordCompleteAsOf,
  type MaturityParams,
  type MaturityState,
} from "./accumulator";
import { equivalentAgeFromReadings } from "./arrhenius";
import { nurseSaulFromReadings } from "./nurseSaul";
import { MS_PER_H, type Reading } from "./readings";
import { CAST_AT_MS, expectWithin, precastCycleReadings, readingsAt } from "./testFixtures";

/** datum −10 °C and E/R = 5000 K (domain.md §1.2, §2.3), Ts default 20 °C. */
const PARAMS: MaturityParams = { datumC: -10, activationEnergyJMol: 5000 * 8.314 };

/** Feeds readings in arrival order, recomputing from what has arrived when asked to. */
function feed(
  arrivals: readonly Reading[],
  params: MaturityParams = PARAMS,
  castAtMs = CAST_AT_MS,
): MaturityState {
  const arrived: Reading[] = [];
  let state = initialMaturity(castAtMs);
  for (const reading of arrivals) {
    arrived.push(reading);
    const result = advanceMaturity(state, reading, params);
    state = result.needsRecompute ? maturityFromHistory(arrived, castAtMs, params) : result.state;
  }
  return state;
}

const near = (a: number, b: number): boolean => Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(b));

/** Histories around a cast: steps of 0–3 h (so gaps, duplicates and pre-cast readings occur), −40…120 °C. */
const historyArb = fc
  .array(
    fc.record({
      stepMs: fc.integer({ min: 0, max: 3 * MS_PER_H }),
      tempC: fc.double({ min: -40, max: 120, noNaN: true }),
    }),
    {
      maxLength: 40,
    },
  )
  .map((steps) => {
    let tsMs = CAST_AT_MS - MS_PER_H;
    return steps.map(({ stepMs, tempC }) => ({ tsMs: (tsMs += stepMs), tempC }));
  });

describe("advanceMaturity", () => {
  it("reaches the precast cycle's maturity one reading at a time", () => {
    const state = feed(precastCycleReadings());
    // domain.md §1.5 N-9 (½-h readings, trapezoid): datum −10 °C -> 850 °C·h
    expect(state.ttfCH).toBeCloseTo(850, 9);
    // domain.md §2.5 E-5: Q = 5000 K, Ts = 20 °C -> 78.622 h ±0.01
    expectWithin(state.equivalentAgeH, 78.622, 0.01);
    expect(state.complete).toBe(true);
  });

  it("ignores readings before cast; the first at or after cast starts the record", () => {
    const readings = readingsAt([-1, -0.5, 0, 1], [80, 80, 20, 20]);
    const state = feed(readings);
    // contracts.md strength: maturity counts from cast_at; ASTM C1074 Eq. 1: one hour at 20 °C, datum −10 °C -> 30 °C·h
    expect(state.ttfCH).toBeCloseTo(30, 9);
    expect(state.firstTsMs).toBe(CAST_AT_MS);
    const early = advanceMaturity(
      initialMaturity(CAST_AT_MS),
      readings[0] ?? { tsMs: 0, tempC: 0 },
      PARAMS,
    );
    // Plinth policy (accumulator.ts): a pre-cast reading leaves the state as it was
    expect(early).toEqual({
      needsRecompute: false,
      state: initialMaturity(CAST_AT_MS),
      ignored: "before-cast",
    });
  });

  it.each([
    // contracts.md strength, 2 h gap rule applied from cast: first reading 2 h after cast keeps the record complete
    { firstH: 2, complete: true },
    // contracts.md strength, 2 h gap rule applied from cast: first reading 2.5 h after cast makes it incomplete
    { firstH: 2.5, complete: false },
  ])(
    "is complete=$complete when the first reading comes $firstH h after cast",
    ({ firstH, complete }) => {
      const state = feed(readingsAt([firstH, firstH + 1], [20, 20]));
      expect(state.complete).toBe(complete);
      // ASTM C1074 Eq. 1: the time from cast to the first reading adds nothing; one hour at 20 °C -> 30 °C·h
      expect(state.ttfCH).toBeCloseTo(30, 9);
    },
  );

  it("adds nothing over a gap and marks the record incomplete", () => {
    const state = feed(readingsAt([0, 1, 3.5, 4.5], [20, 20, 20, 20]));
    // contracts.md strength: the 2.5 h gap adds nothing -> 2 × 30 = 60 °C·h and complete_record false
    expect(state.ttfCH).toBeCloseTo(60, 9);
    // contracts.md strength: equivalent-age intervals over a gap add nothing either; 20 °C = Ts -> 2 h (E-3)
    expect(state.equivalentAgeH).toBeCloseTo(2, 9);
    expect(state.complete).toBe(false);
  });

  it("asks for a recompute on a late reading and leaves the state alone", () => {
    const [r0, r1, r2] = readingsAt([0, 1, 0.5], [20, 20, 40]);
    if (!r0 || !r1 || !r2) throw new Error("fixture");
    const state = feed([r0, r1]);
    // Plinth policy (accumulator.ts): a reading older than the last needs the history recomputed
    expect(advanceMaturity(state, r2, PARAMS)).toEqual({ needsRecompute: true, state });
    // ASTM C1074 Eq. 1, trapezoid: ½ h of mean 30 and ½ h of mean 30 at datum −10 -> 2 × 0.5 × 40 = 40 °C·h
    expect(maturityFromHistory([r0, r1, r2], CAST_AT_MS, PARAMS).ttfCH).toBeCloseTo(40, 9);
  });

  it("ignores a second reading at the last timestamp", () => {
    const state = feed(readingsAt([0, 1], [20, 20]));
    const again = advanceMaturity(state, { tsMs: CAST_AT_MS + MS_PER_H, tempC: 90 }, PARAMS);
    // contracts.md readings: "the first stored value stands"
    expect(again).toEqual({ needsRecompute: false, state, ignored: "duplicate" });
  });

  it("counts a sensor silent for over 2 h as an open gap", () => {
    const state = feed(readingsAt([0, 1], [20, 20]));
    // contracts.md strength gap rule, applied up to as_of: 2 h after the last reading is still complete ...
    expect(recordCompleteAsOf(state, CAST_AT_MS + 3 * MS_PER_H)).toBe(true);
    // ... and 2 h 1 min after it is not
    expect(recordCompleteAsOf(state, CAST_AT_MS + 3 * MS_PER_H + 60_000)).toBe(false);
    // Plinth policy: with no reading yet the record is not complete
    expect(recordCompleteAsOf(initialMaturity(CAST_AT_MS), CAST_AT_MS)).toBe(false);
  });
});

describe("maturity properties", () => {
  it("never falls as readings arrive in time order", () => {
    // domain.md §1.3 and §2.1: each interval adds max(Ta − T0, 0)·Δt ≥ 0 and α(Ta)·Δt > 0
    fc.assert(
      fc.property(historyArb, (history) => {
        let state = initialMaturity(CAST_AT_MS);
        for (const reading of history) {
          const next = advanceMaturity(state, reading, PARAMS).state;
          expect(next.ttfCH).toBeGreaterThanOrEqual(state.ttfCH);
          expect(next.equivalentAgeH).toBeGreaterThanOrEqual(state.equivalentAgeH);
          state = next;
        }
      }),
    );
  });

  it("is never less for a warmer history", () => {
    // domain.md §1.1 and §2.1: max(Ta − T0, 0) and exp[−Q(1/Ta − 1/Ts)] never fall as Ta rises
    fc.assert(
      fc.property(
        historyArb,
        fc.array(fc.double({ min: 0, max: 30, noNaN: true }), { minLength: 40, maxLength: 40 }),
        (history, warmer) => {
          const warm = history.map((r, i) => ({ ...r, tempC: r.tempC + (warmer[i] ?? 0) }));
          const cold = maturityFromHistory(history, CAST_AT_MS, PARAMS);
          const hot = maturityFromHistory(warm, CAST_AT_MS, PARAMS);
          expect(hot.ttfCH).toBeGreaterThanOrEqual(cold.ttfCH);
          expect(hot.equivalentAgeH).toBeGreaterThanOrEqual(cold.equivalentAgeH);
        },
      ),
    );
  });

  it("gives the whole-history result when readings arrive one by one in any order", () => {
    // contracts.md strength: maturity from cast_at over consecutive readings (trapezoid, clip, 2 h gaps);
    // the one-by-one path with recompute-on-late must equal nurseSaulFromReadings / equivalentAgeFromReadings
    const arrivalsArb = historyArb.chain((history) =>
      fc.shuffledSubarray(history, { minLength: history.length, maxLength: history.length }),
    );
    fc.assert(
      fc.property(arrivalsArb, (arrivals) => {
        const state = feed(arrivals);
        const afterCast = arrivals.filter((r) => r.tsMs >= CAST_AT_MS);
        const ttf = nurseSaulFromReadings(afterCast, PARAMS.datumC);
        const age = equivalentAgeFromReadings(afterCast, PARAMS);
        const firstMs = Math.min(...afterCast.map((r) => r.tsMs));
        expect(near(state.ttfCH, ttf.ttfCH)).toBe(true);
        expect(near(state.equivalentAgeH, age.equivalentAgeH)).toBe(true);
        expect(state.complete).toBe(
          afterCast.length > 0 && ttf.complete && firstMs - CAST_AT_MS <= 2 * MS_PER_H,
        );
      }),
    );
  });

  it("agrees for °F and °C input", () => {
    // domain.md §8.4: M_F = 1.8·M_C with T0,F = 1.8·T0,C + 32 and the same clip; equivalent age unit-free once in kelvin
    fc.assert(
      fc.property(historyArb, fc.double({ min: -15, max: 5, noNaN: true }), (history, datumC) => {
        const inC = maturityFromHistory(history, CAST_AT_MS, { ...PARAMS, datumC });
        const inF = history.map((r) => ({ ...r, tempC: cToF(r.tempC) }));
        const ttfFH = nurseSaulFromReadings(
          inF.filter((r) => r.tsMs >= CAST_AT_MS),
          cToF(datumC),
        ).ttfCH;
        expect(near(ttfFH, 1.8 * inC.ttfCH)).toBe(true);
        const fromF = maturityFromHistory(
          inF.map((r) => ({ ...r, tempC: fToC(r.tempC) })),
          CAST_AT_MS,
          { ...PARAMS, datumC },
        );
        expect(Math.abs(fromF.ttfCH - inC.ttfCH)).toBeLessThanOrEqual(
          1e-6 * Math.max(1, inC.ttfCH),
        );
        expect(Math.abs(fromF.equivalentAgeH - inC.equivalentAgeH)).toBeLessThanOrEqual(
          1e-6 * Math.max(1, inC.equivalentAgeH),
        );
      }),
    );
  });
});
