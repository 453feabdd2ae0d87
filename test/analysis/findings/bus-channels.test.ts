import { describe, expect, it } from 'vitest';
import { analyseSamples } from '../../../services/analysis/analyse-samples.js';
import type { BusDayStats } from '../../../services/analysis/bus-day-stats.js';
import { resolveConfig } from '../../../services/analysis/config.js';
import type { DayAggregate } from '../../../services/analysis/day-aggregates.js';
import { deriveFindings } from '../../../services/analysis/derive-findings.js';
import { coolantLossFindings } from '../../../services/analysis/findings/coolant-loss.js';
import { coolantBoilingPointC } from '../../../services/analysis/physics/boiling-point.js';
import { DEFAULT_VEHICLE_PROFILE } from '../../../services/analysis/vehicle-profile.js';
import { syntheticDrive } from '../synthetic-drive.js';
import { DAY_MS } from '../../../services/time/durations.js';

const T0 = Date.UTC(2026, 9, 5);
const cfg = resolveConfig();
const profile = { ...DEFAULT_VEHICLE_PROFILE };

/** A plain day record (engine ran, nothing remarkable), with the given bus statistics and peak. */
function day(k: number, bus: Partial<BusDayStats> | null, peakCoolantC = 92): DayAggregate {
  const dayStartMs = T0 + k * DAY_MS;
  return {
    day: new Date(dayStartMs).toISOString().slice(0, 10),
    dayStartMs,
    firstSampleMs: dayStartMs + 6 * 3_600_000,
    lastSampleMs: dayStartMs + 14 * 3_600_000,
    sampleCount: 2880,
    engineHours: 8,
    runCount: 2,
    coldStartCount: 1,
    peakCoolantC,
    rawMaxCoolantC: peakCoolantC,
    minCoolantC: 10,
    peakMovingCoolantC: peakCoolantC,
    peakIdleCoolantC: 90,
    warmMedianCoolantC: 89,
    warmP95CoolantC: 91,
    hotSeconds: 0,
    overheatEpisodes: 0,
    overheatLongestS: 0,
    overheatPeakC: null,
    overheatIdleShare: 0,
    ambientMeanC: 12,
    ambientMinC: 5,
    ambientMaxC: 18,
    meanSpeedKph: 40,
    meanRpm: 1400,
    idleFraction: 0.2,
    rateFlagCount: 0,
    outOfRangeCount: 0,
    dropoutCount: 0,
    missingS: 0,
    missingFraction: 0,
    ...(bus
      ? {
          bus: {
            barometricMinKpa: null,
            coolantLevelMeanPct: null,
            coolantLevelSamples: 0,
            hotPressureSamples: 0,
            hotPressureMaxKpa: null,
            ...bus,
          },
        }
      : {}),
  };
}
const now = T0 + 20 * DAY_MS;

describe('vehicle-bus channels in the analysis', () => {
  it('adds the day statistics of barometric pressure, coolant level and hot coolant pressure to the days that have them', () => {
    const drive = syntheticDrive({ startMs: T0 + 6 * 3_600_000, ambientC: 10, startCoolantC: 10, durationS: 3600 });
    const n = drive.ts.length;
    const a = analyseSamples(
      {
        ...drive,
        barometricKpa: new Float64Array(n).fill(79.5),
        coolantLevelPct: new Float64Array(n).fill(92.4),
        coolantPressureKpa: Float64Array.from(drive.coolant, (c) => (c >= 88 ? 60 : 5)),
      },
      profile,
      cfg,
    );
    expect(a.days[0]!.bus).toMatchObject({
      barometricMinKpa: 79.5,
      coolantLevelSamples: expect.any(Number),
      hotPressureMaxKpa: 60,
    });
    expect(a.days[0]!.bus!.coolantLevelMeanPct).toBeCloseTo(92.4, 6);
    expect(a.days[0]!.bus!.hotPressureSamples).toBeGreaterThan(100);
    expect(analyseSamples(drive, profile, cfg).days[0]).not.toHaveProperty('bus');
  });

  it('finds coolant loss in a coolant level that falls day after day, and none in a steady one', () => {
    const falling = Array.from({ length: 14 }, (_, k) =>
      day(k + 6, { coolantLevelMeanPct: 96 - 0.6 * k, coolantLevelSamples: 2000 }),
    );
    const [f] = coolantLossFindings(falling, T0, now, cfg);
    expect(f).toMatchObject({ kind: 'coolant-loss', subKind: 'level-falling', severity: 'warning' });
    expect(f!.metrics.dropPct).toBeCloseTo(7.8, 1);
    const steady = Array.from({ length: 14 }, (_, k) =>
      day(k + 6, { coolantLevelMeanPct: 95.6 + 0.4 * (k % 2), coolantLevelSamples: 2000 }),
    );
    expect(coolantLossFindings(steady, T0, now, cfg)).toEqual([]);
  });

  it('says the cap or a leak when the coolant pressure never rises while the engine is hot', () => {
    const flat = Array.from({ length: 5 }, (_, k) => day(k + 14, { hotPressureSamples: 400, hotPressureMaxKpa: 6 }));
    expect(coolantLossFindings(flat, T0, now, cfg)).toMatchObject([
      { kind: 'coolant-loss', subKind: 'no-pressure-when-hot', severity: 'warning' },
    ]);
    const sealed = Array.from({ length: 5 }, (_, k) => day(k + 14, { hotPressureSamples: 400, hotPressureMaxKpa: 74 }));
    expect(coolantLossFindings(sealed, T0, now, cfg)).toEqual([]);
  });

  it('judges the boil margin at the atmospheric pressure measured that day (2,000 m: 79.5 kPa, ISO 2533)', () => {
    const seaLevelC = coolantBoilingPointC(profile.capPressureKpa, profile.glycolPercent, 101.325);
    const highC = coolantBoilingPointC(profile.capPressureKpa, profile.glycolPercent, 79.5);
    expect(seaLevelC - highC).toBeGreaterThan(3);
    // Peaks 6 °C under the sea-level boiling point on two days: no finding at sea level (the warning
    // margin is 5 °C), a thin margin up the mountain.
    const peak = seaLevelC - 6;
    const kinds = (days: DayAggregate[]) =>
      deriveFindings({ runs: [], days, sensorEvents: [] }, profile, { now }, cfg).map((f) => f.kind);
    expect(kinds([day(18, null, peak), day(19, null, peak)])).not.toContain('boil-margin');
    const high = deriveFindings(
      {
        runs: [],
        days: [day(18, { barometricMinKpa: 79.5 }, peak), day(19, { barometricMinKpa: 79.5 }, peak)],
        sensorEvents: [],
      },
      profile,
      { now },
      cfg,
    ).find((f) => f.kind === 'boil-margin');
    expect(high?.metrics).toMatchObject({ measuredAtmosphericKpa: 79.5, boilingPointC: Math.round(highC * 10) / 10 });
  });
});
