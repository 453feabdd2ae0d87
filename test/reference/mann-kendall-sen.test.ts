import { describe, expect, it } from 'vitest';
import { TheilSenRegression } from 'ml-regression-theil-sen';
import { mannKendall, sensSlope } from '../../services/analysis/stats/mann-kendall.js';

// College of the Holy Cross, "A Mann-Kendall Example (By Hand)".
const SERIES = [12.9, 14.8, 13.2, 15.7, 13.8, 15.6, 12.9, 11.0, 17.3, 15.9, 19.0, 18.3, 20.1, 21.7];

describe('Mann–Kendall trend test (Holy Cross worked example)', () => {
  const r = mannKendall(SERIES);
  it('counts S = 54 over n = 14', () => {
    expect(r.n).toBe(14);
    expect(r.s).toBe(54);
  });
  it('corrects the variance for the one tied pair: Var(S) = 332.667', () => {
    expect(r.varS).toBeCloseTo(332.667, 3);
  });
  it('gives Z = 2.906 and a one-sided p of about 0.0018', () => {
    expect(r.z).toBeCloseTo(2.906, 3);
    expect(r.pIncreasing).toBeCloseTo(0.0018, 4);
  });
  it('sees no trend in a constant series', () => {
    expect(mannKendall([5, 5, 5, 5, 5]).z).toBe(0);
  });
});

describe("Sen's slope", () => {
  it('gives 0.5667 per step on the worked example (references.md)', () => {
    expect(sensSlope(SERIES)).toBeCloseTo(0.5667, 4);
  });
  it('agrees with ml-regression-theil-sen', () => {
    const x = SERIES.map((_, i) => i);
    expect(sensSlope(SERIES, x)).toBeCloseTo(new TheilSenRegression(x, SERIES).slope, 10);
    const uneven = [0, 1, 3, 4, 8, 9, 15];
    const y = [2, 2.4, 3.9, 4, 7.7, 8.6, 30];
    expect(sensSlope(y, uneven)).toBeCloseTo(new TheilSenRegression(uneven, y).slope, 10);
  });
});
