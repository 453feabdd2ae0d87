import type { Duty } from './duty-cycles.js';
import { BRENMARK_H13, HALVERN_M7, VANTOR_L22, VANTOR_L30, type EngineFamily } from './engine-families.js';
import type { FaultSpec } from './faults.js';
import type { FieldVariation } from './field-variation.js';
import type { Rng } from './prng.js';
import type { Climate } from './weather.js';

/** One simulated vehicle: its profile (as the API's vehicle profile), where and how it works, its faults. */
export interface SimVehicle {
  vehicleId: string;
  fleetId: string;
  depot: string;
  climate: Climate;
  duty: Duty;
  engineFamily: string;
  /** Nominal thermostat regulating temperature, °C. */
  thermostatOpenC: number;
  /** Radiator cap, kPa gauge. */
  capPressureKpa: number;
  /** Glycol, % by volume. */
  glycolPercent: number;
  label: string;
  faults: FaultSpec[];
  /** Depot's offset from UTC, h (local working hours, daily temperature cycle). Default 0. */
  utcOffsetHours?: number;
  /** Real-world variation (field scenario); absent = the plain simulator. */
  variation?: FieldVariation;
}

/** A depot: vehicles based there share its climate and weather. */
export interface Depot {
  name: string;
  climate: Climate;
  utcOffsetHours: number;
}

const DUTY_NAMES: Readonly<Record<Duty, string>> = {
  'urban-delivery': 'urban delivery',
  'long-haul': 'long haul',
  bus: 'bus',
  'service-van': 'service van',
};

function familyFor(duty: Duty, rng: Rng): EngineFamily {
  switch (duty) {
    case 'urban-delivery':
      return rng.chance(0.6) ? VANTOR_L22 : VANTOR_L30;
    case 'long-haul':
      return BRENMARK_H13;
    case 'bus':
      return HALVERN_M7;
    case 'service-van':
      return VANTOR_L22;
  }
}

/**
 * Builds a vehicle with a family suited to its duty and small per-vehicle variation
 * (thermostat option, coolant mix as last serviced).
 */
export function buildVehicle(
  vehicleId: string,
  fleetId: string,
  depot: Depot,
  duty: Duty,
  rng: Rng,
  faults: FaultSpec[] = [],
): SimVehicle {
  const family = familyFor(duty, rng);
  // Heavy-duty engines are offered with an 82 or 88 °C thermostat; some fleets fit the hotter one.
  const thermostatOpenC = family === BRENMARK_H13 && rng.chance(0.3) ? 88 : family.thermostatOpenC;
  const glycolPercent = Math.round(family.glycolPercent + rng.uniform(-8, 5));
  return {
    vehicleId,
    fleetId,
    depot: depot.name,
    climate: depot.climate,
    duty,
    engineFamily: family.name,
    thermostatOpenC,
    capPressureKpa: family.capPressureKpa,
    glycolPercent,
    label: `${DUTY_NAMES[duty]} ${vehicleId}, ${depot.name}`,
    faults,
    utcOffsetHours: depot.utcOffsetHours,
  };
}
