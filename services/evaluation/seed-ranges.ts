import { planFieldFleet } from '../simulator/field-scenario.js';
import type { SimVehicle } from '../simulator/index.js';
import { hashSeed, Rng } from '../simulator/prng.js';
import { DAY_MS } from '../time/durations.js';

/**
 * Held-out discipline: fleets whose seeds lie in the tuning range may be looked at while
 * thresholds are chosen; fleets in the reporting range are only ever reported. `npm run
 * evaluate` uses the reporting range unless told otherwise (services/evaluation/README.md names both).
 */
export const SEED_RANGES = {
  tuning: { first: 1000, last: 4999 },
  reporting: { first: 5000, last: 9999 },
} as const;
export type SeedRange = keyof typeof SEED_RANGES;

/** Fleets start on a day drawn from this year, so every season comes up. */
const FIRST_START_MS = Date.UTC(2025, 0, 6);
const START_SPREAD_DAYS = 364;

/** One planned evaluation fleet. */
export interface FleetPlan {
  seed: number;
  fleetId: string;
  startMs: number;
  days: number;
  fleet: SimVehicle[];
}

/** The range a seed belongs to, or null. */
export function seedRangeOf(seed: number): SeedRange | null {
  for (const [name, r] of Object.entries(SEED_RANGES) as Array<[SeedRange, { first: number; last: number }]>) {
    if (seed >= r.first && seed <= r.last) return name;
  }
  return null;
}

/**
 * The field fleet of a seed: its start day (any season), depots, vehicles and faults.
 * @example planForSeed(5000, { vehicles: 24, days: 35 }).fleet.length // 24
 */
export function planForSeed(seed: number, size: { vehicles: number; days: number }): FleetPlan {
  const rng = new Rng(hashSeed(seed, 'evaluation:start'));
  const startMs = FIRST_START_MS + Math.floor(rng.uniform(0, START_SPREAD_DAYS)) * DAY_MS;
  const fleetId = `field-${seed}`;
  const fleet = planFieldFleet({
    startMs,
    days: size.days,
    seed,
    vehicles: size.vehicles,
    fleetId,
    idPrefix: `V${seed}`,
  });
  return { seed, fleetId, startMs, days: size.days, fleet };
}
