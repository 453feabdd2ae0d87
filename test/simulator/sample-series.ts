/**
 * Test helpers: gather a vehicle's samples into plain arrays, find cold starts, cut windows.
 */
import { simulateVehicle, type SimOptions, type SimVehicle } from '../../services/simulator/index.js';

export interface Series {
  ts: number[];
  coolant: number[];
  coolantTrue: number[];
  ambient: number[];
  speedKph: number[];
  rpm: number[];
}

/** Every sample of one vehicle as arrays (fine for a few weeks of one vehicle). */
export function collect(v: SimVehicle, opts: SimOptions): Series {
  const s: Series = { ts: [], coolant: [], coolantTrue: [], ambient: [], speedKph: [], rpm: [] };
  for (const c of simulateVehicle(v, opts)) {
    for (let i = 0; i < c.length; i++) {
      s.ts.push(c.ts[i] as number);
      s.coolant.push(c.coolant[i] as number);
      s.coolantTrue.push(c.coolantTrue[i] as number);
      s.ambient.push(c.ambient[i] as number);
      s.speedKph.push(c.speedKph[i] as number);
      s.rpm.push(c.rpm[i] as number);
    }
  }
  return s;
}

/** Engine-off time that makes the next start a cold start, ms. */
export const COLD_SOAK_MS = 4 * 3_600_000;

/**
 * Indices of cold starts: the first sample after at least COLD_SOAK_MS without samples, with
 * the true coolant temperature within 8 °C of ambient (an engine soaked to ambient).
 */
export function coldStarts(s: Series, fromMs = -Infinity): number[] {
  const starts: number[] = [];
  for (let i = 0; i < s.ts.length; i++) {
    const t = s.ts[i] as number;
    const gap = i === 0 ? Infinity : t - (s.ts[i - 1] as number);
    if (t >= fromMs && gap >= COLD_SOAK_MS && Math.abs((s.coolantTrue[i] as number) - (s.ambient[i] as number)) < 8)
      starts.push(i);
  }
  return starts;
}

/** Samples from index i0 for `minutes`, x in minutes since i0, with NaN where samples are over 90 s apart. */
export function window(
  s: Series,
  i0: number,
  minutes: number,
  field: keyof Series = 'coolant',
): { x: number[]; y: number[] } {
  const x: number[] = [];
  const y: number[] = [];
  const t0 = s.ts[i0] as number;
  for (let i = i0; i < s.ts.length && (s.ts[i] as number) - t0 <= minutes * 60_000; i++) {
    if (i > i0 && (s.ts[i] as number) - (s.ts[i - 1] as number) > 90_000) {
      x.push(((s.ts[i] as number) - t0) / 60_000);
      y.push(Number.NaN);
    }
    x.push(((s.ts[i] as number) - t0) / 60_000);
    y.push(s[field][i] as number);
  }
  return { x, y };
}
