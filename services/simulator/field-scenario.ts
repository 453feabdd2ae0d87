import type { Duty } from './duty-cycles.js';
import { FAULT_KINDS, type FaultKind, type FaultSpec } from './faults.js';
import { ALL_VARIATION, drawVariation, type VariationSwitches } from './field-variation.js';
import { hashSeed, Rng } from './prng.js';
import { buildVehicle, type Depot, type SimVehicle } from './sim-vehicle.js';
import type { Climate } from './weather.js';
import { DAY_MS } from '../time/durations.js';

/**
 * The field scenario: randomised fleets for evaluating detection as the field would. Like the
 * evaluation scenario it mixes healthy vehicles and every fault kind, but every fault goes into
 * every climate and duty (whether it shows is judged afterwards against a fault-free twin), half
 * the faults grow over days instead of starting at once, and every vehicle carries the
 * real-world variation of field-variation.ts (on by default, switchable per group).
 */

const CLIMATE_ORDER: readonly Climate[] = ['cold', 'temperate', 'hot'];
/** Long haul first: the third healthy vehicle (hot, long haul) is already in the hot heavy-duty cohort. */
const DUTY_ORDER: readonly Duty[] = ['long-haul', 'urban-delivery', 'bus', 'service-van'];
/** Share of vehicles that are healthy. */
const HEALTHY_SHARE = 0.5;
/** Share of faults that grow gradually, and over how many days (3–21). */
const GRADUAL_SHARE = 0.5;
const RAMP_DAYS: readonly [number, number] = [3, 21];
/** Onsets leave at least this much history before and this much time after, days ... */
const MIN_HISTORY_DAYS = 7;
const MIN_AFTER_DAYS = 7;
/** ... and fall between these shares of the period. */
const ONSET_SHARE: readonly [number, number] = [0.4, 0.8];

export interface FieldFleetOptions {
  startMs: number;
  days: number;
  seed: number;
  vehicles: number;
  /** Fleet id and vehicle-id prefix (default 'field', 'FV'). */
  fleetId?: string;
  idPrefix?: string;
  /** Which groups of variation are on (default all). */
  variation?: Partial<VariationSwitches>;
}

/** Onset day for a period of `days`. */
function onsetDay(days: number, rng: Rng): number {
  const lo = Math.max(MIN_HISTORY_DAYS, ONSET_SHARE[0] * days);
  const hi = Math.max(lo, Math.min(days - MIN_AFTER_DAYS, ONSET_SHARE[1] * days));
  return rng.uniform(lo, hi);
}

/**
 * Plans a field fleet: three depots (one per climate, each at a random UTC offset), healthy
 * vehicles of every duty in every climate, faulty ones with every kind in turn.
 * @example planFieldFleet({ startMs: Date.UTC(2027, 0, 4), days: 35, seed: 1001, vehicles: 24 })
 */
export function planFieldFleet(opts: FieldFleetOptions): SimVehicle[] {
  const fleetId = opts.fleetId ?? 'field';
  const prefix = opts.idPrefix ?? 'FV';
  const on: VariationSwitches = { ...ALL_VARIATION, ...opts.variation };
  const rng = new Rng(hashSeed(opts.seed, 'fleet:field'));
  const varRng = new Rng(hashSeed(opts.seed, 'fleet:field-variation'));
  const depots: Record<Climate, Depot> = {
    cold: { name: `${fleetId} north depot`, climate: 'cold', utcOffsetHours: rng.int(-8, 10) },
    temperate: { name: `${fleetId} central depot`, climate: 'temperate', utcOffsetHours: rng.int(-8, 10) },
    hot: { name: `${fleetId} south depot`, climate: 'hot', utcOffsetHours: rng.int(-8, 10) },
  };
  const healthy = Math.round(HEALTHY_SHARE * opts.vehicles);
  const fleet: SimVehicle[] = [];
  for (let i = 0; i < opts.vehicles; i++) {
    const id = `${prefix}-${String(i + 1).padStart(3, '0')}`;
    const k = i - healthy;
    // Healthy vehicles: climates rotate fastest, duties more slowly, so every duty meets every
    // climate. Faulty ones take up the rotation where the previous seed's fleet of the same size
    // left it (position g), so small fleets still cover every kind over consecutive seeds; each
    // round through the kinds shifts the climate by one, so every kind meets every climate.
    const g = opts.seed * Math.max(0, opts.vehicles - healthy) + k;
    const round = Math.floor(g / FAULT_KINDS.length);
    const climate = CLIMATE_ORDER[(k < 0 ? i : g + round) % CLIMATE_ORDER.length] as Climate;
    const duty = DUTY_ORDER[Math.floor((k < 0 ? i : g) / CLIMATE_ORDER.length) % DUTY_ORDER.length] as Duty;
    const faults: FaultSpec[] = [];
    if (k >= 0) {
      const kind = FAULT_KINDS[g % FAULT_KINDS.length] as FaultKind;
      const onsetMs = opts.startMs + Math.round(onsetDay(opts.days, rng) * 24) * (DAY_MS / 24);
      const severity = Math.round(rng.uniform(0.5, 1) * 100) / 100;
      const ramp = rng.uniform(RAMP_DAYS[0], RAMP_DAYS[1]);
      faults.push({
        kind,
        onsetMs,
        severity,
        ...(on.gradualFaults && rng.chance(GRADUAL_SHARE) ? { rampDays: Math.round(ramp) } : {}),
      });
    }
    const v = buildVehicle(id, fleetId, depots[climate], duty, rng, faults);
    v.variation = drawVariation(varRng, v, on);
    fleet.push(v);
  }
  return fleet;
}
