/**
 * Believable, not exact, physics for the demo plant and the simulator. Pure functions of
 * time: the same inputs give the same readings, so a seeded history and a live feed agree.
 * Invented numbers for a demonstration; none of this feeds a strength decision.
 */

const HOUR_MS = 3_600_000;

/** A small seeded pseudo-random generator (mulberry32); returns numbers in [0, 1). */
export function prng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4_294_967_296;
  };
}

/** A stable noise value in [-1, 1] for a key and a time step (no state kept). */
export function noise(key: string, step: number): number {
  let h = 2166136261;
  for (let i = 0; i < key.length; i++) h = Math.imul(h ^ key.charCodeAt(i), 16777619);
  return prng((h ^ Math.imul(step, 2654435761)) >>> 0)() * 2 - 1;
}

/**
 * Outdoor air: a daily swing around a mean, coldest near 6 a.m. and warmest near 3 p.m.
 * local time. `utcOffsetH` places the plant's clock.
 */
export function outdoorTempC(
  tMs: number,
  meanC: number,
  swingC: number,
  utcOffsetH: number,
): number {
  const localH = (((tMs / HOUR_MS + utcOffsetH) % 24) + 24) % 24;
  // cosine with its peak at 15:00
  return meanC + swingC * Math.cos(((localH - 15) / 24) * 2 * Math.PI);
}

/** A heated cure room: held near its set point, leaking a little of the outdoor swing. */
export function enclosureTempC(setPointC: number, outdoorC: number, leak = 0.08): number {
  return setPointC + (outdoorC - setPointC) * leak;
}

export interface HydrationProfile {
  /** Temperature of the concrete as placed, °C. */
  placingTempC: number;
  /** Rise above the surroundings at the peak of hydration heat, °C. */
  peakRiseC: number;
  /** Age of that peak, hours after casting. */
  peakAgeH: number;
}

/**
 * Heat of hydration: a rise that peaks at `peakAgeH` and fades over the next days,
 * shaped as x²·e^(2(1−x)) with x = age / peak age (1 at the peak).
 */
export function hydrationRiseC(ageH: number, p: HydrationProfile): number {
  if (ageH <= 0) return 0;
  const x = ageH / p.peakAgeH;
  return p.peakRiseC * x * x * Math.exp(2 * (1 - x));
}

/** The core of a piece: placing temperature relaxing to the enclosure, plus hydration heat. */
export function concreteCoreTempC(
  ageH: number,
  surroundingsC: number,
  p: HydrationProfile,
): number {
  const relax = Math.exp(-Math.max(0, ageH) / 5);
  return surroundingsC + (p.placingTempC - surroundingsC) * relax + hydrationRiseC(ageH, p);
}

/** Under a cure bag, against the surface: between core and room. */
export function bagTempC(coreC: number, surroundingsC: number): number {
  return surroundingsC + 0.7 * (coreC - surroundingsC);
}

/**
 * Humidity under a cure bag. Wet pads hold it near saturation; once the pads dry
 * (`dryFromMs`), it falls toward the room's humidity over a few hours.
 */
export function bagRhPct(
  tMs: number,
  roomRhPct: number,
  dryFromMs: number | null,
  wetRhPct = 97.5,
): number {
  if (dryFromMs === null || tMs < dryFromMs) return wetRhPct;
  const h = (tMs - dryFromMs) / HOUR_MS;
  return roomRhPct + (wetRhPct - roomRhPct) * Math.exp(-h / 2.5);
}

/**
 * An aggregate bin: a large mass that follows the outdoor air slowly, with a damped and
 * delayed swing (about a third of the air's, three hours late).
 */
export function binTempC(tMs: number, meanC: number, swingC: number, utcOffsetH: number): number {
  return outdoorTempC(tMs - 3 * HOUR_MS, meanC, swingC * 0.35, utcOffsetH);
}

export const clamp = (v: number, lo: number, hi: number) => Math.min(hi, Math.max(lo, v));
export const round1 = (v: number) => Math.round(v * 10) / 10;
