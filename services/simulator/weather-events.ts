import type { Rng } from './prng.js';
import type { Climate } from './weather.js';
import { DAY_MS } from '../time/durations.js';

/**
 * Weather that changes over weeks: heat waves, cold snaps and warm spells in winter, as
 * anomalies added to a depot's ambient temperature. Each rises and falls over a day (half a
 * cosine) and holds its full size in between.
 */
export interface WeatherAnomaly {
  /** Start, epoch ms. */
  startMs: number;
  /** Length including the ramps, days (3–10). */
  days: number;
  /** Full size, °C: +6..+12 (heat wave, warm spell; +4..+8 where it is hot already), −8..−15 (cold snap). */
  deltaC: number;
}

/** Ramp in and out of an anomaly, ms. */
const RAMP_MS = DAY_MS;
/** About one weather event every this many days at a depot. */
const DAYS_PER_EVENT = 18;

/**
 * Draws a depot's weather events over [startMs, startMs + days): heat waves where summers are
 * warm, cold snaps where winters are cold, a warm week in winter anywhere.
 * @example drawWeatherEvents('cold', Date.UTC(2026, 0, 5), 56, rng) // e.g. a cold snap and a warm week
 */
export function drawWeatherEvents(climate: Climate, startMs: number, days: number, rng: Rng): WeatherAnomaly[] {
  const out: WeatherAnomaly[] = [];
  const count = Math.max(1, Math.round(days / DAYS_PER_EVENT + rng.uniform(-0.5, 0.5)));
  for (let i = 0; i < count; i++) {
    const length = rng.uniform(3, 10);
    const at = startMs + rng.uniform(0, Math.max(0, days - 2)) * DAY_MS;
    const kind = rng.next();
    let delta: number;
    if (climate === 'hot') delta = kind < 0.7 ? rng.uniform(4, 8) : -rng.uniform(8, 12);
    else if (climate === 'cold') delta = kind < 0.6 ? -rng.uniform(8, 15) : rng.uniform(6, 12);
    else delta = kind < 0.5 ? rng.uniform(6, 12) : -rng.uniform(8, 15);
    out.push({ startMs: at, days: length, deltaC: delta });
  }
  return out;
}

/** The anomalies' sum at epoch ms t, °C. */
export function anomalyAt(anomalies: readonly WeatherAnomaly[], tMs: number): number {
  let sum = 0;
  for (const a of anomalies) {
    const end = a.startMs + a.days * DAY_MS;
    if (tMs <= a.startMs || tMs >= end) continue;
    const ramp = Math.min(RAMP_MS, (end - a.startMs) / 2);
    const edge = Math.min(tMs - a.startMs, end - tMs);
    sum += a.deltaC * (edge >= ramp ? 1 : 0.5 - 0.5 * Math.cos((Math.PI * edge) / ramp));
  }
  return sum;
}
