import type { RunMetrics } from '../../../services/analysis/run-metrics.js';
import { DAY_MS } from '../../../services/time/durations.js';

/** Monday 4 January 2027, 00:00 UTC: day 0 of the hand-made histories. */
export const FIXTURE_START_MS = Date.UTC(2027, 0, 4);

/**
 * A plausible morning cold start (07:00 UTC on `day`) after a 12 h soak at −10 °C, 88 °C
 * thermostat, one hour of driving that reaches the 76.9 °C target after 15 min; `over`
 * replaces any field. Hand-made filler for the finding rules' unit tests.
 */
export function coldStart(day: number, over: Partial<RunMetrics> = {}): RunMetrics {
  const startMs = FIXTURE_START_MS + day * DAY_MS + 7 * 3_600_000;
  return {
    startMs,
    endMs: startMs + 3_600_000,
    durationS: 3600,
    sampleCount: 360,
    truncatedStart: false,
    open: false,
    startKind: 'cold',
    soakS: 12 * 3600,
    thermostatOpenC: 88,
    warmupTargetC: 76.9,
    startCoolantC: -8,
    startAmbientC: -10,
    ambientMeanC: -8,
    ambientMaxC: -6,
    timeToTargetS: 900,
    timeToOpenS: 1100,
    warmupEligible: false,
    warmupSuspendedReason: 'low-ambient',
    warmupIdleFraction: 0.2,
    heatingRateCPerMin: 6,
    coolantAtCheckC: 80,
    newtonTauS: 600,
    newtonTInfC: 92,
    newtonT0C: -8,
    newtonRmseC: 0.5,
    plateauC: 87,
    overshootPeakC: 93,
    overshootC: 5,
    settlingTimeS: 300,
    peakCoolantC: 93,
    idleFraction: 0.2,
    meanSpeedKph: 40,
    meanRpm: 1400,
    hotSeconds: 0,
    hotEpisodeCount: 0,
    hotPeakC: null,
    rateFlagCount: 0,
    outOfRangeCount: 0,
    dropoutCount: 0,
    missingS: 0,
    coolantRangeC: 100,
    stuck: false,
    coldSoakOffsetC: 2,
    excludedForSensor: false,
    ...over,
  };
}
