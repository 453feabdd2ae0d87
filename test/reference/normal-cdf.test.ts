import { describe, expect, it } from 'vitest';
import jstat from 'jstat';
import { cumulativeStdNormalProbability } from 'simple-statistics';
import { normalCdf } from '../../services/analysis/stats/normal-cdf.js';

describe('standard normal CDF', () => {
  it('agrees with jStat.normal.cdf to 1e-7 from −6 to 6', () => {
    for (let z = -6; z <= 6; z += 0.05) {
      expect(Math.abs(normalCdf(z) - jstat.jStat.normal.cdf(z, 0, 1))).toBeLessThan(1e-7);
    }
  });
  it("agrees with simple-statistics' table (two decimals of z) to its 1e-4 resolution", () => {
    for (const z of [-2.5, -1.96, -1, 0, 0.5, 1.64, 2.33, 3]) {
      expect(Math.abs(normalCdf(z) - cumulativeStdNormalProbability(z))).toBeLessThan(1.5e-4);
    }
  });
  it('gives 0.975 at z = 1.96 (standard normal table)', () => {
    expect(normalCdf(1.96)).toBeCloseTo(0.975, 4);
  });
});
