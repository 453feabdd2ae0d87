import type { Duty } from './duty-cycles.js';
import type { FaultKind } from './faults.js';
import { hashSeed, Rng } from './prng.js';
import { buildVehicle, type Depot, type SimVehicle } from './sim-vehicle.js';
import type { Climate } from './weather.js';
import { DAY_MS } from '../time/durations.js';

/**
 * The demo scenario: Quillmoor Provisions, an invented regional food-distribution company with
 * four depots at different altitudes and distances from the coast, so in different climates.
 * Most vehicles are healthy; a handful develop a fault part-way through the period.
 */

export const DEMO_FLEET_ID = 'quillmoor';
export const DEMO_DEPOTS: readonly Depot[] = [
  { name: 'Millbrook Hub', climate: 'temperate', utcOffsetHours: 1 },
  { name: 'Ridgeback Pass', climate: 'cold', utcOffsetHours: 1 },
  { name: 'Emberfield', climate: 'hot', utcOffsetHours: 1 },
  { name: 'Gullhaven', climate: 'temperate', utcOffsetHours: 1 },
];

/** Duty mix of the demo fleet, repeated: mostly vans on delivery rounds. */
const DUTY_CYCLE: readonly Duty[] = [
  'urban-delivery',
  'long-haul',
  'urban-delivery',
  'service-van',
  'urban-delivery',
  'long-haul',
  'urban-delivery',
  'bus',
  'urban-delivery',
  'service-van',
];

interface DemoFault {
  kind: FaultKind;
  climates: readonly Climate[];
  duties: readonly Duty[];
  severity: number;
  /** Onset as a fraction of the simulated period. */
  onsetFraction: number;
}

/** The faults of the demo story, each placed on a vehicle where it shows. */
const DEMO_FAULTS: readonly DemoFault[] = [
  {
    kind: 'thermostat-stuck-open',
    climates: ['cold'],
    duties: ['urban-delivery', 'service-van'],
    severity: 0.8,
    onsetFraction: 0.45,
  },
  { kind: 'radiator-fouling', climates: ['hot'], duties: ['long-haul'], severity: 0.9, onsetFraction: 0.35 },
  { kind: 'fan-failure', climates: ['hot'], duties: ['bus', 'urban-delivery'], severity: 1, onsetFraction: 0.55 },
  {
    kind: 'coolant-loss',
    climates: ['hot', 'temperate'],
    duties: ['long-haul', 'urban-delivery'],
    severity: 0.8,
    onsetFraction: 0.4,
  },
  {
    kind: 'thermostat-sticking',
    climates: ['temperate'],
    duties: ['urban-delivery', 'service-van'],
    severity: 0.7,
    onsetFraction: 0.5,
  },
  {
    kind: 'sensor-spikes',
    climates: ['temperate'],
    duties: ['service-van', 'urban-delivery'],
    severity: 0.6,
    onsetFraction: 0.5,
  },
  {
    kind: 'sensor-bias',
    climates: ['cold'],
    duties: ['long-haul', 'urban-delivery'],
    severity: 0.7,
    onsetFraction: 0.5,
  },
];

/** Plans the demo fleet (vehicle ids QP-101, QP-102, …). */
export function planDemoFleet(opts: { startMs: number; days: number; seed: number; vehicles: number }): SimVehicle[] {
  const rng = new Rng(hashSeed(opts.seed, 'fleet:demo'));
  const fleet: SimVehicle[] = [];
  for (let i = 0; i < opts.vehicles; i++) {
    const depot = DEMO_DEPOTS[i % DEMO_DEPOTS.length] as Depot;
    const duty = DUTY_CYCLE[Math.floor(i / DEMO_DEPOTS.length) % DUTY_CYCLE.length] as Duty;
    fleet.push(buildVehicle(`QP-${101 + i}`, DEMO_FLEET_ID, depot, duty, rng));
  }
  // A small fleet gets fewer faults: keep at least three quarters healthy.
  const faultCount = Math.min(DEMO_FAULTS.length, Math.floor(opts.vehicles / 4));
  for (const f of DEMO_FAULTS.slice(0, faultCount)) {
    const healthy = fleet.filter((v) => v.faults.length === 0);
    // Preference order: the first listed climate and duty where the fault shows best.
    const host =
      f.climates
        .flatMap((c) => f.duties.map((d) => healthy.find((v) => v.climate === c && v.duty === d)))
        .find((v) => v !== undefined) ??
      healthy.find((v) => f.climates.includes(v.climate)) ??
      healthy[0];
    if (!host) break;
    const onsetDay = Math.max(1, Math.round(opts.days * f.onsetFraction));
    host.faults.push({ kind: f.kind, onsetMs: opts.startMs + onsetDay * DAY_MS, severity: f.severity });
  }
  return fleet;
}
