import { analyseSamples } from './analyse-samples.js';
import { resolveConfig } from './config.js';
import type { SampleArrays } from './sample-arrays.js';
import { DEFAULT_VEHICLE_PROFILE } from './vehicle-profile.js';

const DAY_MS = 86_400_000;
const PERIOD_MS = 10_000;
/** Typical day of the synthetic stream: three runs of 3 h with a cold start each (hours after midnight). */
const RUN_STARTS_H = [6, 11, 16];
const RUN_HOURS = 3;

/** Deterministic synthetic readings for `days` days (Newton warm-up, regulated plateau, noise, quantised). */
export function syntheticReadings(days: number, startMs = Date.UTC(2026, 9, 5)): SampleArrays {
  const perRun = (RUN_HOURS * 3_600_000) / PERIOD_MS;
  const n = days * RUN_STARTS_H.length * perRun;
  const s: SampleArrays = {
    ts: new Float64Array(n), coolant: new Float64Array(n), ambient: new Float64Array(n), speedKph: new Float64Array(n), rpm: new Float64Array(n),
  };
  let k = 0;
  let seed = 12345;
  const noise = () => ((seed = (seed * 1103515245 + 12345) >>> 0) / 2 ** 32 - 0.5);
  for (let d = 0; d < days; d++) {
    for (const h of RUN_STARTS_H) {
      const t0 = startMs + d * DAY_MS + h * 3_600_000;
      const ambient = 10 + 5 * Math.sin(d / 5);
      for (let i = 0; i < perRun; i++, k++) {
        const t = i * (PERIOD_MS / 1000);
        s.ts[k] = t0 + i * PERIOD_MS;
        s.coolant[k] = Math.round(Math.min(110 - (110 - ambient) * Math.exp(-t / 600), 90) + noise());
        s.ambient[k] = ambient;
        s.speedKph[k] = i % 60 < 10 ? 0 : 50 + 20 * noise();
        s.rpm[k] = i % 60 < 10 ? 750 : 1600;
      }
    }
  }
  return s;
}

export interface ThroughputResult {
  readings: number;
  seconds: number;
  readingsPerSecond: number;
}

/**
 * Measures analyseSamples (per-run metrics, per-day aggregates, sensor events) over typed
 * arrays on one core: best of `repeats` passes over `days` days of synthetic readings.
 * @example measureAnalysisThroughput(30).readingsPerSecond // ≈ 1e7 on a current core
 */
export function measureAnalysisThroughput(days = 60, repeats = 5): ThroughputResult {
  const input = syntheticReadings(days);
  const cfg = resolveConfig();
  let best = Infinity;
  analyseSamples(input, DEFAULT_VEHICLE_PROFILE, cfg); // warm-up of the JIT
  for (let r = 0; r < repeats; r++) {
    const t = performance.now();
    analyseSamples(input, DEFAULT_VEHICLE_PROFILE, cfg);
    best = Math.min(best, (performance.now() - t) / 1000);
  }
  return { readings: input.ts.length, seconds: best, readingsPerSecond: input.ts.length / best };
}
