import { describe, expect, it } from 'vitest';
import { analyseSamples } from '../../../services/analysis/analyse-samples.js';
import { DEFAULT_ANALYSIS_CONFIG as CFG } from '../../../services/analysis/config.js';
import { expected, fitBaseline, type ModelRow } from '../../../services/analysis/findings/baseline-model.js';
import { OVERSHOOT, PLATEAU, WARMUP_TIME } from '../../../services/analysis/findings/run-features.js';
import { type ScoredRun, scoreFeature } from '../../../services/analysis/findings/run-shift.js';
import { detectRunShift } from '../../../services/analysis/findings/run-shift-finding.js';
import type { RunMetrics } from '../../../services/analysis/run-metrics.js';
import { buildPeerBaseline } from '../../../services/analysis/peer-baseline.js';
import { DEFAULT_VEHICLE_PROFILE as PROFILE } from '../../../services/analysis/vehicle-profile.js';
import { concatSamples, syntheticDrive } from '../synthetic-drive.js';
import { DAY_MS } from '../../../services/time/durations.js';

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
      drives.push(
        syntheticDrive({
          startMs: START + d * DAY_MS + 6 * 3_600_000,
          ambientC,
          startCoolantC: ambientC,
          quantise: true,
          tauS: cold ? 1000 : 500 + 20 * Math.cos(d),
          tInfC: 115,
          regulatedC: 90,
        }),
      );
    }
    const { runs } = analyseSamples({ ...concatSamples(drives), nowMs: START + 15 * DAY_MS }, PROFILE, CFG);
    const coldRun = runs.find((r) => r.startMs >= START + 14 * DAY_MS)!;
    expect(coldRun.timeToTargetS).not.toBeNull();
    const { scored, source } = scoreFeature(
      runs,
      WARMUP_TIME,
      START,
      null,
      START + 15 * DAY_MS,
      CFG,
      CFG.warmupLogScaleFloor,
    );
    expect(source).toBe('own');
    expect(scored.length).toBeGreaterThan(5);
    expect(scored.some((s) => s.run.startMs === coldRun.startMs)).toBe(false);
  });

  it('lets the log start deficit extrapolate while clamping the other predictors to the fitted range', () => {
    // y = 2 + 1·x0 + 0.5·x1 exactly on a small grid; outside the grid only x0 may extrapolate.
    const rows: ModelRow[] = [];
    for (let a = 0; a <= 4; a++)
      for (let b = 0; b <= 4; b++)
        rows.push({ x: [4 + a * 0.05, b], y: 2 + (4 + a * 0.05) + 0.5 * b, censored: false });
    const model = fitBaseline(rows)!;
    const row: ModelRow = { x: [4.5, 10], y: 0, censored: false };
    expect(expected(model, row, [true, false])).toBeCloseTo(2 + 4.5 + 0.5 * 4, 2);
    expect(expected(model, row)).toBeCloseTo(2 + 4.2 + 0.5 * 4, 2);
  });
});

describe('run shift', () => {
  it('raises a fault that starts mid-day from repeated runs at the repeat z, which the day median alone dilutes', () => {
    // Ten quiet days, then a day whose three morning runs are normal and three afternoon runs
    // sit 4 σ out: the day median is 1.75, below the CUSUM threshold on its own.
    const scored: ScoredRun[] = [];
    for (let d = 0; d <= 10; d++) {
      for (let k = 0; k < 6; k++) {
        const z = d === 10 && k >= 3 ? 4 : -0.5;
        const run = { startMs: START + d * DAY_MS + (7 + 2 * k) * 3_600_000 } as RunMetrics;
        scored.push({ run, feature: PLATEAU, z, value: z === 4 ? -14 : 0, expected: -1 });
      }
    }
    const now = START + 11 * DAY_MS;
    expect(detectRunShift(scored, now, CFG)).toBeNull();
    const shift = detectRunShift(scored, now, CFG, CFG.cusumH, CFG.slowWarmupRepeatZ);
    expect(shift?.firstSeen).toBe(START + 10 * DAY_MS + 13 * 3_600_000);
    expect(shift?.supporting).toHaveLength(3);
  });

  it('reports a steady, moderate overshoot shift under the overshoot median-z bound but not under the general one', () => {
    // Ten normal days, then twelve days of cold starts 1.7 σ out (a lightly sticking thermostat):
    // the 6 σ CUSUM alarms, and the runs since the change sit 1.7 σ out (median).
    const scored: ScoredRun[] = [];
    for (let d = 0; d < 22; d++) {
      const z = d >= 10 ? 1.7 : 0;
      scored.push({
        run: { startMs: START + d * DAY_MS + 6 * 3_600_000 } as RunMetrics,
        feature: OVERSHOOT,
        z,
        value: 92 + 3.5 * z,
        expected: 92,
      });
    }
    const now = START + 22 * DAY_MS;
    expect(detectRunShift(scored, now, CFG, CFG.overshootCusumH, CFG.overshootRepeatZ)).toBeNull();
    const shift = detectRunShift(
      scored,
      now,
      CFG,
      CFG.overshootCusumH,
      CFG.overshootRepeatZ,
      CFG.overshootMinShiftMedianZ,
    );
    expect(shift?.firstSeen).toBe(START + 10 * DAY_MS + 6 * 3_600_000);
  });
});

