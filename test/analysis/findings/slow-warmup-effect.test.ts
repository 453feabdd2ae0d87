import { describe, expect, it } from 'vitest';
import { DEFAULT_ANALYSIS_CONFIG as CFG } from '../../../services/analysis/config.js';
import { slowWarmupFinding } from '../../../services/analysis/findings/thermostat-findings.js';
import { DAY_MS } from '../../../services/time/durations.js';
import { coldStart, FIXTURE_START_MS as START } from './run-metrics-fixture.js';

/** A mild-weather cold start (10 °C) judged by the OBD-II monitor, reaching the target after `timeS`. */
const start = (day: number, timeS: number | null, hour = 0) =>
  coldStart(day, {
    startMs: START + day * DAY_MS + (7 + hour) * 3_600_000,
    warmupEligible: true,
    warmupSuspendedReason: null,
    startAmbientC: 10,
    ambientMeanC: 12,
    ambientMaxC: 14,
    startCoolantC: 11,
    timeToTargetS: timeS,
  });
/** 12 baseline days whose warm-ups take 570–630 s. */
const baseline = Array.from({ length: 12 }, (_, d) => start(d, 570 + ((d * 7) % 5) * 15));
const at = (day: number) => START + day * DAY_MS + 20 * 3_600_000;

describe('slow warm-up needs an effect a workshop would find', () => {
  it('stays quiet on cold starts 30 % slower than usual, which the CUSUM alone would report', () => {
    const slower = [...baseline, ...[12, 13, 14, 15].map((d) => start(d, 780))];
    expect(slowWarmupFinding(slower, START, null, at(15), { ...CFG, slowWarmupMinTimeRatio: 1 })?.kind).toBe(
      'slow-warmup',
    );
    expect(slowWarmupFinding(slower, START, null, at(15), CFG)).toBeNull();
  });

  it('stays quiet on slow starts that fall on one day only', () => {
    const oneDay = [...baseline, start(12, 1500, 0), start(12, 1500, 3), start(12, null, 6)];
    expect(slowWarmupFinding(oneDay, START, null, at(12), { ...CFG, slowWarmupMinDays: 1 })?.kind).toBe('slow-warmup');
    expect(slowWarmupFinding(oneDay, START, null, at(12), CFG)).toBeNull();
  });

  it('reports starts that take twice the usual time on two days', () => {
    const f = slowWarmupFinding([...baseline, start(12, 1300), start(13, 1250)], START, null, at(13), CFG)!;
    expect(f.kind).toBe('slow-warmup');
    expect(f.firstSeen).toBe(START + 12 * DAY_MS + 7 * 3_600_000);
  });
});
