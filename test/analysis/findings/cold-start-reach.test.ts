import { describe, expect, it } from 'vitest';
import { DEFAULT_ANALYSIS_CONFIG as CFG } from '../../../services/analysis/config.js';
import { coldStartReachShift } from '../../../services/analysis/findings/cold-start-reach.js';
import { slowWarmupFinding } from '../../../services/analysis/findings/thermostat-findings.js';
import type { RunMetrics } from '../../../services/analysis/run-metrics.js';
import { DAY_MS } from '../../../services/time/durations.js';
import { coldStart, FIXTURE_START_MS as START } from './run-metrics-fixture.js';

/** A cold start at −18 °C that stayed at 55 °C after an hour (a thermostat stuck open in frost). */
const missed = (day: number, over: Partial<RunMetrics> = {}) =>
  coldStart(day, {
    startAmbientC: -18,
    ambientMeanC: -16,
    timeToTargetS: null,
    timeToOpenS: null,
    peakCoolantC: 55,
    plateauC: null,
    ...over,
  });
const reached = (day: number) => coldStart(day, { startAmbientC: -18, ambientMeanC: -16 });
const at = (day: number) => START + day * DAY_MS + 12 * 3_600_000;

describe('a stuck-open thermostat in frost is judged against the vehicle’s own cold starts', () => {
  // Baseline: 12 days of frost, every hour-long cold start reached the target. Onset on day 14.
  const history = [...Array.from({ length: 14 }, (_, d) => reached(d)), missed(14), missed(15), missed(16)];

  it('is found on the third day after onset, dated at the first start that missed, although the OBD-II monitor is suspended', () => {
    expect(history.every((r) => r.warmupSuspendedReason === 'low-ambient')).toBe(true);
    expect(coldStartReachShift(history.slice(0, 16), START, at(15), CFG)).toBeNull();
    const c = coldStartReachShift(history, START, at(16), CFG)!;
    expect(c.firstSeen).toBe(history[14]!.startMs);
    expect(c.neverReached).toBe(3);
    expect(c.baselineReachShare).toBe(1);
    const f = slowWarmupFinding(history, START, null, at(16), CFG)!;
    expect(f.kind).toBe('slow-warmup');
    expect(f.severity).toBe('warning');
    expect(f.troubleCode).toBe('P0128');
    expect(f.summary).toContain('3 of 3 cold starts of half an hour or more never reached 77 °C');
    expect(f.recommendedCheck).toContain('hot');
  });

  it('stays quiet on a vehicle that never reached its target in frost in its baseline either (a light van, heater on full)', () => {
    const van = Array.from({ length: 17 }, (_, d) => missed(d));
    expect(coldStartReachShift(van, START, at(16), CFG)).toBeNull();
  });

  it('needs the misses on two days and most of the latest starts', () => {
    const oneDay = [
      ...history.slice(0, 14),
      missed(14),
      missed(14, { startMs: history[14]!.startMs + 7_200_000 }),
      missed(14, { startMs: history[14]!.startMs + 14_400_000 }),
    ];
    expect(coldStartReachShift(oneDay, START, at(14), CFG)).toBeNull();
    const recovered = [...history, reached(17), reached(18), reached(19), reached(20)];
    expect(coldStartReachShift(recovered, START, at(20), CFG)).toBeNull();
  });

  it('does not judge short or idle-dominated starts, nor a cold snap colder than anything in the baseline', () => {
    const short = [...history.slice(0, 14), ...[14, 15, 16].map((d) => missed(d, { durationS: 1200 }))];
    expect(coldStartReachShift(short, START, at(16), CFG)).toBeNull();
    const idling = [...history.slice(0, 14), ...[14, 15, 16].map((d) => missed(d, { warmupIdleFraction: 0.7 }))];
    expect(coldStartReachShift(idling, START, at(16), CFG)).toBeNull();
    const snap = [...history.slice(0, 14), ...[14, 15, 16].map((d) => missed(d, { startAmbientC: -35 }))];
    expect(coldStartReachShift(snap, START, at(16), CFG)).toBeNull();
  });
});
