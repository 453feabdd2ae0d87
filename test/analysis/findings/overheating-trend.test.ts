import { describe, expect, it } from 'vitest';
import { DEFAULT_ANALYSIS_CONFIG as CFG } from '../../../services/analysis/config.js';
import type { DayAggregate } from '../../../services/analysis/day-aggregates.js';
import { overheatingTrendFinding } from '../../../services/analysis/findings/overheating-trend.js';
import { PLATEAU } from '../../../services/analysis/findings/run-features.js';
import type { RunMetrics } from '../../../services/analysis/run-metrics.js';
import { utcDay } from '../../../services/analysis/sample-arrays.js';
import { DAY_MS } from '../../../services/time/durations.js';

const START = Date.UTC(2026, 9, 5);
const RATING_C = 90;
const BOILING_C = 128;

/** A working day with the given peak; the rest of the record is plausible filler. */
function day(i: number, peakC: number, overheatEpisodes: number): DayAggregate {
  const dayStartMs = START + i * DAY_MS;
  return {
    day: utcDay(dayStartMs),
    dayStartMs,
    firstSampleMs: dayStartMs + 6 * 3_600_000,
    lastSampleMs: dayStartMs + 14 * 3_600_000,
    sampleCount: 2880,
    engineHours: 6,
    runCount: 8,
    coldStartCount: 1,
    peakCoolantC: peakC,
    rawMaxCoolantC: peakC,
    minCoolantC: 12,
    peakMovingCoolantC: peakC,
    peakIdleCoolantC: peakC - 4,
    warmMedianCoolantC: RATING_C + 1,
    warmP95CoolantC: RATING_C + 3,
    hotSeconds: 60 * overheatEpisodes,
    overheatEpisodes,
    overheatLongestS: overheatEpisodes > 0 ? 60 : 0,
    overheatPeakC: overheatEpisodes > 0 ? peakC : null,
    overheatIdleShare: 0,
    ambientMeanC: 15,
    ambientMinC: 10,
    ambientMaxC: 20,
    meanSpeedKph: 35,
    meanRpm: 1500,
    idleFraction: 0.3,
    rateFlagCount: 0,
    outOfRangeCount: 0,
    dropoutCount: 0,
    missingS: 0,
    missingFraction: 0,
  };
}

/** 10 baseline days with peaks 7–9 °C above the rating, then 14 days climbing 0.5 °C a day. */
function risingPeaks(episodesFrom: number): DayAggregate[] {
  return Array.from({ length: 24 }, (_, i) => {
    const peakC = RATING_C + 8 + ((i * 7) % 3) - 1 + (i >= 10 ? 0.5 * (i - 9) : 0);
    return day(i, Math.round(peakC), i >= episodesFrom ? 2 : 0);
  });
}

describe('overheating trend', () => {
  const now = START + 24 * DAY_MS;

  it('reports rising daily peaks once the engine has overheated within the window', () => {
    const f = overheatingTrendFinding(risingPeaks(20), START, BOILING_C, now, CFG);
    expect(f?.kind).toBe('overheating-trend');
  });

  it('stays quiet while the rise stays below the hot threshold (no overheating episode in the window)', () => {
    // Same peaks; the only episodes are older than trendHotWindowDays.
    const days = risingPeaks(99).map((d, i) => (i === 2 || i === 3 ? day(i, d.peakCoolantC!, 1) : d));
    expect(overheatingTrendFinding(days, START, BOILING_C, now, CFG)).toBeNull();
    // With a window reaching back to that early episode the same rise is reported.
    expect(overheatingTrendFinding(days, START, BOILING_C, now, { ...CFG, trendHotWindowDays: 30 })?.kind).toBe(
      'overheating-trend',
    );
  });
});

describe('overheating trend: persistence and effect size', () => {
  const now = START + 24 * DAY_MS;

  it('needs overheating on trendHotMinDays separate days of the window, not one hot climb', () => {
    const oneHotDay = risingPeaks(99).map((d, i) => (i === 22 ? day(i, d.peakCoolantC!, 3) : d));
    expect(overheatingTrendFinding(oneHotDay, START, BOILING_C, now, CFG)).toBeNull();
    const twoHotDays = risingPeaks(99).map((d, i) => (i === 20 || i === 22 ? day(i, d.peakCoolantC!, 1) : d));
    expect(overheatingTrendFinding(twoHotDays, START, BOILING_C, now, CFG)?.kind).toBe('overheating-trend');
  });

  it('is a warning only for an effect a workshop would find, overheating episodes alone make an advisory', () => {
    // Peaks rising 0.5 °C a day for 14 days: a median rise since the change of about 4 °C, below trendWarnRiseC.
    const f = overheatingTrendFinding(risingPeaks(20), START, BOILING_C, now, CFG)!;
    expect(f.metrics.riseC).toBeLessThan(CFG.trendWarnRiseC);
    expect(f.metrics.recentOverheatEpisodes).toBeGreaterThan(0);
    expect(f.severity).toBe('advisory');
    expect(
      overheatingTrendFinding(risingPeaks(20), START, BOILING_C, now, { ...CFG, trendWarnRiseC: 3 })!.severity,
    ).toBe('warning');
  });
});

