import type { Duty } from './duty-cycles.js';
import { FAULT_KINDS, type FaultKind } from './faults.js';
import { hashSeed, Rng } from './prng.js';
import { buildVehicle, type Depot, type SimVehicle } from './sim-vehicle.js';
import type { Climate } from './weather.js';
import { DAY_MS } from '../time/durations.js';

/**
 * The evaluation scenario: a fleet for measuring detection quality. Every fault kind appears
 * several times (at least 6 each from 70 vehicles up; from 94 up every vehicle beyond the 54
 * faulty ones is healthy, at least 10 per group), on vehicles where it shows; healthy
 * vehicles cover cold, temperate and hot climates and heavy load (long haul in the heat),
 * so false alarms on normal-but-unusual behaviour can be counted. Onsets leave at least
 * three weeks of healthy history when the run is 36 days or longer.
 */

export const EVALUATION_FLEET_ID = 'evaluation';
export const EVALUATION_DEPOTS: Readonly<Record<Climate, Depot>> = {
  cold: { name: 'North Yard', climate: 'cold', utcOffsetHours: 0 },
  temperate: { name: 'Central Yard', climate: 'temperate', utcOffsetHours: 0 },
  hot: { name: 'South Yard', climate: 'hot', utcOffsetHours: 0 },
};

/** Healthy groups, filled in turn. 'heavy-load' is long haul in the hot climate. */
const HEALTHY_GROUPS = ['cold', 'temperate', 'hot', 'heavy-load'] as const;
const LIGHT_DUTIES: readonly Duty[] = ['urban-delivery', 'bus', 'service-van', 'long-haul'];
const HOT_DUTIES: readonly Duty[] = ['urban-delivery', 'bus', 'service-van'];

/** Where each fault kind is placed so that its signature can show (climates, duties rotated). */
const FAULT_PLACEMENT: Readonly<Record<FaultKind, { climates: readonly Climate[]; duties: readonly Duty[] }>> = {
  'thermostat-stuck-open': {
    climates: ['cold', 'cold', 'temperate'],
    duties: ['urban-delivery', 'long-haul', 'service-van'],
  },
  'thermostat-sticking': {
    climates: ['cold', 'temperate', 'hot'],
    duties: ['urban-delivery', 'service-van', 'bus', 'long-haul'],
  },
  // Progressive faults show where the cooling system works hardest: heavy vehicles in the heat
  // (long-haul tractors on grades, buses crawling and idling at layovers with the A/C on).
  'radiator-fouling': { climates: ['hot'], duties: ['long-haul', 'bus'] },
  'fan-failure': { climates: ['hot'], duties: ['bus', 'bus', 'service-van'] },
  'coolant-loss': { climates: ['hot'], duties: ['bus', 'long-haul'] },
  'sensor-stuck': { climates: ['cold', 'temperate', 'hot'], duties: LIGHT_DUTIES },
  'sensor-spikes': { climates: ['cold', 'temperate', 'hot'], duties: LIGHT_DUTIES },
  'sensor-dropouts': { climates: ['cold', 'temperate', 'hot'], duties: LIGHT_DUTIES },
  'sensor-bias': { climates: ['cold', 'temperate', 'hot'], duties: LIGHT_DUTIES },
};

/** Healthy history before the earliest onset, days (when the run is long enough). */
export const MIN_HEALTHY_HISTORY_DAYS = 22;
/** Days left after the latest onset for the fault to develop. */
const MIN_FAULT_DAYS = 14;

/** Vehicles per fault kind in a full evaluation fleet. */
const FAULTS_PER_KIND = 6;
/** Healthy vehicles per group from which a 5 % false-alarm rate means something. */
const FULL_HEALTHY_PER_GROUP = 10;

/** Number of healthy vehicles in an evaluation fleet of n. */
function healthyCount(n: number): number {
  const faulty = FAULT_KINDS.length * FAULTS_PER_KIND;
  if (n - faulty >= HEALTHY_GROUPS.length * FULL_HEALTHY_PER_GROUP) return n - faulty;
  const share = Math.round(0.3 * n);
  return n - faulty >= 16 ? Math.max(16, Math.min(share, n - faulty)) : Math.max(Math.min(n, 4), share);
}

/** Onset day for a run of `days`: after 3 weeks where possible, else in the middle. */
function onsetDay(days: number, rng: Rng): number {
  if (days >= MIN_HEALTHY_HISTORY_DAYS + MIN_FAULT_DAYS)
    return rng.uniform(MIN_HEALTHY_HISTORY_DAYS, days - MIN_FAULT_DAYS);
  return rng.uniform(0.45, 0.6) * days;
}

/** Plans the evaluation fleet (vehicle ids EV-001, EV-002, …). */
export function planEvaluationFleet(opts: {
  startMs: number;
  days: number;
  seed: number;
  vehicles: number;
}): SimVehicle[] {
  const rng = new Rng(hashSeed(opts.seed, 'fleet:evaluation'));
  const fleet: SimVehicle[] = [];
  const id = (): string => `EV-${String(fleet.length + 1).padStart(3, '0')}`;
  const healthy = healthyCount(opts.vehicles);
  for (let i = 0; i < healthy; i++) {
    const group = HEALTHY_GROUPS[i % HEALTHY_GROUPS.length] as (typeof HEALTHY_GROUPS)[number];
    const round = Math.floor(i / HEALTHY_GROUPS.length);
    if (group === 'heavy-load')
      fleet.push(buildVehicle(id(), EVALUATION_FLEET_ID, EVALUATION_DEPOTS.hot, 'long-haul', rng));
    else {
      const duties = group === 'hot' ? HOT_DUTIES : LIGHT_DUTIES;
      fleet.push(
        buildVehicle(id(), EVALUATION_FLEET_ID, EVALUATION_DEPOTS[group], duties[round % duties.length] as Duty, rng),
      );
    }
  }
  const seen = new Map<FaultKind, number>();
  for (let i = 0; fleet.length < opts.vehicles; i++) {
    const kind = FAULT_KINDS[i % FAULT_KINDS.length] as FaultKind;
    const k = seen.get(kind) ?? 0;
    seen.set(kind, k + 1);
    const place = FAULT_PLACEMENT[kind];
    const climate = place.climates[k % place.climates.length] as Climate;
    const duty = place.duties[k % place.duties.length] as Duty;
    const onsetMs = opts.startMs + Math.round(onsetDay(opts.days, rng) * 24) * (DAY_MS / 24);
    const severity = Math.round(rng.uniform(0.5, 1) * 100) / 100;
    fleet.push(
      buildVehicle(id(), EVALUATION_FLEET_ID, EVALUATION_DEPOTS[climate], duty, rng, [{ kind, onsetMs, severity }]),
    );
  }
  return fleet;
}
