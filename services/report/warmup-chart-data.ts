import { round } from '../analysis/findings/finding.js';
import { quantileSorted } from 'simple-statistics';
import type { RunMetrics } from '../analysis/run-metrics.js';
import type { ReadingSeries } from '../db/weekly-report-repository.js';
import type { WarmupChart } from './weekly-report-schema.js';

/** Minutes after engine start shown in the warm-up chart (a stuck-open thermostat takes longer than a healthy 10–20 min). */
export const WARMUP_CHART_MIN = 40;
/** Most recent cold starts drawn per vehicle. */
export const WARMUP_CURVES_MAX = 4;
/** Fewest healthy cold starts for a baseline band. */
export const BAND_MIN_RUNS = 3;
/** Most healthy cold starts in a band (the latest before the onset). */
export const BAND_MAX_RUNS = 40;
/** Curves are thinned to at most one point per this many seconds (the gateway sends every ~10 s). */
const CURVE_STEP_S = 30;
/** Cold starts shorter than this show too little of a warm-up to draw, s. */
const MIN_CURVE_RUN_S = 600;
const BAND_LOW_Q = 0.1;
const BAND_HIGH_Q = 0.9;

/**
 * A run's first-order warm-up model at `tS` seconds, capped at its settled (plateau)
 * temperature or the thermostat rating: the fit describes the closed-thermostat phase only.
 */
export function newtonCurveC(
  run: Pick<RunMetrics, 'newtonTauS' | 'newtonTInfC' | 'newtonT0C' | 'plateauC' | 'thermostatOpenC'>,
  tS: number,
): number | null {
  const { newtonTauS: tau, newtonTInfC: tInf, newtonT0C: t0 } = run;
  if (tau === null || tInf === null || t0 === null) return null;
  const t = tInf - (tInf - t0) * Math.exp(-tS / tau);
  return Math.min(t, run.plateauC ?? run.thermostatOpenC);
}

/** Whether a run can stand for healthy behaviour in the band. */
export function isBandRun(engineRun: RunMetrics): boolean {
  return (
    engineRun.startKind === 'cold' &&
    engineRun.warmupEligible &&
    !engineRun.excludedForSensor &&
    engineRun.newtonTauS !== null
  );
}

/** 10th/50th/90th percentile per minute of the healthy runs' fitted curves, and how many runs it holds (0: too few). */
export function baselineBand(healthy: readonly RunMetrics[]): { band: WarmupChart['band']; baselineRuns: number } {
  const runs = healthy.filter(isBandRun).slice(-BAND_MAX_RUNS);
  if (runs.length < BAND_MIN_RUNS) return { band: [], baselineRuns: 0 };
  const band: WarmupChart['band'] = [];
  for (let minute = 0; minute <= WARMUP_CHART_MIN; minute++) {
    const values = runs.map((r) => newtonCurveC(r, minute * 60)!).sort((a, b) => a - b);
    band.push({
      minute,
      lowC: round(quantileSorted(values, BAND_LOW_Q), 1),
      medianC: round(quantileSorted(values, 0.5), 1),
      highC: round(quantileSorted(values, BAND_HIGH_Q), 1),
    });
  }
  return { band, baselineRuns: runs.length };
}

/** Cold starts worth drawing: long enough and with a sensor that can be believed. */
export function drawableColdStarts(runs: readonly RunMetrics[]): RunMetrics[] {
  return runs
    .filter(
      (r) => r.startKind === 'cold' && !r.truncatedStart && !r.excludedForSensor && r.durationS >= MIN_CURVE_RUN_S,
    )
    .slice(-WARMUP_CURVES_MAX);
}

/** One cold start as a curve: measured readings where kept, else the run's stored fit. */
export function warmupCurve(run: RunMetrics, readings: ReadingSeries | null): WarmupChart['curves'][number] | null {
  const points: [number, number][] = [];
  if (readings && readings.tsMs.length > 1) {
    let nextS = 0;
    for (let i = 0; i < readings.tsMs.length; i++) {
      const tS = (readings.tsMs[i]! - run.startMs) / 1000;
      if (tS < nextS) continue;
      points.push([round(tS / 60, 1), round(readings.coolantC[i]!, 1)]);
      nextS = tS + CURVE_STEP_S;
    }
  } else {
    for (let minute = 0; minute <= Math.min(WARMUP_CHART_MIN, run.durationS / 60); minute++) {
      const c = newtonCurveC(run, minute * 60);
      if (c !== null) points.push([minute, round(c, 1)]);
    }
  }
  if (points.length < 2) return null;
  return {
    runStart: new Date(run.startMs).toISOString(),
    startAmbientC: run.startAmbientC === null ? null : round(run.startAmbientC, 1),
    timeToTargetMin: run.timeToTargetS === null ? null : round(run.timeToTargetS / 60, 1),
    source: readings && readings.tsMs.length > 1 ? 'readings' : 'newton-fit',
    points,
  };
}
