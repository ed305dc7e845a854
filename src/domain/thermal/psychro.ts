/**
 * Psychrometrics for curing rooms and cure bags (domain.md §8), and the evaporation rate from a
 * fresh concrete surface (domain.md §6). Temperatures °C, relative humidity in percent (0–100),
 * pressures hPa. The Magnus formula is over liquid water at every temperature, also below 0 °C.
 */

/** Magnus coefficients: es(t) = c·exp[a·t/(b + t)] hPa, t in °C. */
export interface MagnusCoefficients {
  a: number;
  bC: number;
  cHpa: number;
}

/** WMO CIMO Guide (WMO-No. 8, 2008), over water: Plinth's default (domain.md §8.1). */
export const MAGNUS_WMO: MagnusCoefficients = { a: 17.62, bC: 243.12, cHpa: 6.112 };
/** Alduchov & Eskridge (1996) (domain.md §8.1; coefficients from memory there). */
export const MAGNUS_ALDUCHOV_ESKRIDGE: MagnusCoefficients = { a: 17.625, bC: 243.04, cHpa: 6.1094 };
/** Bolton (1980) (domain.md §8.1). */
export const MAGNUS_BOLTON: MagnusCoefficients = { a: 17.67, bC: 243.5, cHpa: 6.112 };

/** Standard sea-level air pressure, hPa. */
export const STANDARD_PRESSURE_HPA = 1013.25;

/**
 * Evaporation rate (kg/(m²·h)) at which precautions against plastic shrinkage cracking are
 * needed: 1.0 (≈ 0.2 lb/(ft²·h); ACI 308-81 as cited, UFGS), and 0.5 for low-bleed mixes such as
 * silica fume (≈ 0.1 lb/(ft²·h)) (domain.md §6.2).
 */
export const EVAPORATION_CAUTION_KG_M2_H = 1.0;
export const EVAPORATION_CAUTION_LOW_BLEED_KG_M2_H = 0.5;

/** The Magnus exponent a·t/(b + t). */
const magnusExponent = (tempC: number, k: MagnusCoefficients): number =>
  (k.a * tempC) / (k.bC + tempC);

/**
 * Saturation vapour pressure over water (hPa) by the Magnus formula es = c·exp[a·t/(b + t)].
 * Source: WMO-No. 8 (2008) coefficients by default (domain.md §8.1).
 */
export function saturationVapourPressureHpa(
  tempC: number,
  coeffs: MagnusCoefficients = MAGNUS_WMO,
): number {
  return coeffs.cHpa * Math.exp(magnusExponent(tempC, coeffs));
}

/**
 * Dew point (°C) of air at `tempC` and `rhPct`: γ = ln(RH/100) + a·t/(b + t); Td = b·γ/(a − γ).
 * Over water, so below 0 °C it is a dew point, not a frost point. Equals `tempC` at 100 %.
 * Source: Magnus inverse, WMO coefficients by default (domain.md §8.1). Throws a RangeError
 * unless 0 < rhPct ≤ 100.
 */
export function dewPointC(
  tempC: number,
  rhPct: number,
  coeffs: MagnusCoefficients = MAGNUS_WMO,
): number {
  if (!(rhPct > 0 && rhPct <= 100))
    throw new RangeError(`relative humidity must be in (0, 100] %, got ${rhPct}`);
  const gamma = Math.log(rhPct / 100) + magnusExponent(tempC, coeffs);
  return (coeffs.bC * gamma) / (coeffs.a - gamma);
}

/** Relative humidity (%) from air and dew-point temperatures: 100·es(Td)/es(T) (domain.md §8.2). */
export function relativeHumidityPct(
  tempC: number,
  dewPointTempC: number,
  coeffs: MagnusCoefficients = MAGNUS_WMO,
): number {
  return (
    (100 * saturationVapourPressureHpa(dewPointTempC, coeffs)) /
    saturationVapourPressureHpa(tempC, coeffs)
  );
}

/**
 * Humidity ratio (g of water vapour per kg of dry air): W = 622·e/(p − e), e = RH/100·es
 * (domain.md §8.1). Pressure in hPa, default {@link STANDARD_PRESSURE_HPA}.
 */
export function humidityRatioGPerKg(
  tempC: number,
  rhPct: number,
  pressureHpa = STANDARD_PRESSURE_HPA,
): number {
  const e = (rhPct / 100) * saturationVapourPressureHpa(tempC);
  return (622 * e) / (pressureHpa - e);
}

/**
 * True when water condenses on a surface at `surfaceTempC` under air at `airTempC`/`rhPct`:
 * the surface is at or below the air's dew point (Magnus WMO; domain.md §8.2 condensation check).
 */
export function condensesOn(surfaceTempC: number, airTempC: number, rhPct: number): boolean {
  return surfaceTempC <= dewPointC(airTempC, rhPct);
}

/**
 * Evaporation rate from a fresh concrete surface, kg/(m²·h), by Uno (1998):
 * E = 5·[(Tc + 18)^2.5 − r·(Ta + 18)^2.5]·(V + 4)·10⁻⁶, with Tc the concrete (water-surface)
 * temperature and Ta the air temperature in °C, r = RH/100, V the wind speed in km/h about 0.5 m
 * above the surface. Floored at 0 (condensation is not evaporation). A semi-quantitative risk index:
 * actual evaporation can differ by about ±40 % (domain.md §6.1). Compare with
 * {@link EVAPORATION_CAUTION_KG_M2_H}. Source: Uno, ACI Mater. J. 95-M34 (domain.md §6.1).
 */
export function evaporationRateKgM2H(
  concreteTempC: number,
  airTempC: number,
  rhPct: number,
  windKmH: number,
): number {
  const rate =
    5 *
    ((concreteTempC + 18) ** 2.5 - (rhPct / 100) * (airTempC + 18) ** 2.5) *
    (windKmH + 4) *
    1e-6;
  return Math.max(0, rate);
}
