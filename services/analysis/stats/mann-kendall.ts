import { normalCdf } from './normal-cdf.js';
import { medianInPlace } from './robust.js';

export interface MannKendallResult {
  n: number;
  /** Kendall's S statistic. */
  s: number;
  /** Variance of S with the tie correction. */
  varS: number;
  /** Continuity-corrected standard normal score. */
  z: number;
  /** One-sided p-value for an increasing trend. */
  pIncreasing: number;
  /** One-sided p-value for a decreasing trend. */
  pDecreasing: number;
}

/**
 * Mann–Kendall trend test on a series in time order, with tie correction and continuity
 * correction (Z = (S − sgn S)/√Var S).
 * @example mannKendall([1, 2, 3, 4]).s // 6
 */
export function mannKendall(y: ArrayLike<number>): MannKendallResult {
  const n = y.length;
  let s = 0;
  for (let i = 0; i < n - 1; i++) {
    for (let j = i + 1; j < n; j++) s += Math.sign(y[j]! - y[i]!);
  }
  const sorted = Array.from(y).sort((a, b) => a - b);
  let tieTerm = 0;
  for (let i = 0; i < n;) {
    let j = i + 1;
    while (j < n && sorted[j] === sorted[i]) j++;
    const t = j - i;
    if (t > 1) tieTerm += t * (t - 1) * (2 * t + 5);
    i = j;
  }
  const varS = (n * (n - 1) * (2 * n + 5) - tieTerm) / 18;
  const z = varS > 0 ? (s - Math.sign(s)) / Math.sqrt(varS) : 0;
  return { n, s, varS, z, pIncreasing: 1 - normalCdf(z), pDecreasing: normalCdf(z) };
}

/**
 * Sen's slope: the median of pairwise slopes (y_j − y_i)/(x_j − x_i), pairs with x_j ≠ x_i.
 * `x` defaults to 0, 1, 2, …; the unit is y's unit per x's unit.
 * @example sensSlope([1, 3, 5]) // 2
 */
export function sensSlope(y: ArrayLike<number>, x?: ArrayLike<number>): number {
  const n = y.length;
  const slopes: number[] = [];
  for (let i = 0; i < n - 1; i++) {
    for (let j = i + 1; j < n; j++) {
      const dx = x ? x[j]! - x[i]! : j - i;
      if (dx !== 0) slopes.push((y[j]! - y[i]!) / dx);
    }
  }
  return medianInPlace(slopes);
}
