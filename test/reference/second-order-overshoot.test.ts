import { describe, expect, it } from 'vitest';
import { stepResponseMetrics } from '../../services/analysis/stats/step-response.js';

/** Unit step response of an underdamped second-order system (Ogata §5-3, eq. 5-10). */
function secondOrderStep(zeta: number, omegaN: number, dt: number, endS: number) {
  const t: number[] = [];
  const y: number[] = [];
  const root = Math.sqrt(1 - zeta * zeta);
  const omegaD = omegaN * root;
  for (let s = 0; s <= endS; s += dt) {
    t.push(s);
    y.push(1 - (Math.exp(-zeta * omegaN * s) / root) * Math.sin(omegaD * s + Math.acos(zeta)));
  }
  return { t, y };
}

describe('second-order step response metrics (Ogata, Modern Control Engineering §5-3; Nise ch. 4)', () => {
  it.each([
    [0.6, 5, 9.48, 0.785],
    [0.75, 10, 2.84, 0.475],
  ])('measures ζ=%s, ωn=%s as %%OS %s and Tp %s s on a sampled response', (zeta, omegaN, os, tp) => {
    const { t, y } = secondOrderStep(zeta, omegaN, 1e-4, 5);
    const m = stepResponseMetrics(t, y, 0, 1, 0.02);
    expect(m.percentOvershoot).toBeCloseTo(os, 2);
    expect(m.peakTime).toBeCloseTo(tp, 3);
    // Ts(2 %) ≈ 4/(ζωn) is an approximation (references.md): accept within 20 %.
    expect(Math.abs(m.settlingTime - 4 / (zeta * omegaN)) / (4 / (zeta * omegaN))).toBeLessThan(0.2);
  });

  it('matches the closed-form %OS = 100·exp(−ζπ/√(1−ζ²)) across damping ratios', () => {
    for (const zeta of [0.2, 0.4, 0.7, 0.9]) {
      const { t, y } = secondOrderStep(zeta, 3, 1e-4, 10);
      const closed = 100 * Math.exp((-zeta * Math.PI) / Math.sqrt(1 - zeta * zeta));
      expect(stepResponseMetrics(t, y, 0, 1, 0.02).percentOvershoot).toBeCloseTo(closed, 2);
    }
  });
});
