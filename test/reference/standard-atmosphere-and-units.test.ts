import { describe, expect, it } from 'vitest';
import { atmosphericPressureAtAltitudeKpa } from '../../services/analysis/physics/atmosphere.js';
import { coolantBoilingPointC } from '../../services/analysis/physics/boiling-point.js';
import {
  glycolMassToVolumePercent,
  glycolVolumeToMassPercent,
  pressureToKpa,
} from '../../services/analysis/physics/units.js';

describe('site pressure and units', () => {
  it('gives the standard-atmosphere pressure at altitude (ISO 2533 troposphere, as quoted in references.md)', () => {
    expect(atmosphericPressureAtAltitudeKpa(0)).toBeCloseTo(101.325, 3);
    expect(atmosphericPressureAtAltitudeKpa(1000)).toBeCloseTo(89.87, 2);
    expect(atmosphericPressureAtAltitudeKpa(2000)).toBeCloseTo(79.5, 1);
    expect(() => atmosphericPressureAtAltitudeKpa(20_000)).toThrow(RangeError);
  });

  it('lowers the boiling point of water at altitude (IAPWS-IF97: about 96.7 °C at 1,000 m and 93.4 °C at 2,000 m, references.md)', () => {
    expect(coolantBoilingPointC(0, 0, atmosphericPressureAtAltitudeKpa(1000))).toBeCloseTo(96.7, 0);
    expect(coolantBoilingPointC(0, 0, atmosphericPressureAtAltitudeKpa(2000))).toBeCloseTo(93.4, 0);
    expect(coolantBoilingPointC(100, 50, atmosphericPressureAtAltitudeKpa(2000))).toBeLessThan(
      coolantBoilingPointC(100, 50),
    );
  });

  it('converts 50 % ethylene glycol by volume to about 52.7 % by mass with the densities 1.113 and 0.998 g/cm³ (references.md)', () => {
    expect(glycolVolumeToMassPercent(50)).toBeCloseTo(52.7, 1);
    expect(glycolMassToVolumePercent(glycolVolumeToMassPercent(40))).toBeCloseTo(40, 6);
    expect(glycolVolumeToMassPercent(0)).toBe(0);
  });

  it('converts cap ratings in psi and bar to kPa (1 psi = 6.894757 kPa, NIST SP 811; 1 bar = 100 kPa)', () => {
    expect(pressureToKpa(15, 'psi')).toBeCloseTo(103.42, 2);
    expect(pressureToKpa(1.1, 'bar')).toBeCloseTo(110, 9);
    expect(pressureToKpa(100, 'kPa')).toBe(100);
  });
});
