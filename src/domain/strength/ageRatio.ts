/**
 * Strength gain with age as a fraction of the 28-day strength: sanity curves to hold a calibrated
 * strength-maturity curve against (domain.md §4). Age in days (or a temperature-adjusted age in
 * days); ratios dimensionless.
 */

/** ACI 209R-92 constants a (days) and β for fc(t) = t/(a + β·t)·fc28. */
export interface Aci209Constants {
  aDays: number;
  beta: number;
}

/**
 * ACI 209R-92 constants by cement type and curing (domain.md §4.1): Type I and III moist-cured
 * from a secondary source citing ACI 209R-92; the steam-cured rows are from memory.
 */
export const ACI209_CONSTANTS = {
  typeIMoist: { aDays: 4.0, beta: 0.85 },
  typeIIIMoist: { aDays: 2.3, beta: 0.92 },
  typeISteam: { aDays: 1.0, beta: 0.95 },
  typeIIISteam: { aDays: 0.7, beta: 0.98 },
} as const satisfies Record<string, Aci209Constants>;

/**
 * ACI 209R-92 strength-with-age ratio fc(t)/fc28 = t/(a + β·t), t in days. Not exactly 1 at 28 d
 * for the published constants (domain.md §4.1: 1.0072 for Type I moist). 0 for t ≤ 0.
 * Source: ACI 209R-92 (domain.md §4.1).
 */
export function aci209StrengthRatio(ageDays: number, constants: Aci209Constants): number {
  if (!(ageDays > 0)) return 0;
  return ageDays / (constants.aDays + constants.beta * ageDays);
}

/**
 * EN 1992-1-1 §3.1.2 coefficient s by cement class: 0.20 class R (CEM 42.5 R, 52.5 N, 52.5 R),
 * 0.25 class N (CEM 32.5 R, 42.5 N), 0.38 class S (CEM 32.5 N) (domain.md §4.2).
 */
export const EC2_CEMENT_S = { classR: 0.2, classN: 0.25, classS: 0.38 } as const;

/**
 * EN 1992-1-1 Eq. 3.2 (also CEB-FIP MC90 and fib MC2010 form): βcc(t) = exp{s·[1 − (28/t)^0.5]},
 * fcm(t) = βcc(t)·fcm, t in days (or temperature-adjusted days). Exactly 1 at 28 d, e^(−s) at 7 d,
 * above 1 after 28 d; 0 for t ≤ 0. Source: EN 1992-1-1 §3.1.2 Eq. 3.2 (domain.md §4.2).
 */
export function ec2StrengthRatio(ageDays: number, s: number): number {
  if (!(ageDays > 0)) return 0;
  return Math.exp(s * (1 - Math.sqrt(28 / ageDays)));
}
