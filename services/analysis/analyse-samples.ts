import { attachBusStats, busDayStats } from './bus-day-stats.js';
import type { AnalysisConfig } from './config.js';
import { aggregateDays, type DayAggregate } from './day-aggregates.js';
import { coolantBoilingPointC } from './physics/boiling-point.js';
import { computeRunMetrics, type HotEpisode, type RunMetrics } from './run-metrics.js';
import { MS_PER_S, type SampleArrays, utcDayStartMs } from './sample-arrays.js';
import { estimatePeriodS, flagSamples, segmentRuns } from './sample-flags.js';
import { type SensorEvent, sensorEventsOfRun } from './sensor-events.js';
import type { VehicleProfile } from './vehicle-profile.js';

export interface AnalysisInput extends SampleArrays {
  /**
   * End of the vehicle's last stored run, ms, when resuming: gives the first run its soak, and
   * if that run reaches into these readings (ends less than `runGapS` before the first one)
   * the first run is its tail and comes back `truncatedStart`. Omit on a first analysis.
   */
  previousRunEndMs?: number;
  /** Time of analysis, ms: a trailing run quiet for longer than `runGapS` is closed. */
  nowMs?: number;
}

export interface SampleAnalysis {
  runs: RunMetrics[];
  days: DayAggregate[];
  sensorEvents: SensorEvent[];
  /** Estimated sample period, s. */
  samplePeriodS: number;
  /** Hot threshold used for episodes, °C. */
  hotThresholdC: number;
  /** Boiling point of the coolant at cap pressure, °C. */
  boilingPointC: number;
  /** Where the next incremental analysis should restart (see `resumeFromMs`), or null. */
  resumeFromMs: number | null;
}

/**
 * Where to restart an incremental analysis: the UTC midnight on or before the start of the
 * first open run, so that run and every day it touches are recomputed in full.
 * @example resumeFromMs(Date.parse('2026-10-05T06:12:00Z')) // Date.parse('2026-10-05')
 */
export function resumeFromMs(openRunStartMs: number): number {
  return utcDayStartMs(openRunStartMs);
}

/**
 * Per-run metrics, per-day aggregates and sensor events from one vehicle's readings.
 * Runs are identified by their start ts; when resuming, a run that continues one the caller
 * already stored is `truncatedStart` and must not replace the stored one.
 * Pure: no clock (pass `nowMs`), no I/O.
 * @example analyseSamples(arrays, DEFAULT_VEHICLE_PROFILE, resolveConfig()).runs[0]?.timeToTargetS
 */
export function analyseSamples(raw: AnalysisInput, profile: VehicleProfile, cfg: AnalysisConfig): SampleAnalysis {
  // One object shape for every caller: the hot loops below are compiled for the shape they see
  // first, and an input built another way (spread, optional keys) would make V8 throw that code
  // away and compile it again, several times over on a worker's first pass.
  const input: SampleArrays = {
    ts: raw.ts,
    coolant: raw.coolant,
    ambient: raw.ambient,
    speedKph: raw.speedKph,
    rpm: raw.rpm,
  };
  const n = input.ts.length;
  const hotC = profile.thermostatOpenC + cfg.hotMarginC;
  const boilingPointC = coolantBoilingPointC(profile.capPressureKpa, profile.glycolPercent, cfg.atmosphericPressureKpa);
  const samplePeriodS = estimatePeriodS(input.ts);
  if (n === 0) {
    return {
      runs: [],
      days: [],
      sensorEvents: [],
      samplePeriodS,
      hotThresholdC: hotC,
      boilingPointC,
      resumeFromMs: null,
    };
  }
  const flags = new Uint8Array(n);
  flagSamples(input, cfg, flags);
  const bounds = segmentRuns(input.ts, flags, cfg);
  const runs: RunMetrics[] = [];
  const episodes: HotEpisode[] = [];
  let longest = 0;
  for (let k = 0; k < bounds.length; k += 2) longest = Math.max(longest, bounds[k + 1]! - bounds[k]!);
  const scratch = new Float64Array(longest);
  const gapMs = cfg.runGapS * MS_PER_S;
  const prev = raw.previousRunEndMs;
  let prevEndMs: number | null = prev ?? null;
  for (let k = 0; k < bounds.length; k += 2) {
    const a = bounds[k]!;
    const b = bounds[k + 1]!;
    const isLast = k + 2 >= bounds.length;
    const truncatedStart = a === 0 && prev !== undefined && input.ts[0]! - prev <= gapMs;
    const open = isLast && !(raw.nowMs !== undefined && raw.nowMs - input.ts[b - 1]! > gapMs);
    runs.push(
      computeRunMetrics(input, flags, a, b, {
        profile,
        cfg,
        periodS: samplePeriodS,
        hotC,
        prevEndMs,
        truncatedStart,
        open,
        scratch,
        episodes,
      }),
    );
    prevEndMs = input.ts[b - 1]!;
  }
  const days = aggregateDays(input, flags, runs, episodes, samplePeriodS, hotC, cfg);
  attachBusStats(days, busDayStats(raw, flags, profile.thermostatOpenC));
  const sensorEvents = runs.filter((r) => !r.truncatedStart).flatMap((r) => sensorEventsOfRun(r, cfg));
  const openRun = runs.find((r) => r.open);
  return {
    runs,
    days,
    sensorEvents,
    samplePeriodS,
    hotThresholdC: hotC,
    boilingPointC,
    resumeFromMs: openRun ? resumeFromMs(openRun.startMs) : null,
  };
}
