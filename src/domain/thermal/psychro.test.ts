import psychrolib from "psychrolib";
import { describe, expect, it } from "vitest";
import { expectWithin } from "../maturity/testFixtures";
import {
  condensesOn,
  dewPointC,
  EVAPORATION_CAUTION_KG_M2_H,
  EVAPORATION_CAUTION_LOW_BLEED_KG_M2_H,
  evaporationRateKgM2H,
  humidityRatioGPerKg,
  MAGNUS_ALDUCHOV_ESKRIDGE,
  MAGNUS_BOLTON,
  relativeHumidityPct,
  saturationVapourPressureHpa,
} from "./psychro";

psychrolib.SetUnitSystem(psychrolib.SI);

// domain.md §8.2 check values: T, RH, es (WMO), Td by WMO, Alduchov-Eskridge, Bolton, and psychrolib 1.1.1.
const TABLE_8_2 = [
  { t: 20, rh: 50, es: 23.326, wmo: 9.255, ae: 9.261, bolton: 9.27, psychrolib: 9.272 },
  { t: 25, rh: 60, es: 31.601, wmo: 16.693, ae: 16.698, bolton: 16.705, psychrolib: 16.701 },
  { t: 30, rh: 80, es: 42.337, wmo: 26.169, ae: 26.171, bolton: 26.175, psychrolib: 26.169 },
  { t: 5, rh: 90, es: 8.717, wmo: 3.495, ae: 3.496, bolton: 3.497, psychrolib: 3.498 },
  { t: 10, rh: 95, es: 12.26, wmo: 9.235, ae: 9.236, bolton: 9.236, psychrolib: 9.237 },
  { t: 35, rh: 20, es: 56.128, wmo: 8.688, ae: 8.702, bolton: 8.724, psychrolib: 8.707 },
  { t: 0, rh: 80, es: 6.112, wmo: -3.04, ae: -3.039, bolton: -3.037, psychrolib: -2.683 },
];

describe("Magnus saturation pressure and dew point", () => {
  it.each(TABLE_8_2)("matches the sheet at $t °C, $rh %", ({ t, rh, es, wmo, ae, bolton }) => {
    // domain.md §8.2 es WMO column (Magnus, WMO-No. 8 coefficients), ±5e-4 hPa from the rounding
    expectWithin(saturationVapourPressureHpa(t), es, 5e-4);
    // domain.md §8.2 Td WMO column, ±0.005 °C (sheet's tolerance against a chosen Magnus set)
    expectWithin(dewPointC(t, rh), wmo, 0.005);
    // domain.md §8.2 Td AE96 column (Alduchov & Eskridge 1996), ±0.005 °C
    expectWithin(dewPointC(t, rh, MAGNUS_ALDUCHOV_ESKRIDGE), ae, 0.005);
    // domain.md §8.2 Td Bolton column (Bolton 1980), ±0.005 °C
    expectWithin(dewPointC(t, rh, MAGNUS_BOLTON), bolton, 0.005);
  });

  it.each(TABLE_8_2.filter((row) => row.t > 0))(
    "agrees with psychrolib at $t °C, $rh %",
    ({ t, rh, psychrolib: td }) => {
      // domain.md §8.2 and §9: psychrolib 1.1.1 (ASHRAE / Hyland-Wexler), ±0.05 °C for 0–50 °C
      expectWithin(dewPointC(t, rh), psychrolib.GetTDewPointFromRelHum(t, rh / 100), 0.05);
      // domain.md §8.2 Td psychrolib column: the library still gives the sheet's value
      expectWithin(psychrolib.GetTDewPointFromRelHum(t, rh / 100), td, 5e-4);
    },
  );

  it("differs from psychrolib's frost point below freezing", () => {
    // domain.md §8.2: at 0 °C psychrolib uses ice (−2.683 °C, a frost point); Magnus over water gives −3.040 °C
    expect(Math.abs(dewPointC(0, 80) - psychrolib.GetTDewPointFromRelHum(0, 0.8))).toBeGreaterThan(
      0.3,
    );
  });

  it("gives the dew point of a moist-cure room", () => {
    // domain.md §7.1: dew point of 23 °C / 95 % air = 22.15 °C (Magnus WMO; psychrolib 22.155)
    expectWithin(dewPointC(23, 95), 22.15, 0.005);
    expectWithin(dewPointC(23, 95), psychrolib.GetTDewPointFromRelHum(23, 0.95), 0.05);
  });

  it("is the air temperature at saturation and refuses RH outside (0, 100]", () => {
    // Magnus inverse (domain.md §8.1): at RH 100 %, γ = a·t/(b + t), so Td = t
    expect(dewPointC(17, 100)).toBeCloseTo(17, 12);
    // contracts.md readings: rh outside 0 to 100 is rejected; ln(0) has no dew point
    expect(() => dewPointC(20, 0)).toThrow(RangeError);
    expect(() => dewPointC(20, 101)).toThrow(RangeError);
  });
});

