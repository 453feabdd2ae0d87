import { describe, expect, it } from 'vitest';
import { analyseSamples } from '../../../services/analysis/analyse-samples.js';
import { DEFAULT_ANALYSIS_CONFIG as CFG } from '../../../services/analysis/config.js';
import { expected, fitBaseline, type ModelRow } from '../../../services/analysis/findings/baseline-model.js';
import { WARMUP_TIME } from '../../../services/analysis/findings/run-features.js';
import { scoreFeature } from '../../../services/analysis/findings/run-shift.js';
import { DEFAULT_VEHICLE_PROFILE as PROFILE } from '../../../services/analysis/vehicle-profile.js';
import { concatSamples, syntheticDrive } from '../synthetic-drive.js';

const DAY_MS = 86_400_000;
const START = Date.UTC(2026, 9, 5);

describe('warm-up scoring', () => {
  it('does not judge a cold-snap start against an own baseline learned in mild weather', () => {
    // 14 mild mornings (8–12 °C), then a −5 °C start (above the OBD-II −6.7 °C suspension) that takes twice as long: a cold snap,
    // not a fault. Without peers the run must be left unjudged rather than scored against
    // the mild-weather expectation.
    const drives = [];
    for (let d = 0; d < 15; d++) {
      const cold = d === 14;
      const ambientC = cold ? -5 : 10 + 2 * Math.sin(d);
      drives.push(syntheticDrive({
        startMs: START + d * DAY_MS + 6 * 3_600_000, ambientC, startCoolantC: ambientC, quantise: true,
        tauS: cold ? 1000 : 500 + 20 * Math.cos(d), tInfC: 115, regulatedC: 90,
      }));
    }
    const { runs } = analyseSamples({ ...concatSamples(drives), nowMs: START + 15 * DAY_MS }, PROFILE, CFG);
    const coldRun = runs.find((r) => r.startMs >= START + 14 * DAY_MS)!;
    expect(coldRun.timeToTargetS).not.toBeNull();
    const { scored, source } = scoreFeature(runs, WARMUP_TIME, START, null, START + 15 * DAY_MS, CFG, CFG.warmupLogScaleFloor);
    expect(source).toBe('own');
    expect(scored.length).toBeGreaterThan(5);
    expect(scored.some((s) => s.run.startMs === coldRun.startMs)).toBe(false);
  });

  it('lets the log start deficit extrapolate while clamping the other predictors to the fitted range', () => {
    // y = 2 + 1·x0 + 0.5·x1 exactly on a small grid; outside the grid only x0 may extrapolate.
    const rows: ModelRow[] = [];
    for (let a = 0; a <= 4; a++) for (let b = 0; b <= 4; b++) rows.push({ x: [4 + a * 0.05, b], y: 2 + (4 + a * 0.05) + 0.5 * b, censored: false });
    const model = fitBaseline(rows)!;
    const row: ModelRow = { x: [4.5, 10], y: 0, censored: false };
    expect(expected(model, row, [true, false])).toBeCloseTo(2 + 4.5 + 0.5 * 4, 2);
    expect(expected(model, row)).toBeCloseTo(2 + 4.2 + 0.5 * 4, 2);
  });
});
