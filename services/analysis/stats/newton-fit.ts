export interface NewtonFit {
  /** Asymptote T∞, °C. */
  tInfC: number;
  /** Temperature at t = 0, °C. */
  t0C: number;
  /** Time constant τ, s. */
  tauS: number;
  /** Root mean square residual, °C. */
  rmseC: number;
  iterations: number;
}

const MIN_TAU_S = 1;
const MAX_TAU_S = 1e6;
const MAX_ITERATIONS = 100;

/**
 * Least-squares fit of Newton's warm-up curve T(t) = T∞ − (T∞ − T0)·e^(−t/τ) by
 * Levenberg–Marquardt with the analytic Jacobian and Marquardt's diagonal scaling.
 * `tS` is seconds since start (ascending), `tempC` the readings; needs ≥ 4 points.
 * @example fitNewtonWarmup([0, 60, 120, 180], [20, 40, 55, 66]).tauS // ≈ 214 s
 */
export function fitNewtonWarmup(tS: ArrayLike<number>, tempC: ArrayLike<number>): NewtonFit | null {
  const n = tS.length;
  if (n < 4) return null;
  const first = tempC[0]!;
  const last = tempC[n - 1]!;
  const span = tS[n - 1]! - tS[0]!;
  if (!(span > 0)) return null;
  // Start from a curve through the ends that is still rising at the end.
  let pInf = last + 0.5 * Math.max(last - first, 1);
  let p0 = first;
  let pTau = Math.max(span / 2, MIN_TAU_S);
  let lambda = 1e-3;
  let cost = sse(pInf, p0, pTau, tS, tempC);
  let iterations = 0;
  // The normal equations are accumulated in scalars and solved in place: this loop runs for
  // every cold start, and allocating per sample and per trial cost half of analyseSamples'
  // time on simulated fleets (measured with a CPU profile).
  for (; iterations < MAX_ITERATIONS; iterations++) {
    let a00 = 0,
      a01 = 0,
      a02 = 0,
      a11 = 0,
      a12 = 0,
      a22 = 0;
    let g0 = 0,
      g1 = 0,
      g2 = 0;
    const rise = pInf - p0;
    const tau2 = pTau * pTau;
    for (let i = 0; i < n; i++) {
      const t = tS[i]!;
      const e = Math.exp(-t / pTau);
      const r = tempC[i]! - (pInf - rise * e);
      const j0 = 1 - e;
      const j1 = e;
      const j2 = (-rise * e * t) / tau2;
      g0 += j0 * r;
      g1 += j1 * r;
      g2 += j2 * r;
      a00 += j0 * j0;
      a01 += j0 * j1;
      a02 += j0 * j2;
      a11 += j1 * j1;
      a12 += j1 * j2;
      a22 += j2 * j2;
    }
    let improved = false;
    while (lambda < 1e12) {
      const step = solve3(
        a00 * (1 + lambda) + 1e-12,
        a01,
        a02,
        a11 * (1 + lambda) + 1e-12,
        a12,
        a22 * (1 + lambda) + 1e-12,
        g0,
        g1,
        g2,
      );
      if (!step) {
        lambda *= 10;
        continue;
      }
      const tInf = pInf + step[0];
      const t0 = p0 + step[1];
      const tau = Math.min(Math.max(pTau + step[2], MIN_TAU_S), MAX_TAU_S);
      const trialCost = sse(tInf, t0, tau, tS, tempC);
      if (trialCost < cost) {
        const relative = (cost - trialCost) / Math.max(cost, 1e-30);
        pInf = tInf;
        p0 = t0;
        pTau = tau;
        cost = trialCost;
        lambda = Math.max(lambda / 10, 1e-12);
        improved = relative > 1e-12;
        break;
      }
      lambda *= 10;
    }
    if (!improved) break;
  }
  return { tInfC: pInf, t0C: p0, tauS: pTau, rmseC: Math.sqrt(cost / n), iterations };
}

const STEP: [number, number, number] = [0, 0, 0];

/**
 * Solves the symmetric 3×3 system [a00 a01 a02; a01 a11 a12; a02 a12 a22]·x = g by Gaussian
 * elimination with partial pivoting (as `solveLinearSystem`), into a reused array; null when
 * singular to working precision. The caller reads the result before the next call.
 */
function solve3(
  a00: number,
  a01: number,
  a02: number,
  a11: number,
  a12: number,
  a22: number,
  g0: number,
  g1: number,
  g2: number,
): [number, number, number] | null {
  const m = [a00, a01, a02, a01, a11, a12, a02, a12, a22];
  const x = STEP;
  x[0] = g0;
  x[1] = g1;
  x[2] = g2;
  for (let col = 0; col < 3; col++) {
    let pivot = col;
    for (let r = col + 1; r < 3; r++) if (Math.abs(m[r * 3 + col]!) > Math.abs(m[pivot * 3 + col]!)) pivot = r;
    const pv = m[pivot * 3 + col]!;
    if (!(Math.abs(pv) > 1e-12)) return null;
    if (pivot !== col) {
      for (let c = 0; c < 3; c++) {
        const t = m[col * 3 + c]!;
        m[col * 3 + c] = m[pivot * 3 + c]!;
        m[pivot * 3 + c] = t;
      }
      const t = x[col]!;
      x[col] = x[pivot]!;
      x[pivot] = t;
    }
    for (let r = col + 1; r < 3; r++) {
      const f = m[r * 3 + col]! / pv;
      if (f === 0) continue;
      for (let c = col; c < 3; c++) m[r * 3 + c] = m[r * 3 + c]! - f * m[col * 3 + c]!;
      x[r] = x[r]! - f * x[col]!;
    }
  }
  for (let r = 2; r >= 0; r--) {
    let s = x[r]!;
    for (let c = r + 1; c < 3; c++) s -= m[r * 3 + c]! * x[c]!;
    x[r] = s / m[r * 3 + r]!;
  }
  return x;
}

function sse(tInf: number, t0: number, tau: number, tS: ArrayLike<number>, tempC: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < tS.length; i++) {
    const r = tempC[i]! - (tInf - (tInf - t0) * Math.exp(-tS[i]! / tau));
    s += r * r;
  }
  return s;
}
