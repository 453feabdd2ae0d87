import type { AnalysisConfig } from '../config.js';
import type { RunMetrics } from '../run-metrics.js';

/** One run reduced to a judged quantity y and the conditions x that explain part of it. */
export interface FeatureRow {
  run: RunMetrics;
  x: number[];
  y: number;
  /** y is only a lower bound (e.g. the target was never reached before the run ended). */
  censored: boolean;
}

/** A run quantity judged against history and peers. */
export interface RunFeature {
  name: 'warmupTime' | 'plateau' | 'runPeak' | 'overshoot' | 'soakOffset';
  /** RunMetrics field shown as evidence. */
  metric: keyof RunMetrics;
  /** +1: higher than expected is bad; −1: lower is bad. */
  direction: 1 | -1;
  /** Index of the ambient predictor (°C) in x, for the scorer's ambient range check; default 0. */
  ambientPredictor?: number;
  /** Per predictor: true when predictions may extrapolate beyond the fitted range (default: clamped). */
  extrapolates?: readonly boolean[];
  extract(r: RunMetrics, cfg: AnalysisConfig): Omit<FeatureRow, 'run'> | null;
  /** Shown value of the evidence for a row of run `r` (inverse of the y transform). */
  display(y: number, r: RunMetrics): number;
}

/** Ambient assumed when the gateway sends none, °C (so x stays numeric; common practice). */
const DEFAULT_AMBIENT_C = 15;
/** Smallest warm-up deficit used in the log model, °C. */
const MIN_DEFICIT_C = 5;

const ambientOf = (r: RunMetrics) => r.startAmbientC ?? r.ambientMeanC ?? DEFAULT_AMBIENT_C;

/**
 * Warm-up time: ln(time to the 20 °F target), explained by ln(start deficit), ambient at
 * start and the share of idling. Censored by the run's length when the target was never
 * reached. The ambient range check must look at the second predictor (it used to test
 * ln(deficit) and let cold-snap runs through against a mild-weather baseline). ln(deficit)
 * extrapolates: a first-order warm-up takes τ·ln((T∞ − T0)/(T∞ − T_target)), so a colder
 * start lengthens it in that form.
 */
export const WARMUP_TIME: RunFeature = {
  name: 'warmupTime',
  metric: 'timeToTargetS',
  direction: 1,
  ambientPredictor: 1,
  extrapolates: [true, false, false],
  extract(r) {
    if (!r.warmupEligible || r.startCoolantC === null) return null;
    const x = [
      Math.log(Math.max(r.warmupTargetC - r.startCoolantC, MIN_DEFICIT_C)),
      ambientOf(r),
      r.warmupIdleFraction,
    ];
    if (r.timeToTargetS !== null) return { x, y: Math.log(Math.max(r.timeToTargetS, 1)), censored: false };
    return { x, y: Math.log(Math.max(r.durationS, 1)), censored: true };
  },
  display: (y) => Math.exp(y),
};

/**
 * Plateau in steady driving relative to the thermostat rating, explained by ambient and
 * speed. Judged with more care than the OBD-II warm-up monitor: only on runs that idle at most
 * `plateauMaxIdleFraction` of their time (the monitor stops at half) and not in frost (below
 * `coolRunMinAmbientC`), where the cab heater alone keeps healthy engines of light-load
 * vehicles below their rating.
 */
export const PLATEAU: RunFeature = {
  name: 'plateau',
  metric: 'plateauC',
  direction: -1,
  extract(r, cfg) {
    if (r.plateauC === null || r.excludedForSensor) return null;
    if ((r.ambientMeanC ?? Infinity) < cfg.coolRunMinAmbientC || r.idleFraction > cfg.plateauMaxIdleFraction)
      return null;
    return {
      x: [r.ambientMeanC ?? DEFAULT_AMBIENT_C, (r.meanSpeedKph ?? 0) / 100],
      y: r.plateauC - r.thermostatOpenC,
      censored: false,
    };
  },
  display: (y) => y,
};

/** Runs shorter than this say little about the temperature a warm engine holds, s. */
const RUN_PEAK_MIN_S = 1200;

/**
 * Highest temperature of a run relative to the thermostat rating, explained by ambient and
 * speed: a working thermostat holds the rating on any run of 20 min or more; one stuck open
 * lets the engine run cool (and then never reaches the target, so it has no plateau).
 * Same care as the plateau: not in frost, not when idling dominates.
 */
export const RUN_PEAK: RunFeature = {
  name: 'runPeak',
  metric: 'peakCoolantC',
  direction: -1,
  extract(r, cfg) {
    if (r.peakCoolantC === null || r.excludedForSensor || r.durationS < RUN_PEAK_MIN_S) return null;
    if ((r.ambientMeanC ?? Infinity) < cfg.coolRunMinAmbientC || r.idleFraction > cfg.obdMaxIdleFraction) return null;
    return {
      x: [r.ambientMeanC ?? DEFAULT_AMBIENT_C, (r.meanSpeedKph ?? 0) / 100],
      y: r.peakCoolantC - r.thermostatOpenC,
      censored: false,
    };
  },
  display: (y) => y,
};

/**
 * Overshoot: how far past its rating the coolant climbs after the thermostat first opens
 * (cold starts, and warm restarts that began below the warm-up target: a sticking
 * thermostat sticks again every time it closes), explained by ambient. Judged against the
 * rating rather than the settled temperature, because on cold days the engine settles
 * below its rating (heater, wind) and the peak-to-plateau difference then swings widely
 * on healthy thermostats too; the evidence shows the peak in °C.
 */
export const OVERSHOOT: RunFeature = {
  name: 'overshoot',
  metric: 'overshootPeakC',
  direction: 1,
  extract(r) {
    if (r.overshootPeakC === null || r.excludedForSensor) return null;
    return { x: [ambientOf(r)], y: r.overshootPeakC - r.thermostatOpenC, censored: false };
  },
  display: (y, r) => y + r.thermostatOpenC,
};

/** Start coolant minus ambient after a long soak (a working sensor reads ambient). */
export const SOAK_OFFSET: RunFeature = {
  name: 'soakOffset',
  metric: 'coldSoakOffsetC',
  direction: 1,
  extract(r) {
    if (r.coldSoakOffsetC === null || r.stuck) return null;
    return { x: [], y: r.coldSoakOffsetC, censored: false };
  },
  display: (y) => y,
};

export const RUN_FEATURES = [WARMUP_TIME, PLATEAU, RUN_PEAK, OVERSHOOT, SOAK_OFFSET] as const;

/** Rows of a feature over runs (runs whose feature is undefined are skipped). */
export function featureRows(runs: readonly RunMetrics[], f: RunFeature, cfg: AnalysisConfig): FeatureRow[] {
  const out: FeatureRow[] = [];
  for (const run of runs) {
    const e = f.extract(run, cfg);
    if (e) out.push({ run, ...e });
  }
  return out;
}
