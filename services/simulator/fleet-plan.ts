import { planDemoFleet } from './demo-scenario.js';
import { planEvaluationFleet } from './evaluation-scenario.js';
import type { SimVehicle } from './sim-vehicle.js';
import type { SimOptions } from './simulate-vehicle.js';

/** 'demo': an invented delivery company; 'evaluation': a labelled fleet for detection quality. */
export type Scenario = 'demo' | 'evaluation';

/**
 * Plans a fleet: vehicle profiles, depots, duties and injected faults, deterministic for the
 * seed. Default scenario 'demo'.
 * @example planFleet({ startMs: Date.UTC(2026, 9, 5), days: 49, seed: 7, vehicles: 36 })
 */
export function planFleet(opts: SimOptions & { vehicles: number; scenario?: Scenario }): SimVehicle[] {
  if (!Number.isInteger(opts.vehicles) || opts.vehicles < 1)
    throw new RangeError(`vehicles must be a positive integer, got ${opts.vehicles}`);
  if (!(opts.days > 0)) throw new RangeError(`days must be positive, got ${opts.days}`);
  const scenario = opts.scenario ?? 'demo';
  return scenario === 'evaluation' ? planEvaluationFleet(opts) : planDemoFleet(opts);
}
