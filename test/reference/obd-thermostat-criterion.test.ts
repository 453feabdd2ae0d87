import { describe, expect, it } from 'vitest';
import { DEFAULT_ANALYSIS_CONFIG } from '../../services/analysis/config.js';
import { analyseSamples } from '../../services/analysis/analyse-samples.js';
import { DEFAULT_VEHICLE_PROFILE } from '../../services/analysis/vehicle-profile.js';
import { syntheticDrive } from '../analysis/synthetic-drive.js';

const F_TO_C_INTERVAL = 5 / 9;

describe('California OBD-II thermostat monitor criterion (13 CCR 1968.2 (e)(10), via secondary sources)', () => {
  it('uses 20 °F below the nominal regulating temperature as the warmed-up target', () => {
    // 20 °F expressed as a temperature interval is 20 · 5/9 = 11.1 °C.
    expect(DEFAULT_ANALYSIS_CONFIG.obdWarmupMarginC).toBeCloseTo(20 * F_TO_C_INTERVAL, 1);
  });

  it('suspends warm-up judgement below 20 °F (−6.7 °C) ambient at engine start', () => {
    expect(DEFAULT_ANALYSIS_CONFIG.obdMinAmbientC).toBeCloseTo((20 - 32) * F_TO_C_INTERVAL, 1);
    const cold = analyseSamples(
      syntheticDrive({ ambientC: -8, startCoolantC: -8 }),
      DEFAULT_VEHICLE_PROFILE,
      DEFAULT_ANALYSIS_CONFIG,
    );
    const mild = analyseSamples(
      syntheticDrive({ ambientC: -5, startCoolantC: -5 }),
      DEFAULT_VEHICLE_PROFILE,
      DEFAULT_ANALYSIS_CONFIG,
    );
    expect(cold.runs[0]!.warmupEligible).toBe(false);
    expect(cold.runs[0]!.warmupSuspendedReason).toBe('low-ambient');
    expect(mild.runs[0]!.warmupEligible).toBe(true);
  });

  it('suspends warm-up judgement when idling is more than half of the warm-up', () => {
    expect(DEFAULT_ANALYSIS_CONFIG.obdMaxIdleFraction).toBe(0.5);
    const idle = analyseSamples(
      syntheticDrive({ ambientC: 10, startCoolantC: 10, idleS: 1500 }),
      DEFAULT_VEHICLE_PROFILE,
      DEFAULT_ANALYSIS_CONFIG,
    );
    expect(idle.runs[0]!.warmupSuspendedReason).toBe('idle-dominated');
  });

  it('times the warm-up to the thermostat rating minus 11.1 °C', () => {
    const r = analyseSamples(
      syntheticDrive({ ambientC: 10, startCoolantC: 10, tauS: 600, tInfC: 110 }),
      DEFAULT_VEHICLE_PROFILE,
      DEFAULT_ANALYSIS_CONFIG,
    );
    // T(t) = 110 − 100·e^(−t/600) reaches 88 − 11.1 = 76.9 °C at t = 600·ln(100/33.1) ≈ 663 s.
    const expected = 600 * Math.log(100 / (110 - 76.9));
    expect(r.runs[0]!.timeToTargetS).toBeGreaterThanOrEqual(expected - 10);
    expect(r.runs[0]!.timeToTargetS).toBeLessThanOrEqual(expected + 10);
  });
});
