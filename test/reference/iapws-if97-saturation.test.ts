import { describe, expect, it } from 'vitest';
import { coolantBoilingPointC, saturationTemperatureK } from '../../services/analysis/physics/boiling-point.js';

describe('water saturation temperature (IAPWS-IF97, region 4)', () => {
  it.each([
    // IAPWS-IF97 (2007 revision), Table 35: verification values of the saturation-temperature equation.
    [0.1, 372.755919],
    [1, 453.035632],
    [10, 584.149488],
  ])('gives the published verification value at %s MPa', (pMpa, expectedK) => {
    expect(saturationTemperatureK(pMpa)).toBeCloseTo(expectedK, 5);
  });

  it('boils pure water at 99.97 °C under one standard atmosphere (IAPWS-IF97, derived)', () => {
    expect(coolantBoilingPointC(0, 0)).toBeCloseTo(99.97, 1);
  });

  it('raises pure water to about 121 °C under a 15 psi cap at sea level (IAPWS-IF97, derived)', () => {
    expect(coolantBoilingPointC(103.425, 0)).toBeCloseTo(120.96, 1);
  });

  it('puts a 50/50 glycol mix at 106–108 °C open and about 129 °C under a 15 psi cap (service-manual figure)', () => {
    const open = coolantBoilingPointC(0, 50);
    expect(open).toBeGreaterThanOrEqual(106);
    expect(open).toBeLessThanOrEqual(108);
    expect(Math.abs(coolantBoilingPointC(103, 50) - 129)).toBeLessThanOrEqual(1);
  });

  it('rejects pressures outside the saturation line', () => {
    expect(() => saturationTemperatureK(30)).toThrow(RangeError);
  });
});
