import { errorFunction } from 'simple-statistics';

/**
 * Standard normal cumulative distribution Φ(z) = ½ (1 + erf(z / √2)), with the error function of
 * simple-statistics (a polynomial fit with absolute error below about 1.2e-7; checked against
 * jStat in test/reference/normal-cdf.test.ts).
 * @example normalCdf(1.96) // ≈ 0.975
 */
export function normalCdf(z: number): number {
  return 0.5 * (1 + errorFunction(z / Math.SQRT2));
}
