/**
 * Unit conversions. Plinth stores SI (°C, MPa, kg/m³) and converts at the edge.
 * The factors are exact by definition: 1 lb = 0.45359237 kg, g = 9.80665 m/s²,
 * 1 in = 0.0254 m (so 1 psi = 6894.757293168361 Pa), and °F = 1.8·°C + 32.
 */

/** Pascals in one psi (exact): 0.45359237 × 9.80665 / 0.0254². */
export const PA_PER_PSI = (0.45359237 * 9.80665) / (0.0254 * 0.0254);

/** MPa from psi. */
export const psiToMpa = (psi: number): number => (psi * PA_PER_PSI) / 1e6;
/** psi from MPa. */
export const mpaToPsi = (mpa: number): number => (mpa * 1e6) / PA_PER_PSI;

/** °F from °C. */
export const cToF = (c: number): number => c * 1.8 + 32;
/** °C from °F. */
export const fToC = (f: number): number => (f - 32) / 1.8;
/** A temperature difference or rate: °F from °C (no offset). */
export const deltaCToF = (dc: number): number => dc * 1.8;
/** A temperature difference or rate: °C from °F (no offset). */
export const deltaFToC = (df: number): number => df / 1.8;

/** Kilograms per cubic metre from pounds per cubic yard (1 yd = 0.9144 m). */
export const lbYd3ToKgM3 = (lbYd3: number): number => (lbYd3 * 0.45359237) / 0.9144 ** 3;
/** Pounds per cubic yard from kilograms per cubic metre. */
export const kgM3ToLbYd3 = (kgM3: number): number => (kgM3 * 0.9144 ** 3) / 0.45359237;

/** Millimetres from inches (slump). */
export const inToMm = (inches: number): number => inches * 25.4;
export const mmToIn = (mm: number): number => mm / 25.4;

export type UnitSystem = "us" | "si";

/** How a user sees a temperature: value rounded for display and its unit label. */
export function displayTemp(
  c: number,
  system: UnitSystem,
  digits = 1,
): { value: string; unit: string } {
  const v = system === "us" ? cToF(c) : c;
  return { value: v.toFixed(digits), unit: system === "us" ? "°F" : "°C" };
}

/** How a user sees a strength (psi to the nearest 10, MPa to 0.1). */
export function displayStrength(mpa: number, system: UnitSystem): { value: string; unit: string } {
  if (system === "us") {
    const psi = Math.round(mpaToPsi(mpa) / 10) * 10;
    return { value: psi.toLocaleString("en-US"), unit: "psi" };
  }
  return { value: mpa.toFixed(1), unit: "MPa" };
}
