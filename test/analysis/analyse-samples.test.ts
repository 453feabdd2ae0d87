import { describe, expect, it } from 'vitest';
import { analyseSamples, resumeFromMs } from '../../services/analysis/analyse-samples.js';
import { DEFAULT_ANALYSIS_CONFIG as CFG } from '../../services/analysis/config.js';
import type { SampleArrays } from '../../services/analysis/sample-arrays.js';
import { DEFAULT_VEHICLE_PROFILE as PROFILE } from '../../services/analysis/vehicle-profile.js';
import { concatSamples, syntheticDrive } from './synthetic-drive.js';
import { HOUR_MS } from '../../services/time/durations.js';

const T0 = Date.UTC(2026, 9, 5, 6);

function slice(s: SampleArrays, fromMs: number): SampleArrays {
  const i = s.ts.findIndex((t) => t >= fromMs);
  return {
    ts: s.ts.slice(i),
    coolant: s.coolant.slice(i),
    ambient: s.ambient.slice(i),
    speedKph: s.speedKph.slice(i),
    rpm: s.rpm.slice(i),
  };
}

describe('analyseSamples', () => {
  const morning = syntheticDrive({ startMs: T0, ambientC: 8, startCoolantC: 8, quantise: true });
  const restart = syntheticDrive({ startMs: T0 + 2 * HOUR_MS, ambientC: 12, startCoolantC: 70, quantise: true });
  const nextDay = syntheticDrive({ startMs: T0 + 24 * HOUR_MS, ambientC: 6, startCoolantC: 6, quantise: true });
  const all = concatSamples([morning, restart, nextDay]);
  const result = analyseSamples({ ...all, nowMs: T0 + 30 * HOUR_MS }, PROFILE, CFG);

  it('splits the stream into runs at gaps and tells cold starts from warm restarts', () => {
    expect(result.runs.map((r) => r.startMs)).toEqual([T0, T0 + 2 * HOUR_MS, T0 + 24 * HOUR_MS]);
    expect(result.runs.map((r) => r.startKind)).toEqual(['cold', 'warm', 'cold']);
    expect(result.runs[1]!.soakS).toBeCloseTo(3600, 0);
    expect(result.runs.every((r) => !r.open)).toBe(true);
  });

  it('aggregates per UTC day with run counts and engine hours', () => {
    expect(result.days.map((d) => d.day)).toEqual(['2026-10-05', '2026-10-06']);
    expect(result.days[0]!.runCount).toBe(2);
    expect(result.days[0]!.coldStartCount).toBe(1);
    expect(result.days[0]!.engineHours).toBeCloseTo(2, 1);
  });

  it('returns only JSON-serialisable values', () => {
    expect(JSON.parse(JSON.stringify(result))).toEqual(result);
  });

  it('gives the same runs and days when restarted from the open run', () => {
    const partial = analyseSamples(slice(all, T0 + 25 * HOUR_MS), PROFILE, CFG);
    expect(partial.runs[0]!.open).toBe(true);
    const from = resumeFromMs(partial.runs[0]!.startMs);
    const again = analyseSamples(
      { ...slice(all, from), previousRunEndMs: result.runs[1]!.endMs, nowMs: T0 + 30 * HOUR_MS },
      PROFILE,
      CFG,
    );
    expect(again.runs.filter((r) => !r.truncatedStart)).toEqual(result.runs.slice(2));
    expect(again.days).toEqual(result.days.slice(1));
  });

  it('flags a one-sample spike without letting it set the peak', () => {
    const spiky = syntheticDrive({ startMs: T0, ambientC: 10, startCoolantC: 10, quantise: true });
    spiky.coolant[200] = spiky.coolant[200]! + 60;
    const r = analyseSamples(spiky, PROFILE, CFG);
    expect(r.runs[0]!.rateFlagCount).toBe(1);
    expect(r.runs[0]!.peakCoolantC).toBeLessThan(100);
    expect(r.days[0]!.rawMaxCoolantC).toBeGreaterThan(140);
    expect(r.sensorEvents.map((e) => e.kind)).toEqual(['implausible-rate']);
  });

  it('counts readings pinned at the channel limit as out of range', () => {
    const open = syntheticDrive({ startMs: T0, ambientC: 10, startCoolantC: 10 });
    open.coolant[300] = -40;
    expect(analyseSamples(open, PROFILE, CFG).runs[0]!.outOfRangeCount).toBe(1);
  });

  it('tells a flat-lined sensor from 1 °C quantisation at the regulated temperature', () => {
    const healthy = analyseSamples(
      syntheticDrive({ startMs: T0, ambientC: 10, startCoolantC: 10, quantise: true }),
      PROFILE,
      CFG,
    );
    const stuck = syntheticDrive({ startMs: T0, ambientC: 10, startCoolantC: 10 });
    stuck.coolant.fill(10);
    const flat = analyseSamples(stuck, PROFILE, CFG);
    expect(healthy.runs[0]!.stuck).toBe(false);
    expect(flat.runs[0]!.stuck).toBe(true);
    expect(flat.runs[0]!.excludedForSensor).toBe(true);
    expect(flat.runs[0]!.warmupSuspendedReason).toBe('sensor');
  });

  it('fits the Newton warm-up curve of a cold start', () => {
    const r = analyseSamples(
      syntheticDrive({ startMs: T0, ambientC: 10, startCoolantC: 10, tauS: 700, tInfC: 120, regulatedC: 95 }),
      PROFILE,
      CFG,
    );
    expect(r.runs[0]!.newtonTauS).toBeCloseTo(700, -1);
    expect(r.runs[0]!.newtonTInfC).toBeCloseTo(120, 0);
  });
});