describe('overheating trend from the time spent above the hot threshold', () => {
  // Peaks stay flat (the fan still pulls them back), but the time above the hot threshold grows.
  const days = (hotS: number, from = 12) =>
    Array.from({ length: 16 }, (_, i) => {
      const d = day(i, RATING_C + 8 + ((i * 7) % 3) - 1, i >= from ? 3 : 0);
      return { ...d, hotSeconds: i >= from ? hotS : 0 };
    });
  const now = START + 16 * DAY_MS;

  it('reports days with minutes above the hot threshold that the baseline days never had', () => {
    const f = overheatingTrendFinding(days(300), START, BOILING_C, now, CFG);
    expect(f?.metrics.hotTimeAlarm).toBe(1);
    expect(f?.firstSeen).toBe(START + 12 * DAY_MS);
    expect(f?.summary).toContain('5 min a day longer above its hot threshold');
  });

  it('ignores a rise smaller than hotTimeMinRiseS, even when it lasts long enough for the CUSUM', () => {
    // Six days at 1.5 σ: the CUSUM passes its threshold, the median rise stays below the bound.
    const small = days(CFG.hotTimeMinRiseS - 30, 10);
    expect(overheatingTrendFinding(small, START, BOILING_C, now, CFG)).toBeNull();
    expect(
      overheatingTrendFinding(small, START, BOILING_C, now, { ...CFG, hotTimeMinRiseS: 60 })?.metrics.hotTimeAlarm,
    ).toBe(1);
  });
});

describe('overheating trend from the median coolant temperature while driving', () => {
  // A hot-depot vehicle in autumn: 10 baseline days at 30–35 °C, then cooler weather. Its
  // driving median follows the ambient (80 + 0.3 °C per °C here); from day 20 a radiator losing
  // capacity adds 3 °C. Peaks stay flat and the time above the hot threshold stays short.
  const ambientOf = (i: number) => (i < 10 ? 30 + (i % 6) : 22 + (i % 4));
  const days = (faultFrom: number) =>
    Array.from({ length: 26 }, (_, i) => {
      const ambient = ambientOf(i);
      const d = day(i, RATING_C + 8 + ((i * 7) % 3) - 1, i >= faultFrom ? 1 : 0);
      return {
        ...d,
        ambientMaxC: ambient,
        ambientMeanC: ambient - 5,
        warmMedianCoolantC: 80 + 0.3 * ambient + (i >= faultFrom ? 3 : 0),
      };
    });
  const now = START + 26 * DAY_MS;

  it('reports a rise against the days before, the cooler ones included', () => {
    const f = overheatingTrendFinding(days(20), START, BOILING_C, now, CFG);
    expect(f?.metrics.warmMedianAlarm).toBe(1);
    expect(f?.metrics.warmMedianRiseC).toBeCloseTo(3, 1);
    expect(f?.metrics.hotTimeAlarm).toBe(0);
    expect(f?.firstSeen).toBe(START + 20 * DAY_MS);
    expect(f?.summary).toContain(
      'while driving the coolant runs about 3 °C warmer than on earlier days in similar weather',
    );
  });

  it('misses it against the first baseline days alone, whose hotter weather it cannot reach', () => {
    // The cooler days are expected at the 30 °C edge of the first ten days' ambient range:
    // 2.4 °C too warm, which hides most of the 3 °C rise.
    const fixed = { ...CFG, warmMedianBaselineLagDays: 1000 };
    expect(overheatingTrendFinding(days(20), START, BOILING_C, now, fixed)).toBeNull();
  });

  it('stays quiet on the same weather without the fault', () => {
    // The gate is open (an overheating episode on the last days) but nothing shifted.
    const healthy = days(99).map((d, i) => (i >= 23 ? { ...d, overheatEpisodes: 1, hotSeconds: 60 } : d));
    expect(overheatingTrendFinding(healthy, START, BOILING_C, now, CFG)).toBeNull();
  });
});

describe('plateau feature', () => {
  const run = (idleFraction: number) =>
    ({
      plateauC: 84,
      excludedForSensor: false,
      ambientMeanC: 2,
      idleFraction,
      meanSpeedKph: 30,
      thermostatOpenC: 88,
    }) as RunMetrics;

  it('judges runs in steady driving and leaves stop-start runs that idle more than plateauMaxIdleFraction unjudged', () => {
    expect(PLATEAU.extract(run(CFG.plateauMaxIdleFraction - 0.1), CFG)?.y).toBe(-4);
    expect(PLATEAU.extract(run(CFG.plateauMaxIdleFraction + 0.05), CFG)).toBeNull();
  });
});