describe("relative humidity, humidity ratio and condensation", () => {
  it("gives RH from air and dew-point temperatures", () => {
    // domain.md §8.2: RH from T = 25 °C and Td = 15 °C = 100·es(15)/es(25) = 53.85 %
    expectWithin(relativeHumidityPct(25, 15), 53.85, 0.005);
    // Magnus inverse (domain.md §8.1): RH from the dew point of 20 °C / 50 % gives 50 % back
    expect(relativeHumidityPct(20, dewPointC(20, 50))).toBeCloseTo(50, 9);
  });

  it("gives the humidity ratio of 20 °C / 50 % air", () => {
    // domain.md §8.2: W(20 °C, 50 %, 1013.25 hPa) = 7.243 g/kg (Magnus)
    expectWithin(humidityRatioGPerKg(20, 50), 7.243, 5e-4);
    // domain.md §8.2: psychrolib gives 7.262 g/kg; the two agree within 0.3 %
    expectWithin(
      humidityRatioGPerKg(20, 50),
      psychrolib.GetHumRatioFromRelHum(20, 0.5, 101_325) * 1000,
      0.003 * 7.262,
    );
  });

  it.each([
    // domain.md §8.2 condensation alert: air 20 °C / 60 % has Td 11.995 °C; a surface at 11.9 °C condenses
    { surfaceC: 11.9, condenses: true },
    // domain.md §8.2: a surface at 12.1 °C does not
    { surfaceC: 12.1, condenses: false },
  ])(
    "says condensation is $condenses for a surface at $surfaceC °C under 20 °C / 60 %",
    ({ surfaceC, condenses }) => {
      expect(condensesOn(surfaceC, 20, 60)).toBe(condenses);
    },
  );

  it("puts the 20 °C / 60 % dew point at 11.995 °C", () => {
    // domain.md §8.2 condensation check: Td = 11.995 °C
    expectWithin(dewPointC(20, 60), 11.995, 0.005);
  });
});

describe("evaporationRateKgM2H", () => {
  it.each([
    // domain.md §6.3 (Uno 1998), ±5e-4; inch-pound form converted (ACI 305R-10, from memory) within 5 %
    { tc: 20, ta: 20, rh: 50, v: 16, uno: 0.4451, inchPound: 0.4633 },
    { tc: 30, ta: 30, rh: 30, v: 20, uno: 1.3409, inchPound: 1.3997 },
    { tc: 25, ta: 15, rh: 70, v: 10, uno: 0.5422, inchPound: 0.5669 },
    { tc: 35, ta: 35, rh: 10, v: 40, uno: 4.0491, inchPound: 4.2294 },
    { tc: 20, ta: 20, rh: 100, v: 16, uno: 0, inchPound: 0 },
  ])("is $uno kg/m²/h at $tc/$ta °C, $rh %, $v km/h", ({ tc, ta, rh, v, uno, inchPound }) => {
    const rate = evaporationRateKgM2H(tc, ta, rh, v);
    expectWithin(rate, uno, 5e-4);
    // domain.md §6.3: the two forms differ by about 4 %; do not cross-assert tighter than 5 %
    expectWithin(rate, inchPound, 0.05 * inchPound);
  });

  it("crosses the caution levels where the sheet says", () => {
    // domain.md §6.3: 30/30 °C, 30 %, 20 km/h -> 1.3409, above 1.0 kg/m²/h (§6.2, ACI 308-81 as cited)
    expect(evaporationRateKgM2H(30, 30, 30, 20)).toBeGreaterThan(EVAPORATION_CAUTION_KG_M2_H);
    // domain.md §6.3: 25/15 °C, 70 %, 10 km/h -> 0.5422, above the 0.5 low-bleed level (§6.2) but under 1.0
    expect(evaporationRateKgM2H(25, 15, 70, 10)).toBeGreaterThan(
      EVAPORATION_CAUTION_LOW_BLEED_KG_M2_H,
    );
    expect(evaporationRateKgM2H(25, 15, 70, 10)).toBeLessThan(EVAPORATION_CAUTION_KG_M2_H);
  });

  it("is never negative when the air is warmer and wetter than the surface", () => {
    // common practice: a colder surface under warm humid air gains water; Plinth reports 0 evaporation
    expect(evaporationRateKgM2H(10, 30, 90, 10)).toBe(0);
  });
});
