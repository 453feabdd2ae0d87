import type { AnalysisConfig } from './config.js';
import {
  FLAG_ENGINE_ON,
  FLAG_IMPLAUSIBLE,
  FLAG_MOVING,
  FLAG_OUT_OF_RANGE,
  FLAG_RATE,
  FLAG_WARM,
} from './sample-flags.js';
import { MS_PER_S, type SampleArrays } from './sample-arrays.js';
import { isTransportGap } from './transport-gap.js';
import type { VehicleProfile } from './vehicle-profile.js';
import { fitWarmupCurve, operatingMetrics } from './warmup-metrics.js';

export type StartKind = 'cold' | 'warm';
export type WarmupSuspension = 'sensor' | 'warm-restart' | 'short-run' | 'low-ambient' | 'idle-dominated';

/**
 * One engine run (flat and JSON-serialisable; `null` where a value cannot be computed).
 * Identified by `startMs`. Temperatures °C, durations s, speeds km/h.
 */
export interface RunMetrics {
  startMs: number;
  endMs: number;
  durationS: number;
  sampleCount: number;
  /** The run continues the stored run given as `previousRunEndMs`: do not store this partial copy. */
  truncatedStart: boolean;
  /** The run may still continue (no gap seen after it yet). */
  open: boolean;
  startKind: StartKind;
  /** Engine-off time before this run, s; null when the previous run is unknown. */
  soakS: number | null;
  thermostatOpenC: number;
  /** thermostatOpenC − 11.1 °C (the 20 °F criterion). */
  warmupTargetC: number;
  startCoolantC: number | null;
  startAmbientC: number | null;
  ambientMeanC: number | null;
  ambientMaxC: number | null;
  /** Time from start to the warm-up target; null if never reached. */
  timeToTargetS: number | null;
  /** Time from start to the thermostat rating; null if never reached. */
  timeToOpenS: number | null;
  /** Whether the warm-up may be judged (OBD-II monitor conditions, plausible sensor). */
  warmupEligible: boolean;
  warmupSuspendedReason: WarmupSuspension | null;
  /** Share of the warm-up spent idling (0..1). */
  warmupIdleFraction: number;
  /** Mean rise over the first 10 min (or until the target), °C/min. */
  heatingRateCPerMin: number | null;
  /** Coolant `naiveCheckAfterS` after start (default 15 min), °C. */
  coolantAtCheckC: number | null;
  newtonTauS: number | null;
  newtonTInfC: number | null;
  newtonT0C: number | null;
  newtonRmseC: number | null;
  plateauC: number | null;
  /** Peak after the thermostat first opens in this run (runs starting below the warm-up target). */
  overshootPeakC: number | null;
  overshootC: number | null;
  settlingTimeS: number | null;
  peakCoolantC: number | null;
  /** Fraction of running samples below `idleSpeedKph` (0..1). */
  idleFraction: number;
  meanSpeedKph: number | null;
  meanRpm: number | null;
  hotSeconds: number;
  hotEpisodeCount: number;
  hotPeakC: number | null;
  rateFlagCount: number;
  outOfRangeCount: number;
  /** Gaps lost in transport (the vehicle moving on both sides; engine-off stops are not gaps). */
  dropoutCount: number;
  missingS: number;
  /** Highest minus lowest plausible coolant reading, °C. */
  coolantRangeC: number | null;
  /**
   * The reading did not follow the engine: it moved less than `stuckMaxRangeC` in the first
   * `stuckWindowS` of a cold start, or not at all over a run of at least `flatRunMinS`.
   */
  stuck: boolean;
  /** startCoolant − startAmbient after a soak ≥ coldSoakMinS, °C. */
  coldSoakOffsetC: number | null;
  /** Sensor data too implausible for engine judgement. */
  excludedForSensor: boolean;
}

/** An overheating episode (hysteresis on the hot threshold), for day aggregation. */
export interface HotEpisode {
  startMs: number;
  endMs: number;
  peakC: number;
  idleS: number;
}

export interface RunContext {
  profile: VehicleProfile;
  cfg: AnalysisConfig;
  periodS: number;
  hotC: number;
  prevEndMs: number | null;
  truncatedStart: boolean;
  open: boolean;
  scratch: Float64Array;
  episodes: HotEpisode[];
}

const HEATING_RATE_WINDOW_S = 600;
const START_SEARCH_SAMPLES = 30;
/** A run with more than this share of implausible samples is excluded. */
const MAX_IMPLAUSIBLE_FRACTION = 0.02;
/** A soak offset beyond this multiple of the tolerance excludes the run by itself. */
const EXCLUDE_SOAK_OFFSET_FACTOR = 2;

const orNull = (v: number): number | null => (Number.isFinite(v) ? v : null);

