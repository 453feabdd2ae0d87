import type { AnalysisConfig } from './config.js';
import { MS_PER_S, type SampleArrays } from './sample-arrays.js';
import { medianInPlace } from './stats/robust.js';

/** Per-sample bit flags. */
export const FLAG_OUT_OF_RANGE = 1;
/** Coolant jumped faster than physically possible (spike) and has not been confirmed. */
export const FLAG_RATE = 2;
export const FLAG_ENGINE_ON = 4;
export const FLAG_MOVING = 8;
/** Set by the run pass: the engine had reached its warm-up target (or restarted warm). */
export const FLAG_WARM = 16;
export const FLAG_IMPLAUSIBLE = FLAG_OUT_OF_RANGE | FLAG_RATE;

const PERIOD_SAMPLE_COUNT = 2001;
const DEFAULT_PERIOD_S = 10;

/** Typical sample period, s: median of the first positive time steps. */
export function estimatePeriodS(ts: Float64Array): number {
  const n = Math.min(ts.length - 1, PERIOD_SAMPLE_COUNT);
  const d = new Float64Array(Math.max(n, 0));
  let k = 0;
  for (let i = 0; i < n; i++) {
    const dt = ts[i + 1]! - ts[i]!;
    if (dt > 0) d[k++] = dt;
  }
  const m = medianInPlace(d, k) / MS_PER_S;
  return Number.isFinite(m) && m > 0 ? m : DEFAULT_PERIOD_S;
}

/**
 * Flags every sample: coolant out of the channel's range, impossible rates of change,
 * engine running, vehicle moving. A jump beyond `rateAllowanceC + maxCoolantRateCPerS·Δt`
 * from the last accepted value is held as implausible until `jumpConfirmSamples`
 * consecutive, mutually consistent samples confirm the new level (then it is accepted).
 */
export function flagSamples(samples: SampleArrays, cfg: AnalysisConfig, flags: Uint8Array): void {
  const { ts, coolant, speedKph, rpm } = samples;
  const n = ts.length;
  const rate = cfg.maxCoolantRateCPerS / MS_PER_S;
  const gapMs = cfg.runGapS * MS_PER_S;
  let anchorV = NaN;
  let anchorT = -Infinity;
  let pending = 0;
  let pendingV = NaN;
  let pendingT = 0;
  for (let i = 0; i < n; i++) {
    const t = ts[i]!;
    const r = rpm[i]!;
    const v = speedKph[i]!;
    let f = 0;
    // Without rpm, a report implies ignition on (gateways report while powered).
    if (r === r ? r > cfg.engineOnRpm : true) f |= FLAG_ENGINE_ON;
    if (v === v && v >= cfg.idleSpeedKph) f |= FLAG_MOVING;
    const c = coolant[i]!;
    if (!(c > cfg.coolantValidMinC && c < cfg.coolantValidMaxC)) {
      flags[i] = f | FLAG_OUT_OF_RANGE;
      continue;
    }
    if (anchorV !== anchorV || t - anchorT > gapMs) {
      anchorV = c;
      anchorT = t;
      pending = 0;
    } else if (Math.abs(c - anchorV) <= cfg.rateAllowanceC + rate * (t - anchorT)) {
      anchorV = c;
      anchorT = t;
      pending = 0;
    } else {
      f |= FLAG_RATE;
      if (pending > 0 && Math.abs(c - pendingV) <= cfg.rateAllowanceC + rate * (t - pendingT)) pending++;
      else pending = 1;
      pendingV = c;
      pendingT = t;
      if (pending >= cfg.jumpConfirmSamples) {
        // The new level persisted: it is real (e.g. a reconnect), accept it and its run-up.
        f &= ~FLAG_RATE;
        for (let j = i - 1, left = pending - 1; j >= 0 && left > 0; j--) {
          if ((flags[j]! & FLAG_RATE) !== 0) {
            flags[j] = flags[j]! & ~FLAG_RATE;
            left--;
          }
        }
        anchorV = c;
        anchorT = t;
        pending = 0;
      }
    }
    flags[i] = f;
  }
}

/**
 * Splits the stream into engine runs: maximal stretches of engine-on samples with no gap
 * longer than `runGapS`. Returns [start, end) index pairs (end exclusive).
 */
export function segmentRuns(ts: Float64Array, flags: Uint8Array, cfg: AnalysisConfig): Int32Array {
  const gapMs = cfg.runGapS * MS_PER_S;
  const out: number[] = [];
  let start = -1;
  let lastOn = -1;
  for (let i = 0; i < ts.length; i++) {
    if ((flags[i]! & FLAG_ENGINE_ON) === 0) continue;
    if (start >= 0 && ts[i]! - ts[lastOn]! > gapMs) {
      out.push(start, lastOn + 1);
      start = -1;
    }
    if (start < 0) start = i;
    lastOn = i;
  }
  if (start >= 0) out.push(start, lastOn + 1);
  return Int32Array.from(out);
}
