import { describe, expect, it } from 'vitest';
import { defaultProfileNote } from '../../services/analysis/findings/profile-assumptions.js';
import { boilWords } from '../../services/analysis/findings/overheating-trend.js';
import {
  convertTemperatures,
  convertTemperatureText,
  temperatureDifferenceIn,
  temperatureIn,
  temperatureKind,
} from '../../services/analysis/physics/temperature-unit.js';

describe('the °C → °F conversion', () => {
  it('matches the defining fixed points of the two scales', () => {
    // NIST SP 811 (2008), B.9: t/°F = 1.8 · t/°C + 32 (from memory). Water freezes at 32 °F and boils at 212 °F at one atmosphere; −40 is the same on both scales.
    expect(temperatureIn(0, 'F')).toBe(32);
    expect(temperatureIn(100, 'F')).toBe(212);
    expect(temperatureIn(-40, 'F')).toBe(-40);
    // 37 °C = 98.6 °F (body temperature, the usual textbook example).
    expect(temperatureIn(37, 'F')).toBeCloseTo(98.6, 10);
    expect(temperatureIn(88, 'C')).toBe(88);
  });

  it('converts a difference without the offset: 20 °F is 11.1 °C, the OBD-II thermostat monitor margin (13 CCR 1968.2)', () => {
    expect(temperatureDifferenceIn(11.1, 'F')).toBeCloseTo(20, 0);
    expect(temperatureDifferenceIn(10, 'F')).toBe(18);
    expect(temperatureDifferenceIn(-0.5, 'F')).toBe(-0.9);
  });

  it('tells temperatures from differences by the field name', () => {
    expect(
      [
        'boilingPointC',
        'thermostatOpenC',
        'coolantMaxC',
        'levelC',
        'newtonT0C',
        'peakCoolantC',
        'overshootPeakC',
        'lowC',
      ].map(temperatureKind),
    ).toEqual(Array(8).fill('temperature'));
    expect(
      [
        'minMarginC',
        'riseC',
        'warmMedianRiseC',
        'coldSoakOffsetC',
        'overshootC',
        'coolantRangeC',
        'newtonRmseC',
        'senSlopeCPerDay',
        'rawSlopeCPerDay',
      ].map(temperatureKind),
    ).toEqual(Array(9).fill('difference'));
    expect(
      ['capPressureKpa', 'glycolPercent', 'daysToBoil', 'confidence', 'speedKph', 'rpm', 'timeToTargetS'].map(
        temperatureKind,
      ),
    ).toEqual(Array(7).fill(null));
  });
});

describe('converting a reply', () => {
  it('converts fields at any depth, evidence by its metric, warm-up curve points, and nothing else', () => {
    const body = {
      unit: 'F',
      capPressureKpa: 100,
      metrics: { boilingPointC: 125, minMarginC: 5, daysToBoil: 12, rawSlopeCPerDay: 0.5 },
      evidence: [
        { metric: 'peakCoolantC', value: 120, expected: 125, z: null },
        { metric: 'timeToTargetS', value: 600, expected: 480, z: 2 },
      ],
      points: [
        [0, 20],
        [5, 60],
      ],
    };
    expect(convertTemperatures(body, 'F')).toEqual({
      unit: 'F',
      capPressureKpa: 100,
      metrics: { boilingPointC: 257, minMarginC: 9, daysToBoil: 12, rawSlopeCPerDay: 0.9 },
      evidence: [
        { metric: 'peakCoolantC', value: 248, expected: 257, z: null },
        { metric: 'timeToTargetS', value: 600, expected: 480, z: 2 },
      ],
      points: [
        [0, 68],
        [5, 140],
      ],
    });
    expect(convertTemperatures(body, 'C')).toBe(body);
  });

  it("converts the analysis' own sentences: temperatures with the offset, margins, rises and slopes without", () => {
    expect(
      convertTemperatureText(
        'On 2026-11-20 the coolant reached 118 °C, only 2.1 °C below its boiling point of 120.1 °C under the pressure cap.',
        'F',
      ),
    ).toBe(
      'On 2026-11-20 the coolant reached 244 °F, only 3.8 °F below its boiling point of 248.2 °F under the pressure cap.',
    );
    expect(
      convertTemperatureText(
        'peak coolant temperatures run about 4.1 °C above what the weather explains, rising 0.42 °C a day',
        'F',
      ),
    ).toBe('peak coolant temperatures run about 7.4 °F above what the weather explains, rising 0.76 °F a day');
    expect(
      convertTemperatureText(
        "Air temperatures down to -12 °C come within 3.2 °C of the coolant's freezing point of -37 °C (50 % glycol).",
        'F',
      ),
    ).toBe(
      "Air temperatures down to 10 °F come within 5.8 °F of the coolant's freezing point of -35 °F (50 % glycol).",
    );
    expect(
      convertTemperatureText(
        "climbs about 6 °C past the thermostat's rating (usually 92 °C) and then drops back by about 5 °C",
        'F',
      ),
    ).toBe("climbs about 11 °F past the thermostat's rating (usually 198 °F) and then drops back by about 9 °F");
    expect(convertTemperatureText(`Peaks are ${boilWords(12, 121)}.`, 'F')).toBe(
      'Peaks are boiling point 250 °F in about 12 days at this rate.',
    );
    expect(convertTemperatureText('no temperature here, 12 kPa', 'F')).toBe('no temperature here, 12 kPa');
  });

  it('converts the default-profile note it adds to findings', () => {
    expect(convertTemperatureText(defaultProfileNote('slow-warmup', true)!, 'F')).toContain('thermostat 190 °F');
    expect(defaultProfileNote('boil-margin', false)).toBeNull();
    expect(defaultProfileNote('sensor-fault', true)).toBeNull();
    expect(defaultProfileNote('boil-margin', true)).toMatch(/default profile \(100 kPa cap, 50 % glycol by mass\)/);
  });
});