/** Computes the metrics of the run [a, b) and marks its warm samples with FLAG_WARM. */
export function computeRunMetrics(
  samples: SampleArrays,
  flags: Uint8Array,
  a: number,
  b: number,
  ctx: RunContext,
): RunMetrics {
  const { ts, coolant, ambient, speedKph, rpm } = samples;
  const { cfg, profile, periodS, hotC } = ctx;
  const target = profile.thermostatOpenC - cfg.obdWarmupMarginC;
  const t0 = ts[a]!;
  let startCoolant = NaN;
  let startAmbient = NaN;
  for (let i = a; i < Math.min(b, a + START_SEARCH_SAMPLES); i++) {
    if (startCoolant !== startCoolant && (flags[i]! & FLAG_IMPLAUSIBLE) === 0) startCoolant = coolant[i]!;
    const am = ambient[i]!;
    if (startAmbient !== startAmbient && am >= cfg.ambientValidMinC && am <= cfg.ambientValidMaxC) startAmbient = am;
  }
  const soakS = ctx.prevEndMs === null ? null : (t0 - ctx.prevEndMs) / MS_PER_S;
  const cold =
    (soakS !== null && soakS >= cfg.coldStartSoakS) ||
    (startAmbient === startAmbient
      ? startCoolant - startAmbient <= cfg.coldStartNearAmbientC
      : startCoolant < target - cfg.coldStartDeficitC);

  let on = 0,
    idle = 0,
    plausible = 0,
    rateFlags = 0,
    outOfRange = 0,
    dropouts = 0,
    missingMs = 0;
  let ambSum = 0,
    ambN = 0,
    ambMax = -Infinity,
    spdSum = 0,
    spdN = 0,
    rpmSum = 0,
    rpmN = 0;
  let peak = -Infinity,
    low = Infinity,
    earlyMin = Infinity,
    earlyMax = -Infinity;
  let targetIdx = -1,
    openIdx = -1,
    checkC = NaN,
    rateC = NaN,
    warmupOn = 0,
    warmupIdle = 0;
  let hotStart = -1,
    hotPeak = -Infinity,
    hotIdleMs = 0,
    hotMs = 0,
    hotCount = 0,
    runHotPeak = -Infinity;
  const dropoutMs = cfg.dropoutPeriods * periodS * MS_PER_S;
  const earlyEnd = t0 + cfg.stuckWindowS * MS_PER_S;
  const checkAt = t0 + cfg.naiveCheckAfterS * MS_PER_S;
  const rateAt = t0 + HEATING_RATE_WINDOW_S * MS_PER_S;
  const warmupEnd = t0 + cfg.warmupFitMaxS * MS_PER_S;
  const exitC = hotC - cfg.hotHysteresisC;
  let warm = !cold;
  const closeEpisode = (endMs: number) => {
    if (endMs - ts[hotStart]! >= cfg.hotMinEpisodeS * MS_PER_S) {
      ctx.episodes.push({ startMs: ts[hotStart]!, endMs, peakC: hotPeak, idleS: hotIdleMs / MS_PER_S });
      hotCount++;
      hotMs += endMs - ts[hotStart]!;
      if (hotPeak > runHotPeak) runHotPeak = hotPeak;
    }
    hotStart = -1;
  };
  for (let i = a; i < b; i++) {
    const f = flags[i]!;
    const t = ts[i]!;
    const dt = i + 1 < b ? ts[i + 1]! - t : periodS * MS_PER_S;
    if (dt > dropoutMs && i + 1 < b && isTransportGap(f, flags[i + 1]!)) {
      dropouts++;
      missingMs += dt - periodS * MS_PER_S;
    }
    if ((f & FLAG_ENGINE_ON) === 0) continue;
    on++;
    const moving = (f & FLAG_MOVING) !== 0;
    if (!moving) idle++;
    if (targetIdx < 0 && t <= warmupEnd) {
      warmupOn++;
      if (!moving) warmupIdle++;
    }
    const am = ambient[i]!;
    if (am >= cfg.ambientValidMinC && am <= cfg.ambientValidMaxC) {
      ambSum += am;
      ambN++;
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
      if ((f & FLAG_OUT_OF_RANGE) !== 0) outOfRange++;
      if (warm) flags[i] = f | FLAG_WARM;
      continue;
    }
    plausible++;
    const c = coolant[i]!;
    if (c > peak) peak = c;
    if (c < low) low = c;
    if (t <= earlyEnd) {
      if (c < earlyMin) earlyMin = c;
      if (c > earlyMax) earlyMax = c;
    }
    if (checkC !== checkC && t >= checkAt) checkC = c;
    if (rateC !== rateC && (t >= rateAt || (targetIdx < 0 && c >= target)))
      rateC = (c - startCoolant) / ((t - t0) / 60_000);
    if (targetIdx < 0 && c >= target) {
      targetIdx = i;
      warm = true;
    }
    if (openIdx < 0 && c >= profile.thermostatOpenC) openIdx = i;
    if (warm) flags[i] = f | FLAG_WARM;
    if (hotStart < 0) {
      if (c >= hotC) {
        hotStart = i;
        hotPeak = c;
        hotIdleMs = 0;
      }
    } else if (c < exitC) {
      closeEpisode(t);
    } else {
      if (c > hotPeak) hotPeak = c;
      if (!moving) hotIdleMs += Math.min(dt, dropoutMs);
    }
  }
  if (hotStart >= 0) closeEpisode(ts[b - 1]!);

  const durationS = (ts[b - 1]! - t0) / MS_PER_S;
  const coldSoakOffsetC =
    soakS !== null && soakS >= cfg.coldSoakMinS && startAmbient === startAmbient && startCoolant === startCoolant
      ? startCoolant - startAmbient
      : null;
  const stuck =
    (cold &&
      durationS >= cfg.stuckWindowS &&
      target - startCoolant >= cfg.stuckMinDeficitC &&
      earlyMax - earlyMin <= cfg.stuckMaxRangeC) ||
    (durationS >= cfg.flatRunMinS && peak === low);
  const implausible = rateFlags + outOfRange;
  const excludedForSensor =
    stuck ||
    plausible === 0 ||
    implausible > MAX_IMPLAUSIBLE_FRACTION * on ||
    (coldSoakOffsetC !== null && Math.abs(coldSoakOffsetC) > EXCLUDE_SOAK_OFFSET_FACTOR * cfg.coldSoakToleranceC);
  const warmupIdleFraction = warmupOn > 0 ? warmupIdle / warmupOn : 0;
  let suspended: WarmupSuspension | null = null;
  if (excludedForSensor) suspended = 'sensor';
  else if (!cold) suspended = 'warm-restart';
  else if (durationS < cfg.minRunS) suspended = 'short-run';
  else if (startAmbient < cfg.obdMinAmbientC) suspended = 'low-ambient';
  else if (warmupIdleFraction > cfg.obdMaxIdleFraction) suspended = 'idle-dominated';

  const fit = cold && !excludedForSensor ? fitWarmupCurve(samples, flags, a, b, profile.thermostatOpenC, cfg) : null;
  const op = excludedForSensor
    ? { plateauC: null, overshootPeakC: null, overshootC: null, settlingTimeS: null }
    : operatingMetrics(
        samples,
        flags,
        a,
        b,
        startCoolant < target ? openIdx : -1,
        targetIdx,
        periodS,
        cfg,
        ctx.scratch,
      );
  return {
    startMs: t0,
    endMs: ts[b - 1]!,
    durationS,
    sampleCount: b - a,
    truncatedStart: ctx.truncatedStart,
    open: ctx.open,
    startKind: cold ? 'cold' : 'warm',
    soakS,
    thermostatOpenC: profile.thermostatOpenC,
    warmupTargetC: target,
    startCoolantC: orNull(startCoolant),
    startAmbientC: orNull(startAmbient),
    ambientMeanC: ambN > 0 ? ambSum / ambN : null,
    ambientMaxC: orNull(ambMax),
    timeToTargetS: cold && targetIdx >= 0 ? (ts[targetIdx]! - t0) / MS_PER_S : null,
    timeToOpenS: cold && openIdx >= 0 ? (ts[openIdx]! - t0) / MS_PER_S : null,
    warmupEligible: suspended === null,
    warmupSuspendedReason: suspended,
    warmupIdleFraction,
    heatingRateCPerMin: cold ? orNull(rateC) : null,
    coolantAtCheckC: cold ? orNull(checkC) : null,
    newtonTauS: fit?.tauS ?? null,
    newtonTInfC: fit?.tInfC ?? null,
    newtonT0C: fit?.t0C ?? null,
    newtonRmseC: fit?.rmseC ?? null,
    ...op,
    peakCoolantC: orNull(peak),
    idleFraction: on > 0 ? idle / on : 0,
    meanSpeedKph: spdN > 0 ? spdSum / spdN : null,
    meanRpm: rpmN > 0 ? rpmSum / rpmN : null,
    hotSeconds: hotMs / MS_PER_S,
    hotEpisodeCount: hotCount,
    hotPeakC: orNull(runHotPeak),
    rateFlagCount: rateFlags,
    outOfRangeCount: outOfRange,
    dropoutCount: dropouts,
    missingS: missingMs / MS_PER_S,
    coolantRangeC: orNull(peak - low),
    stuck,
    coldSoakOffsetC,
    excludedForSensor,
  };
}
