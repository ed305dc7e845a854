/** Small statistics over samples (milliseconds, rates). */

export function sorted(values: readonly number[]): number[] {
  return [...values].sort((a, b) => a - b);
}

/** The median; NaN for no samples. */
export function median(values: readonly number[]): number {
  if (values.length === 0) return Number.NaN;
  const s = sorted(values);
  const mid = Math.floor(s.length / 2);
  return s.length % 2 === 1 ? s[mid]! : (s[mid - 1]! + s[mid]!) / 2;
}

/** The p-th percentile (0..100), nearest rank; NaN for no samples. */
export function percentile(values: readonly number[], p: number): number {
  if (values.length === 0) return Number.NaN;
  const s = sorted(values);
  const rank = Math.min(s.length - 1, Math.max(0, Math.ceil((p / 100) * s.length) - 1));
  return s[rank]!;
}

export function worst(values: readonly number[]): number {
  return values.length === 0 ? Number.NaN : Math.max(...values);
}

/** A repeatable pseudo-random source (mulberry32), so every run sends the same data. */
export function randomSource(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Rounds to a few significant places for reports. */
export function round(value: number, places = 2): number {
  const f = 10 ** places;
  return Math.round(value * f) / f;
}
