import type { AnalysisConfig } from './config.js';
import { FLAG_IMPLAUSIBLE, FLAG_MOVING } from './sample-flags.js';
import { MS_PER_S, type SampleArrays } from './sample-arrays.js';
import { fitNewtonWarmup, type NewtonFit } from './stats/newton-fit.js';
import { medianInPlace } from './stats/robust.js';
import { stepResponseMetrics } from './stats/step-response.js';

const MIN_FIT_POINTS = 8;
const MIN_FIT_SPAN_S = 300;
/** Stop the Newton fit a little below the rating: past it the thermostat bends the curve. */
const FIT_STOP_BELOW_OPEN_C = 2;

/**
 * Newton warm-up fit over the closed-thermostat part of a cold start: from the first sample
 * until the coolant nears the thermostat rating (or `warmupFitMaxS`), decimated to at most
 * `warmupFitPoints` plausible points.
 */
export function fitWarmupCurve(
  samples: SampleArrays,
  flags: Uint8Array,
  a: number,
  b: number,
  thermostatOpenC: number,
  cfg: AnalysisConfig,
): NewtonFit | null {
  const t0 = samples.ts[a]!;
  const endMs = t0 + cfg.warmupFitMaxS * MS_PER_S;
  let last = a;
  while (
    last < b &&
    samples.ts[last]! <= endMs &&
    !(samples.coolant[last]! >= thermostatOpenC - FIT_STOP_BELOW_OPEN_C && (flags[last]! & FLAG_IMPLAUSIBLE) === 0)
  )
    last++;
  const count = last - a;
  if (count < MIN_FIT_POINTS) return null;
  const step = Math.max(1, Math.floor(count / cfg.warmupFitPoints));
  const t: number[] = [];
  const y: number[] = [];
  for (let i = a; i < last; i += step) {
    if ((flags[i]! & FLAG_IMPLAUSIBLE) !== 0) continue;
    t.push((samples.ts[i]! - t0) / MS_PER_S);
    y.push(samples.coolant[i]!);
  }
  if (t.length < MIN_FIT_POINTS || t[t.length - 1]! < MIN_FIT_SPAN_S) return null;
  return fitNewtonWarmup(t, y);
}

export interface OperatingMetrics {
  /** Median coolant while moving once warmed and past the overshoot window, °C. */
  plateauC: number | null;
  /** Highest coolant within `overshootWindowS` after the thermostat rating is first reached, °C. */
  overshootPeakC: number | null;
  /** overshootPeakC − settled temperature (the plateau, or on short runs the median after the peak), °C (≥ 0). */
  overshootC: number | null;
  /** From reaching the rating until the coolant stays within plateau ± settleBandC, s. */
  settlingTimeS: number | null;
}

/**
 * Plateau, overshoot and settling of one run after its warm-up. `openIdx` is the first
 * plausible sample at or above the thermostat rating (or -1), `targetIdx` the first at the
 * warm-up target (or -1). `scratch` must hold b − a values.
 */
export function operatingMetrics(
  samples: SampleArrays,
  flags: Uint8Array,
  a: number,
  b: number,
  openIdx: number,
  targetIdx: number,
  periodS: number,
  cfg: AnalysisConfig,
  scratch: Float64Array,
): OperatingMetrics {
  const none = { plateauC: null, overshootPeakC: null, overshootC: null, settlingTimeS: null };
  if (targetIdx < 0) return none;
  const { ts, coolant } = samples;
  const plateauFrom = Math.max(
    ts[targetIdx]! + cfg.plateauDelayS * MS_PER_S,
    openIdx >= 0 ? ts[openIdx]! + cfg.overshootWindowS * MS_PER_S : 0,
  );
  let k = 0;
  for (let i = targetIdx; i < b; i++) {
    if (ts[i]! < plateauFrom) continue;
    const f = flags[i]!;
    if ((f & FLAG_IMPLAUSIBLE) === 0 && (f & FLAG_MOVING) !== 0) scratch[k++] = coolant[i]!;
  }
  const plateauC = k * periodS >= cfg.plateauMinS ? medianInPlace(scratch, k) : null;
  if (openIdx < 0) return { ...none, plateauC };
  const windowEnd = ts[openIdx]! + cfg.overshootWindowS * MS_PER_S;
  let end = openIdx;
  let peakIdx = openIdx;
  for (; end < b && ts[end]! <= windowEnd; end++) {
    if ((flags[end]! & FLAG_IMPLAUSIBLE) === 0 && coolant[end]! > coolant[peakIdx]!) peakIdx = end;
  }
  // Short runs have no plateau: settle on what the coolant did after the peak instead.
  const settledC = plateauC ?? settledAfter(samples, flags, peakIdx, b, cfg, scratch);
  if (settledC === null) return { ...none, plateauC };
  const m = stepResponseMetrics(
    ts,
    coolant,
    coolant[openIdx]!,
    settledC,
    cfg.settleBandC,
    openIdx,
    end,
    (i) => (flags[i]! & FLAG_IMPLAUSIBLE) !== 0,
  );
  // The overshoot is the highest point after opening, also when the engine settles below the
  // rating (cold days, heater on): there the step "response" points down and its extreme
  // would be the lowest point, which hid late-opening thermostats in cold climates.
  const peakC = coolant[peakIdx]!;
  return {
    plateauC,
    overshootPeakC: peakC,
    overshootC: Math.max(peakC - settledC, 0),
    settlingTimeS: (Math.max(m.settlingTime, ts[openIdx]!) - ts[openIdx]!) / MS_PER_S,
  };
}

/** Fewest samples after the peak for a settled temperature on a run without plateau. */
const MIN_SETTLE_SAMPLES = 6;
/** Settling starts this long after the peak, s. */
const SETTLE_AFTER_PEAK_S = 120;

/** Median coolant from shortly after the peak to `overshootWindowS` after it, or null. */
function settledAfter(
  samples: SampleArrays,
  flags: Uint8Array,
  peakIdx: number,
  b: number,
  cfg: AnalysisConfig,
  scratch: Float64Array,
): number | null {
  const from = samples.ts[peakIdx]! + SETTLE_AFTER_PEAK_S * MS_PER_S;
  const to = samples.ts[peakIdx]! + cfg.overshootWindowS * MS_PER_S;
  let k = 0;
  for (let i = peakIdx; i < b && samples.ts[i]! <= to; i++) {
    if (samples.ts[i]! >= from && (flags[i]! & FLAG_IMPLAUSIBLE) === 0) scratch[k++] = samples.coolant[i]!;
  }
  return k >= MIN_SETTLE_SAMPLES ? medianInPlace(scratch, k) : null;
}
