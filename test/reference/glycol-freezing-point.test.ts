import { describe, expect, it } from 'vitest';
import { freezingPointC } from '../../services/analysis/physics/freezing-point.js';

describe('freezing point of ethylene glycol–water by mass (Melinder, Properties of Secondary Working Fluids, IIR 2010)', () => {
  it.each([
    [10, -3.4],
    [20, -7.9],
    [30, -14.6],
    [40, -23.8],
    [50, -36.0],
    [60, -51.2],
  ])('gives the table value at %s %%', (percent, expectedC) => {
    expect(freezingPointC(percent)).toBeCloseTo(expectedC, 6);
  });

  it('interpolates between table rows', () => {
    expect(freezingPointC(45)).toBeCloseTo((-23.8 - 36.0) / 2, 6);
  });

  it('falls monotonically over the table', () => {
    for (let p = 1; p <= 60; p++) expect(freezingPointC(p)!).toBeLessThan(freezingPointC(p - 1)!);
  });

  it('does not extrapolate past the table, where richer mixes freeze higher again', () => {
    expect(freezingPointC(65)).toBeNull();
  });
});