describe('own baseline with too few runs for its regression', () => {
  // One cold start a day (a bus): after the 10 baseline days the warm-up model, which explains
  // the time by start deficit, ambient and idling, has 10 rows for 4 coefficients, so it falls
  // back to the median and expects the same warm-up on every morning.
  const ambientOn = (i: number) => -5 + ((i * 7) % 41);
  const drive = (d: number, hour: number, ambientC: number) =>
    syntheticDrive({
      startMs: START + d * DAY_MS + hour * 3_600_000,
      ambientC,
      startCoolantC: ambientC,
      quantise: true,
      tauS: 500,
      tInfC: 95,
      regulatedC: 90,
    });
  const now = START + 14 * DAY_MS;
  // The bus: mornings between −5 and 35 °C; day 13 is the coldest.
  const busRuns = analyseSamples(
    {
      ...concatSamples(Array.from({ length: 14 }, (_, d) => drive(d, 6, d === 13 ? -5 : ambientOn(d)))),
      nowMs: now,
    },
    PROFILE,
    CFG,
  ).runs;
  // Its engine family's other vehicles: four cold starts a day in the same weather range.
  const peerRuns = analyseSamples(
    {
      ...concatSamples(
        Array.from({ length: 14 * 4 }, (_, i) => drive(Math.floor(i / 4), 6 + 4 * (i % 4), ambientOn(i + 3))),
      ),
      nowMs: now,
    },
    PROFILE,
    CFG,
  ).runs;
  const peer = buildPeerBaseline(peerRuns, PROFILE.engineFamily, 3);
  const coldZ = (s: ReturnType<typeof scoreFeature>) => s.scored.find((r) => r.run.startMs >= START + 13 * DAY_MS)!.z;

  it("gives way to the peers' regression, which expects a longer warm-up on a colder morning", () => {
    expect(peer.models.warmupTime?.medianOnly).toBe(false);
    const alone = scoreFeature(busRuns, WARMUP_TIME, START, null, now, CFG, CFG.warmupLogScaleFloor);
    const withPeers = scoreFeature(busRuns, WARMUP_TIME, START, peer, now, CFG, CFG.warmupLogScaleFloor);
    expect(alone.source).toBe('own');
    expect(withPeers.source).toBe('peer');
    // The same healthy warm-up: slow against the median, as expected against the peers' model.
    expect(coldZ(alone)).toBeGreaterThan(0.6);
    expect(Math.abs(coldZ(withPeers))).toBeLessThan(0.2);
  });

  it('keeps the own baseline once it has the runs for its regression', () => {
    const busyRuns = analyseSamples(
      {
        ...concatSamples(
          Array.from({ length: 14 * 4 }, (_, i) => drive(Math.floor(i / 4), 6 + 4 * (i % 4), ambientOn(i))),
        ),
        nowMs: now,
      },
      PROFILE,
      CFG,
    ).runs;
    expect(scoreFeature(busyRuns, WARMUP_TIME, START, peer, now, CFG, CFG.warmupLogScaleFloor).source).toBe('own');
  });
});

describe('baseline model with non-negative slopes', () => {
  // y = 90 − 0.4·x plus a little alternating noise: a regression finds the negative slope.
  const rows: ModelRow[] = Array.from({ length: 12 }, (_, i) => ({
    x: [25 + i],
    y: 90 - 0.4 * (25 + i) + (i % 2 ? 0.2 : -0.2),
    censored: false,
  }));

  it('falls back to the median when a slope comes out negative', () => {
    expect(fitBaseline(rows)!.coefficients[1]).toBeCloseTo(-0.4, 1);
    const m = fitBaseline(rows, { nonNegativeSlopes: true })!;
    expect(m.medianOnly).toBe(true);
    expect(m.coefficients[1]).toBe(0);
    // The median of the 12 values (an even count: the mean of the middle two).
    const ys = rows.map((r) => r.y).sort((a, b) => a - b);
    expect(m.coefficients[0]).toBeCloseTo((ys[5]! + ys[6]!) / 2, 9);
  });

  it('keeps a regression whose slopes are all positive', () => {
    const rising = rows.map((r) => ({ ...r, y: 180 - r.y }));
    const m = fitBaseline(rising, { nonNegativeSlopes: true })!;
    expect(m.medianOnly).toBe(false);
    expect(m.coefficients[1]).toBeCloseTo(0.4, 1);
  });
});
