import { solveLinearSystem } from './linear-solve.js';

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
  let p = [last + 0.5 * Math.max(last - first, 1), first, Math.max(span / 2, MIN_TAU_S)];
  let lambda = 1e-3;
  let cost = sse(p, tS, tempC);
  let iterations = 0;
  for (; iterations < MAX_ITERATIONS; iterations++) {
    const jtj = new Float64Array(9);
    const jtr = new Float64Array(3);
    const [tInf, t0, tau] = p as [number, number, number];
    for (let i = 0; i < n; i++) {
      const e = Math.exp(-tS[i]! / tau);
      const r = tempC[i]! - (tInf - (tInf - t0) * e);
      const j0 = 1 - e;
      const j1 = e;
      const j2 = (-(tInf - t0) * e * tS[i]!) / (tau * tau);
      const jr = [j0, j1, j2];
      for (let a = 0; a < 3; a++) {
        jtr[a] = jtr[a]! + jr[a]! * r;
        for (let b = 0; b < 3; b++) jtj[a * 3 + b] = jtj[a * 3 + b]! + jr[a]! * jr[b]!;
      }
    }
    let improved = false;
    while (lambda < 1e12) {
      const m = Float64Array.from(jtj);
      for (let a = 0; a < 3; a++) m[a * 4] = m[a * 4]! * (1 + lambda) + 1e-12;
      const step = solveLinearSystem(m, jtr);
      if (!step) {
        lambda *= 10;
        continue;
      }
      const trial = [p[0]! + step[0]!, p[1]! + step[1]!, Math.min(Math.max(p[2]! + step[2]!, MIN_TAU_S), MAX_TAU_S)];
      const trialCost = sse(trial, tS, tempC);
      if (trialCost < cost) {
        const relative = (cost - trialCost) / Math.max(cost, 1e-30);
        p = trial;
        cost = trialCost;
        lambda = Math.max(lambda / 10, 1e-12);
        improved = relative > 1e-12;
        break;
      }
      lambda *= 10;
    }
    if (!improved) break;
  }
  const [tInfC, t0C, tauS] = p as [number, number, number];
  return { tInfC, t0C, tauS, rmseC: Math.sqrt(cost / n), iterations };
}

function sse(p: ArrayLike<number>, tS: ArrayLike<number>, tempC: ArrayLike<number>): number {
  const [tInf, t0, tau] = [p[0]!, p[1]!, p[2]!];
  let s = 0;
  for (let i = 0; i < tS.length; i++) {
    const r = tempC[i]! - (tInf - (tInf - t0) * Math.exp(-tS[i]! / tau));
    s += r * r;
  }
  return s;
}
