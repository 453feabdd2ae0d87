import type { BusDayStats } from './bus-day-stats.js';
import type { AnalysisConfig } from './config.js';
import type { HotEpisode, RunMetrics } from './run-metrics.js';
import {
  FLAG_ENGINE_ON,
  FLAG_IMPLAUSIBLE,
  FLAG_MOVING,
  FLAG_OUT_OF_RANGE,
  FLAG_RATE,
  FLAG_WARM,
} from './sample-flags.js';
import { MS_PER_DAY, MS_PER_S, type SampleArrays, utcDay } from './sample-arrays.js';
import { isTransportGap } from './transport-gap.js';

/**
 * One vehicle-day (UTC), flat and JSON-serialisable; `null` where there was nothing to
 * measure. Temperatures °C, durations s (engineHours in h), speeds km/h.
 */
export interface DayAggregate {
  /** YYYY-MM-DD (UTC). */
  day: string;
  dayStartMs: number;
  firstSampleMs: number;
  lastSampleMs: number;
  sampleCount: number;
  engineHours: number;
  /** Runs starting this day (truncated runs excluded). */
  runCount: number;
  coldStartCount: number;
  /** Highest plausible coolant reading. */
  peakCoolantC: number | null;
  /** Highest finite coolant reading, plausible or not (what a plain threshold alarm sees). */
  rawMaxCoolantC: number | null;
  minCoolantC: number | null;
  peakMovingCoolantC: number | null;
  peakIdleCoolantC: number | null;
  /** Median and 95th percentile of warm, plausible, moving readings (0.5 °C resolution). */
  warmMedianCoolantC: number | null;
  warmP95CoolantC: number | null;
  /** Time at or above the hot threshold (thermostat rating + hotMarginC). */
  hotSeconds: number;
  overheatEpisodes: number;
  overheatLongestS: number;
  overheatPeakC: number | null;
  /** Share of overheating time spent idling (0..1). */
  overheatIdleShare: number;
  ambientMeanC: number | null;
  ambientMinC: number | null;
  ambientMaxC: number | null;
  meanSpeedKph: number | null;
  meanRpm: number | null;
  idleFraction: number;
  rateFlagCount: number;
  outOfRangeCount: number;
  /** Gaps lost in transport (the vehicle moving on both sides; engine-off stops are not gaps). */
  dropoutCount: number;
  missingS: number;
  /** Share of running time missing (transport gaps within runs), 0..1. */
  missingFraction: number;
  /** Vehicle-bus channels of the day (barometric pressure, coolant level and pressure), only where sent. */
  bus?: BusDayStats;
}

const HIST_MIN_C = -40;
const HIST_BIN_C = 0.5;
const HIST_BINS = 520;

function percentileFromHistogram(hist: Float64Array, total: number, q: number): number | null {
  if (total <= 0) return null;
  const want = q * total;
  let acc = 0;
  for (let k = 0; k < HIST_BINS; k++) {
    acc += hist[k]!;
    if (acc >= want) return HIST_MIN_C + (k + 0.5) * HIST_BIN_C;
  }
  return null;
}

const orNull = (v: number): number | null => (Number.isFinite(v) ? v : null);

/**
 * Aggregates samples (with their flags, FLAG_WARM set by the run pass), runs and overheating
 * episodes into one record per UTC day with data.
 */
