import { describe, expect, it } from 'vitest';
import { levenbergMarquardt } from 'ml-levenberg-marquardt';
import { fitNewtonWarmup } from '../../services/analysis/stats/newton-fit.js';

const newton =
  ([tInf, t0, tau]: number[]) =>
  (t: number) =>
    tInf! - (tInf! - t0!) * Math.exp(-t / tau!);

function curve(tInf: number, t0: number, tau: number, endS: number, stepS: number) {
  const t: number[] = [];
  const y: number[] = [];
  for (let s = 0; s <= endS; s += stepS) {
    t.push(s);
    y.push(newton([tInf, t0, tau])(s));
  }
  return { t, y };
}

describe('Newton (lumped-capacitance) warm-up fit: T(t) = T∞ − (T∞ − T0)·e^(−t/τ) (references.md, physics)', () => {
  it.each([
    [95, 12, 420],
    [104, -5, 900],
    [70, 20, 300],
  ])('gives back T∞=%s °C, T0=%s °C, τ=%s s from an exact curve', (tInf, t0, tau) => {
    const { t, y } = curve(tInf, t0, tau, 1800, 10);
    const fit = fitNewtonWarmup(t, y)!;
    expect(fit.tInfC).toBeCloseTo(tInf, 4);
    expect(fit.t0C).toBeCloseTo(t0, 4);
    expect(fit.tauS).toBeCloseTo(tau, 2);
    expect(fit.rmseC).toBeLessThan(1e-6);
  });

  it('recovers τ from an exact curve observed for only half a time constant', () => {
    const { t, y } = curve(120, 10, 1200, 600, 10);
    expect(fitNewtonWarmup(t, y)!.tauS).toBeCloseTo(1200, 1);
  });

  it('agrees with ml-levenberg-marquardt on a quantised (1 °C/bit) warm-up', () => {
    const { t, y } = curve(98, 8, 540, 1800, 20);
    const quantised = y.map(Math.round);
    const ours = fitNewtonWarmup(t, quantised)!;
    const theirs = levenbergMarquardt({ x: t, y: quantised }, newton, {
      initialValues: [90, 10, 400],
      maxIterations: 500,
      errorTolerance: 1e-10,
      damping: 1e-2,
      gradientDifference: [1e-3, 1e-3, 1e-2],
      centralDifference: true,
    });
    const [tInf, t0, tau] = theirs.parameterValues;
    expect(ours.tInfC).toBeCloseTo(tInf!, 1);
    expect(ours.t0C).toBeCloseTo(t0!, 1);
    expect(Math.abs(ours.tauS - tau!)).toBeLessThan(2);
    const oursError = quantised.reduce((s, v, i) => s + (v - newton([ours.tInfC, ours.t0C, ours.tauS])(t[i]!)) ** 2, 0);
    expect(oursError).toBeLessThanOrEqual(theirs.parameterError * (1 + 1e-6));
  });
});
