import { describe, expect, it } from "vitest";
import fc from "fast-check";
import {
  cToF,
  deltaCToF,
  deltaFToC,
  displayStrength,
  fToC,
  kgM3ToLbYd3,
  lbYd3ToKgM3,
  mpaToPsi,
  PA_PER_PSI,
  psiToMpa,
} from "./units";

describe("pressure", () => {
  // Reference sheet §8.3: 1 psi = 0.45359237 kg × 9.80665 m/s² / (0.0254 m)² = 6894.757293168 Pa
  // (exact by the definitions of the pound, standard gravity and the inch).
  it("uses the exact pascals per psi", () => {
    expect(PA_PER_PSI).toBeCloseTo(6894.757293168, 6);
  });

  // Reference sheet §8.3 check values.
  it.each([
    [500, 3.447379],
    [3000, 20.684272],
    [4000, 27.579029],
    [5000, 34.473786],
  ])("%d psi is %f MPa", (psi, mpa) => {
    expect(psiToMpa(psi)).toBeCloseTo(mpa, 6);
  });

  it.each([
    [1, 145.0377377],
    [20, 2900.7548],
    [35, 5076.3208],
  ])("%d MPa is %f psi", (mpa, psi) => {
    expect(mpaToPsi(mpa)).toBeCloseTo(psi, 4);
  });

  it("round-trips psi and MPa", () => {
    fc.assert(
      fc.property(fc.double({ min: 0, max: 30_000, noNaN: true }), (psi) => {
        expect(mpaToPsi(psiToMpa(psi))).toBeCloseTo(psi, 6);
      }),
    );
  });

  it("shows psi to the nearest 10 and MPa to a tenth", () => {
    expect(displayStrength(psiToMpa(3504), "us")).toEqual({ value: "3,500", unit: "psi" });
    expect(displayStrength(24.13, "si")).toEqual({ value: "24.1", unit: "MPa" });
  });
});

describe("temperature", () => {
  // Reference sheet §8.3: °F = 1.8·°C + 32, with its check pairs.
  it.each([
    [-10, 14],
    [0, 32],
    [10, 50],
    [20, 68],
    [23, 73.4],
    [40, 104],
    [70, 158],
    [88, 190.4],
  ])("%d °C is %d °F", (c, f) => {
    expect(cToF(c)).toBeCloseTo(f, 9);
    expect(fToC(f)).toBeCloseTo(c, 9);
  });

  // Reference sheet §8.3: differences and rates scale by 1.8 with no offset.
  it("converts rates without the offset", () => {
    expect(deltaCToF(22)).toBeCloseTo(39.6, 9);
    expect(deltaFToC(40)).toBeCloseTo(22.2222, 4);
  });

  it("agrees in both directions for any temperature", () => {
    fc.assert(
      fc.property(fc.double({ min: -60, max: 150, noNaN: true }), (c) => {
        expect(fToC(cToF(c))).toBeCloseTo(c, 9);
      }),
    );
  });
});

describe("mix proportions", () => {
  // 1 lb/yd³ = 0.45359237 kg / 0.764554857984 m³ = 0.593276 kg/m³ (exact definitions; from memory
  // as a commonly quoted factor).
  it("converts pounds per cubic yard to kilograms per cubic metre", () => {
    expect(lbYd3ToKgM3(1)).toBeCloseTo(0.593276, 6);
    expect(kgM3ToLbYd3(lbYd3ToKgM3(658))).toBeCloseTo(658, 9);
  });
});
