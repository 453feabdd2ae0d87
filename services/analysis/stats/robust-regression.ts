import { solveLinearSystem } from './linear-solve.js';
import { MAD_TO_SIGMA, median, mad } from './robust.js';

/** Huber's tuning constant: 95 % efficiency at the normal (Huber 1964). */
const HUBER_K = 1.345;
const MAX_ITERATIONS = 30;
/** Small ridge keeps nearly collinear predictors (e.g. start coolant ≈ ambient) solvable. */
const RIDGE = 1e-6;

export interface RobustFit {
  /** Intercept first, then one coefficient per predictor column. */
  coefficients: number[];
  /** Robust σ of the residuals (1.4826 · MAD). */
  residualSigma: number;
  n: number;
}

/**
 * Huber M-estimator linear regression by iteratively reweighted least squares.
 * `rows[i]` holds the predictors of observation i (no intercept column: it is added).
 * Returns null with fewer observations than coefficients + 2.
 * @example robustLinearFit([[1], [2], [3], [4]], [2, 4, 6, 80]).coefficients // ≈ [0, 2]
 */
export function robustLinearFit(rows: ReadonlyArray<ArrayLike<number>>, y: ArrayLike<number>): RobustFit | null {
  const n = y.length;
  const p = (rows[0]?.length ?? 0) + 1;
  if (n < p + 2) return null;
  const w = new Float64Array(n).fill(1);
  const res = new Float64Array(n);
  let beta: number[] = new Array(p).fill(0);
  let sigma = 0;
  for (let iter = 0; iter < MAX_ITERATIONS; iter++) {
    const ata = new Float64Array(p * p);
    const aty = new Float64Array(p);
    const xi = new Float64Array(p);
    for (let i = 0; i < n; i++) {
      xi[0] = 1;
      for (let c = 1; c < p; c++) xi[c] = rows[i]![c - 1]!;
      const wi = w[i]!;
      for (let r = 0; r < p; r++) {
        aty[r] = aty[r]! + wi * xi[r]! * y[i]!;
        for (let c = 0; c < p; c++) ata[r * p + c] = ata[r * p + c]! + wi * xi[r]! * xi[c]!;
      }
    }
    for (let r = 0; r < p; r++) ata[r * p + r] = ata[r * p + r]! * (1 + RIDGE) + RIDGE;
    const next = solveLinearSystem(ata, aty);
    if (!next) return null;
    let change = 0;
    for (let c = 0; c < p; c++) change = Math.max(change, Math.abs(next[c]! - beta[c]!));
    beta = next;
    for (let i = 0; i < n; i++) {
      let fit = beta[0]!;
      for (let c = 1; c < p; c++) fit += beta[c]! * rows[i]![c - 1]!;
      res[i] = y[i]! - fit;
    }
    sigma = MAD_TO_SIGMA * mad(res, median(res));
    if (!(sigma > 0)) break;
    for (let i = 0; i < n; i++) {
      const u = Math.abs(res[i]!) / (HUBER_K * sigma);
      w[i] = u <= 1 ? 1 : 1 / u;
    }
    if (change < 1e-9) break;
  }
  return { coefficients: beta, residualSigma: sigma, n };
}

/** Prediction of a fit for one row of predictors. */
export function predict(fit: Pick<RobustFit, 'coefficients'>, row: ArrayLike<number>): number {
  let v = fit.coefficients[0]!;
  for (let c = 1; c < fit.coefficients.length; c++) v += fit.coefficients[c]! * row[c - 1]!;
  return v;
}