export function aggregateDays(
  samples: SampleArrays,
  flags: Uint8Array,
  runs: readonly RunMetrics[],
  episodes: readonly HotEpisode[],
  periodS: number,
  hotC: number,
  cfg: AnalysisConfig,
): DayAggregate[] {
  const { ts, coolant, ambient, speedKph, rpm } = samples;
  const n = ts.length;
  const out: DayAggregate[] = [];
  const hist = new Float64Array(HIST_BINS);
  const periodMs = periodS * MS_PER_S;
  const dropoutMs = cfg.dropoutPeriods * periodMs;
  const gapMs = cfg.runGapS * MS_PER_S;
  let i = 0;
  while (i < n) {
    const dayStart = Math.floor(ts[i]! / MS_PER_DAY) * MS_PER_DAY;
    const dayEnd = dayStart + MS_PER_DAY;
    hist.fill(0);
    let histN = 0,
      count = 0,
      on = 0,
      idle = 0,
      hotMs = 0,
      rateFlags = 0,
      oor = 0,
      dropouts = 0,
      missingMs = 0;
    let peak = -Infinity,
      raw = -Infinity,
      min = Infinity,
      peakMoving = -Infinity,
      peakIdle = -Infinity;
    let ambSum = 0,
      ambN = 0,
      ambMin = Infinity,
      ambMax = -Infinity,
      spdSum = 0,
      spdN = 0,
      rpmSum = 0,
      rpmN = 0;
    const first = i;
    for (; i < n && ts[i]! < dayEnd; i++) {
      count++;
      const f = flags[i]!;
      const c = coolant[i]!;
      if (c > raw) raw = c;
      if ((f & FLAG_ENGINE_ON) === 0) continue;
      on++;
      const dt = i + 1 < n ? ts[i + 1]! - ts[i]! : periodMs;
      if (dt > dropoutMs && dt <= gapMs && i + 1 < n && isTransportGap(f, flags[i + 1]!)) {
        dropouts++;
        missingMs += dt - periodMs;
      }
      const moving = (f & FLAG_MOVING) !== 0;
      if (!moving) idle++;
      const am = ambient[i]!;
      if (am >= cfg.ambientValidMinC && am <= cfg.ambientValidMaxC) {
        ambSum += am;
        ambN++;
        if (am < ambMin) ambMin = am;
        if (am > ambMax) ambMax = am;
      }
      const sp = speedKph[i]!;
      if (sp === sp) {
        spdSum += sp;
        spdN++;
      }
      const r = rpm[i]!;
      if (r === r) {
        rpmSum += r;
        rpmN++;
      }
      if ((f & FLAG_IMPLAUSIBLE) !== 0) {
        if ((f & FLAG_RATE) !== 0) rateFlags++;
        if ((f & FLAG_OUT_OF_RANGE) !== 0) oor++;
        continue;
      }
      if (c > peak) peak = c;
      if (c < min) min = c;
      if (c >= hotC) hotMs += Math.min(dt, dropoutMs);
      if ((f & FLAG_WARM) !== 0) {
        if (moving) {
          if (c > peakMoving) peakMoving = c;
          const k = Math.min(HIST_BINS - 1, Math.max(0, Math.floor((c - HIST_MIN_C) / HIST_BIN_C)));
          hist[k] = hist[k]! + 1;
          histN++;
        } else if (c > peakIdle) peakIdle = c;
      }
    }
    let runCount = 0,
      coldStarts = 0;
    for (const r of runs) {
      if (r.truncatedStart || r.startMs < dayStart || r.startMs >= dayEnd) continue;
      runCount++;
      if (r.startKind === 'cold') coldStarts++;
    }
    let epCount = 0,
      epLongest = 0,
      epPeak = -Infinity,
      epMs = 0,
      epIdleS = 0;
    for (const e of episodes) {
      if (e.startMs < dayStart || e.startMs >= dayEnd) continue;
      epCount++;
      epLongest = Math.max(epLongest, (e.endMs - e.startMs) / MS_PER_S);
      epPeak = Math.max(epPeak, e.peakC);
      epMs += e.endMs - e.startMs;
      epIdleS += e.idleS;
    }
    const onS = on * periodS;
    out.push({
      day: utcDay(dayStart),
      dayStartMs: dayStart,
      firstSampleMs: ts[first]!,
      lastSampleMs: ts[i - 1]!,
      sampleCount: count,
      engineHours: onS / 3600,
      runCount,
      coldStartCount: coldStarts,
      peakCoolantC: orNull(peak),
      rawMaxCoolantC: orNull(raw),
      minCoolantC: orNull(min),
      peakMovingCoolantC: orNull(peakMoving),
      peakIdleCoolantC: orNull(peakIdle),
      warmMedianCoolantC: percentileFromHistogram(hist, histN, 0.5),
      warmP95CoolantC: percentileFromHistogram(hist, histN, 0.95),
      hotSeconds: hotMs / MS_PER_S,
      overheatEpisodes: epCount,
      overheatLongestS: epLongest,
      overheatPeakC: orNull(epPeak),
      overheatIdleShare: epMs > 0 ? Math.min(1, (epIdleS * MS_PER_S) / epMs) : 0,
      ambientMeanC: ambN > 0 ? ambSum / ambN : null,
      ambientMinC: orNull(ambMin),
      ambientMaxC: orNull(ambMax),
      meanSpeedKph: spdN > 0 ? spdSum / spdN : null,
      meanRpm: rpmN > 0 ? rpmSum / rpmN : null,
      idleFraction: on > 0 ? idle / on : 0,
      rateFlagCount: rateFlags,
      outOfRangeCount: oor,
      dropoutCount: dropouts,
      missingS: missingMs / MS_PER_S,
      missingFraction: onS + missingMs / MS_PER_S > 0 ? missingMs / MS_PER_S / (onS + missingMs / MS_PER_S) : 0,
    });
  }
  return out;
}
