import { describe, expect, it } from 'vitest';
import type { Climate, Duty } from '../../services/simulator/index.js';
import { Rng } from '../../services/simulator/prng.js';
import { buildVehicle } from '../../services/simulator/sim-vehicle.js';
import { coldStarts, collect, type Series } from './sample-series.js';

const START_MS = Date.UTC(2026, 9, 5);
/** Warm-up criterion: within 20 °F (11.1 °C) of the thermostat's nominal regulating temperature
 * (California OBD-II thermostat monitor, 13 CCR 1968.2(e)(10)). */
const OBD_WARM_MARGIN_C = 11;
/** Engine-running time to reach it from a cold start, min (common practice bounds, from memory:
 * light duty 5–20 min of driving, heavy duty up to about 40 min with idling in the cold). */
const WARM_UP_LIMIT_MIN = { light: 25, heavy: 45 } as const;
/** A healthy engine rarely runs hotter than this above its rating, °C (common practice). */
const HOT_EXCURSION_C = 15;

/**
 * Engine-running minutes from a cold start until the true coolant reaches the threshold (NaN:
 * not that day), and the share of that time spent idling.
 */
function warmUp(s: Series, i0: number, thresholdC: number): { minutes: number; idleShare: number } {
  let runningMs = 0;
  let idleMs = 0;
  for (let i = i0 + 1; i < s.ts.length; i++) {
    const dt = (s.ts[i] as number) - (s.ts[i - 1] as number);
    if (dt > 4 * 3_600_000) break;
    if (dt <= 60_000) {
      runningMs += dt; // longer gaps are engine-off stops (or lost samples): not counted
      if (s.speedKph[i] === 0) idleMs += dt;
    }
    if ((s.coolantTrue[i] as number) >= thresholdC)
      return { minutes: runningMs / 60_000, idleShare: idleMs / runningMs };
  }
  return { minutes: Number.NaN, idleShare: runningMs > 0 ? idleMs / runningMs : 1 };
}

const CASES: { climate: Climate; duty: Duty }[] = [
  { climate: 'cold', duty: 'urban-delivery' },
  { climate: 'cold', duty: 'long-haul' },
  { climate: 'cold', duty: 'bus' },
  { climate: 'temperate', duty: 'service-van' },
  { climate: 'temperate', duty: 'bus' },
  { climate: 'hot', duty: 'urban-delivery' },
  { climate: 'hot', duty: 'long-haul' },
];

describe('healthy vehicles', () => {
  for (const { climate, duty } of CASES) {
    it(`warm up to within 11 °C of the rating in plausible time and hold near the rating (${duty}, ${climate})`, () => {
      const v = buildVehicle('H-1', 'test', { name: climate, climate, utcOffsetHours: 0 }, duty, new Rng(11));
      const s = collect(v, { startMs: START_MS, days: 21, seed: 4 });
      const light = v.engineFamily.startsWith('Vantor');
      const starts = coldStarts(s);
      expect(starts.length).toBeGreaterThanOrEqual(10);
      // Like the OBD monitor, skip warm-ups spent mostly idling (the monitor is suspended when
      // idling exceeds half the warm-up time: 13 CCR 1968.2(e)(10), secondary sources).
      const warmUps = starts
        .map((i) => warmUp(s, i, v.thermostatOpenC - OBD_WARM_MARGIN_C))
        .filter((w) => w.idleShare <= 0.5);
      expect(warmUps.length).toBeGreaterThanOrEqual(3);
      const inTime = warmUps.filter((w) => w.minutes <= WARM_UP_LIMIT_MIN[light ? 'light' : 'heavy']).length;
      expect(inTime / warmUps.length).toBeGreaterThanOrEqual(0.85);
      // Warm operation: samples once the engine has reached the threshold in each run.
      const warm: number[] = [];
      let reached = false;
      for (let i = 0; i < s.ts.length; i++) {
        if (i > 0 && (s.ts[i] as number) - (s.ts[i - 1] as number) > 4 * 3_600_000) reached = false;
        if ((s.coolantTrue[i] as number) >= v.thermostatOpenC - OBD_WARM_MARGIN_C) reached = true;
        if (reached) warm.push(s.coolantTrue[i] as number);
      }
      warm.sort((a, b) => a - b);
      const median = warm[Math.floor(warm.length / 2)] as number;
      expect(median).toBeGreaterThan(v.thermostatOpenC - 6);
      expect(median).toBeLessThan(v.thermostatOpenC + 9);
      const hot = warm.filter((c) => c > v.thermostatOpenC + HOT_EXCURSION_C).length;
      expect(hot / warm.length).toBeLessThan(0.005);
    });
  }
});
