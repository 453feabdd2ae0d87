import { analyseSamples } from '../services/analysis/analyse-samples.js';
import { resolveConfig } from '../services/analysis/config.js';
import type { SampleArrays } from '../services/analysis/sample-arrays.js';
import { planFleet, simulateVehicle, type SimVehicle } from '../services/simulator/index.js';

export interface AnalysisLibraryBenchResult {
  vehicles: number;
  readings: number;
  /** The first pass, JIT still cold, readings/s. */
  firstPassPerS: number;
  /** The best of the following passes, readings/s. */
  bestPerS: number;
}

function concatenated(v: SimVehicle, startMs: number, days: number, seed: number): SampleArrays {
  const parts = [...simulateVehicle(v, { startMs, days, seed })];
  const n = parts.reduce((s, c) => s + c.length, 0);
  const column = (k: 'ts' | 'coolant' | 'ambient' | 'speedKph' | 'rpm') => {
    const out = new Float64Array(n);
    let at = 0;
    for (const c of parts) {
      out.set(c[k].subarray(0, c.length), at);
      at += c.length;
    }
    return out;
  };
  return {
    ts: column('ts'),
    coolant: column('coolant'),
    ambient: column('ambient'),
    speedKph: column('speedKph'),
    rpm: column('rpm'),
  };
}

/**
 * analyseSamples (runs, warm-up fits, overshoot, day aggregates, sensor checks) over the typed
 * arrays of a simulated fleet — realistic runs, stops and faults, not a synthetic sine — on one
 * core, after the simulation is done.
 */
export function benchAnalysisLibrary(vehicles = 16, days = 30, passes = 6): AnalysisLibraryBenchResult {
  const startMs = Date.UTC(2026, 9, 5);
  const fleet = planFleet({ vehicles, days, seed: 3, startMs, scenario: 'demo' });
  const inputs = fleet.map((v) => ({
    v,
    input: concatenated(v, startMs, days, 3),
    cfg: resolveConfig(v.engineFamily),
  }));
  const readings = inputs.reduce((s, x) => s + x.input.ts.length, 0);
  const rates: number[] = [];
  for (let pass = 0; pass < passes; pass++) {
    const t = performance.now();
    for (const { v, input, cfg } of inputs) analyseSamples(input, v, cfg);
    rates.push(readings / ((performance.now() - t) / 1000));
  }
  return { vehicles, readings, firstPassPerS: rates[0]!, bestPerS: Math.max(...rates.slice(1)) };
}
