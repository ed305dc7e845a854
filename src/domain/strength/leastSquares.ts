/**
 * Small least-squares solvers for the strength-curve fits: a straight line in closed form, and a
 * Levenberg-Marquardt for models of two or three parameters. Plain arrays in, plain values out.
 */

/** Least-squares line y = intercept + slope·x. Throws a RangeError with fewer than two distinct x. */
export function fitLine(
  xs: readonly number[],
  ys: readonly number[],
): { intercept: number; slope: number } {
  const n = xs.length;
  const meanX = xs.reduce((s, x) => s + x, 0) / n;
  const meanY = ys.reduce((s, y) => s + y, 0) / n;
  let sxx = 0;
  let sxy = 0;
  xs.forEach((x, i) => {
    sxx += (x - meanX) ** 2;
    sxy += (x - meanX) * ((ys[i] ?? Number.NaN) - meanY);
  });
  if (!(sxx > 0)) throw new RangeError("a line needs at least two distinct x values");
  const slope = sxy / sxx;
  return { intercept: meanY - slope * meanX, slope };
}

/** Coefficient of determination 1 − SSres/SStot; 0 when the observations do not vary. */
export function rSquared(observed: readonly number[], predicted: readonly number[]): number {
  const mean = observed.reduce((s, y) => s + y, 0) / observed.length;
  const ssTot = observed.reduce((s, y) => s + (y - mean) ** 2, 0);
  const ssRes = observed.reduce((s, y, i) => s + (y - (predicted[i] ?? Number.NaN)) ** 2, 0);
  return ssTot > 0 ? 1 - ssRes / ssTot : 0;
}

/** A model y = f(p, x) with its gradient ∂f/∂p. */
export interface CurveModel {
  f: (p: readonly number[], x: number) => number;
  grad: (p: readonly number[], x: number) => number[];
}

/** Solves A·x = b by Gaussian elimination with partial pivoting; null when A is singular. */
function solve(a: number[][], b: number[]): number[] | null {
  const n = b.length;
  const m = a.map((row, i) => [...row, b[i] ?? 0]);
  for (let col = 0; col < n; col++) {
    let pivot = col;
    for (let r = col + 1; r < n; r++)
      if (Math.abs(m[r]?.[col] ?? 0) > Math.abs(m[pivot]?.[col] ?? 0)) pivot = r;
    const pivotRow = m[pivot];
    const rowCol = m[col];
    if (!pivotRow || !rowCol || !(Math.abs(pivotRow[col] ?? 0) > 0)) return null;
    m[pivot] = rowCol;
    m[col] = pivotRow;
    for (let r = col + 1; r < n; r++) {
      const row = m[r];
      if (!row) continue;
      const factor = (row[col] ?? 0) / (pivotRow[col] ?? 1);
      for (let c = col; c <= n; c++) row[c] = (row[c] ?? 0) - factor * (pivotRow[c] ?? 0);
    }
  }
  const x = new Array<number>(n).fill(0);
  for (let r = n - 1; r >= 0; r--) {
    const row = m[r] ?? [];
    let s = row[n] ?? 0;
    for (let c = r + 1; c < n; c++) s -= (row[c] ?? 0) * (x[c] ?? 0);
    x[r] = s / (row[r] ?? Number.NaN);
  }
  return x.every(Number.isFinite) ? x : null;
}

/** Sum of squared residuals of `model` at `p`; NaN when the model is undefined there. */
function sumSquares(
  model: CurveModel,
  p: readonly number[],
  xs: readonly number[],
  ys: readonly number[],
): number {
  return xs.reduce((s, x, i) => s + ((ys[i] ?? Number.NaN) - model.f(p, x)) ** 2, 0);
}

/**
 * Levenberg-Marquardt least squares with Marquardt's scaling (λ·diag(JᵀJ)), so parameters of very
 * different size (MPa against 1/°C·h) need no rescaling. A step is taken only when it lowers the
 * sum of squares (a step into a region where the model is undefined counts as no lower). Stops when
 * no step lowers it further, when the relative gain falls below 1e-15, or after `maxIterations`
 * (then `converged` is false).
 */
export function levenbergMarquardt(
  model: CurveModel,
  xs: readonly number[],
  ys: readonly number[],
  p0: readonly number[],
  maxIterations = 500,
): { params: number[]; sse: number; converged: boolean } {
  let p = [...p0];
  let sse = sumSquares(model, p, xs, ys);
  let lambda = 1e-3;
  if (!Number.isFinite(sse)) return { params: p, sse, converged: false };
  for (let iter = 0; iter < maxIterations; iter++) {
    const n = p.length;
    const jtj = Array.from({ length: n }, () => new Array<number>(n).fill(0));
    const jtr = new Array<number>(n).fill(0);
    xs.forEach((x, i) => {
      const g = model.grad(p, x);
      const r = (ys[i] ?? Number.NaN) - model.f(p, x);
      for (let a = 0; a < n; a++) {
        jtr[a] = (jtr[a] ?? 0) + (g[a] ?? 0) * r;
        const row = jtj[a];
        if (row) for (let b = 0; b < n; b++) row[b] = (row[b] ?? 0) + (g[a] ?? 0) * (g[b] ?? 0);
      }
    });
    let stepped = false;
    while (lambda < 1e16) {
      const damped = jtj.map((row, a) =>
        row.map((v, b) => (a === b ? v + lambda * Math.max(v, 1e-300) : v)),
      );
      const delta = solve(damped, jtr);
      const trial = delta ? p.map((v, a) => v + (delta[a] ?? 0)) : null;
      const trialSse = trial ? sumSquares(model, trial, xs, ys) : Number.NaN;
      if (trial && trialSse < sse) {
        const gain = (sse - trialSse) / sse;
        p = trial;
        sse = trialSse;
        lambda = Math.max(lambda / 10, 1e-12);
        stepped = true;
        if (gain < 1e-15) return { params: p, sse, converged: true };
        break;
      }
      lambda *= 10;
    }
    if (!stepped) return { params: p, sse, converged: true };
  }
  return { params: p, sse, converged: false };
}
