import { describe, expect, it } from 'vitest';
import { DEFAULT_ANALYSIS_CONFIG as CFG } from '../../../services/analysis/config.js';
import { sensorFaultFindings } from '../../../services/analysis/findings/sensor-fault.js';
import type { RunMetrics } from '../../../services/analysis/run-metrics.js';
import { DAY_MS } from '../../../services/time/durations.js';
import { coldStart, FIXTURE_START_MS as START } from './run-metrics-fixture.js';

/** A cold start whose coolant read `offsetC` above the air (−10 °C) after its soak. */
const soakStart = (day: number, offsetC: number) =>
  coldStart(day, { coldSoakOffsetC: offsetC, startCoolantC: -10 + offsetC, newtonT0C: -10 + offsetC });

const bias = (runs: RunMetrics[], nowDay: number) =>
  sensorFaultFindings(runs, [], [], START, START + nowDay * DAY_MS, CFG).find((f) => f.subKind === 'bias') ?? null;

describe('cold-soak sensor bias is judged as a change from the vehicle’s own offset', () => {
  it('raises nothing for an offset the vehicle has had from its first day (a depot hall keeps it 12 °C above the air)', () => {
    // The old rule compared this with the peers' offset near 0 and raised a warning from day 1.
    const runs = Array.from({ length: 28 }, (_, d) => soakStart(d, 12 + ((d * 7) % 3) - 1));
    for (let now = 3; now <= 28; now++) expect(bias(runs.slice(0, now), now)).toBeNull();
  });

  it('raises a warning when the offset moves by more than the tolerance from the own baseline, dated at the move', () => {
    // The simulator's sensor-bias fault: an offset of ±(4 + 10·s) °C (here −9 °C) from day 16.
    const runs = Array.from({ length: 24 }, (_, d) => soakStart(d, 3 + ((d * 5) % 3) - 1 - (d >= 16 ? 9 : 0)));
    const f = bias(runs, 24)!;
    expect(f.severity).toBe('warning');
    expect(f.firstSeen).toBe(runs[16]!.startMs);
    expect(f.metrics.offsetShiftC).toBeLessThan(-CFG.sensorBiasToleranceC);
    // Two shifted starts are not yet a majority of the recent ones: no finding on day 17.
    expect(bias(runs.slice(0, 18), 18)).toBeNull();
    expect(bias(runs.slice(0, 19), 19)).not.toBeNull();
  });

  it('judges nothing before the own baseline is established', () => {
    const runs = Array.from({ length: 9 }, (_, d) => soakStart(d, d < 4 ? 0 : 15));
    expect(bias(runs, 9)).toBeNull();
  });

  it('widens the tolerance with the own offsets’ spread (block heater plugged in on some nights)', () => {
    // Baseline offsets alternate 2 °C and 30 °C; a recent run of 14 °C offsets is inside that spread.
    const runs = Array.from({ length: 20 }, (_, d) => soakStart(d, d < 10 ? (d % 2 === 0 ? 2 : 30) : 14));
    expect(bias(runs, 20)).toBeNull();
  });
});
