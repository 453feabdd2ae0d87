import { robustLinearFit, predict } from '../stats/robust-regression.js';
import { MAD_TO_SIGMA, mad, median } from '../stats/robust.js';
/** A judged quantity y with its explaining conditions x (runs and days alike). */
export interface ModelRow {
  x: number[];
  y: number;
  /** y is only a lower bound. */
  censored: boolean;
}

/** A learned expectation: y ≈ intercept + Σ coefficient·x, with a robust residual σ. */
export interface BaselineModel {
  coefficients: number[];
  sigma: number;
  n: number;
  /** Range of each predictor seen while fitting: predictions never extrapolate beyond it. */
  xMin: number[];
  xMax: number[];
  /**
   * True when y is expected at its median whatever the conditions (the slopes are zero): too
   * few rows for the regression, or a slope of the wrong sign where `nonNegativeSlopes` asked.
   */
  medianOnly: boolean;
}

/** Predictors are dropped (median model) unless there are this many rows per coefficient. */
const ROWS_PER_COEFFICIENT = 4;
/** Fewest rows for any model. */
const MIN_ROWS = 3;

/**
 * Robust model of a feature over uncensored rows: Huber regression on the predictors when
 * there are enough rows (and, with `nonNegativeSlopes`, no slope comes out negative), else the
 * median. Null with fewer than 3 rows.
 * @example fitBaseline(rows)?.sigma
 */
export function fitBaseline(
  rows: readonly ModelRow[],
  options: { nonNegativeSlopes?: boolean } = {},
): BaselineModel | null {
  const usable = rows.filter((r) => !r.censored);
  if (usable.length < MIN_ROWS) return null;
  const p = (usable[0]?.x.length ?? 0) + 1;
  const xMin = Array.from({ length: p - 1 }, (_, c) => Math.min(...usable.map((r) => r.x[c]!)));
  const xMax = Array.from({ length: p - 1 }, (_, c) => Math.max(...usable.map((r) => r.x[c]!)));
  if (p > 1 && usable.length >= ROWS_PER_COEFFICIENT * p) {
    const fit = robustLinearFit(
      usable.map((r) => r.x),
      usable.map((r) => r.y),
    );
    if (
      fit &&
      fit.coefficients.every(Number.isFinite) &&
      !(options.nonNegativeSlopes && fit.coefficients.slice(1).some((c) => c < 0))
    ) {
      return {
        coefficients: fit.coefficients,
        sigma: fit.residualSigma,
        n: usable.length,
        xMin,
        xMax,
        medianOnly: false,
      };
    }
  }
  const ys = usable.map((r) => r.y);
  const m = median(ys);
  return {
    coefficients: [m, ...new Array<number>(p - 1).fill(0)],
    sigma: MAD_TO_SIGMA * mad(ys, m),
    n: usable.length,
    xMin,
    xMax,
    medianOnly: p > 1,
  };
}

/**
 * Expected y of a row under a model, with each predictor clamped to the range the model
 * was fitted on (a linear fit learned in mild weather says little about a cold snap),
 * except predictors marked in `extrapolates` (physically grounded forms).
 */
export function expected(model: BaselineModel, row: ModelRow, extrapolates?: readonly boolean[]): number {
  return predict(
    model,
    row.x.map((v, c) => (extrapolates?.[c] ? v : Math.min(Math.max(v, model.xMin[c] ?? v), model.xMax[c] ?? v))),
  );
}

/**
 * Robust z-score of a row in the feature's bad direction, capped at ±zCap; null for a
 * censored row that does not yet exceed the expectation (inconclusive).
 */
export function badZ(
  model: BaselineModel,
  row: ModelRow,
  direction: 1 | -1,
  floor: number,
  zCap: number,
  extrapolates?: readonly boolean[],
): number | null {
  const z = (direction * (row.y - expected(model, row, extrapolates))) / Math.max(model.sigma, floor);
  if (row.censored && z <= 0) return null;
  return Math.max(-zCap, Math.min(zCap, z));
}
