import type { Duty } from './duty-cycles.js';
import type { FaultKind } from './faults.js';
import type { SimVehicle } from './sim-vehicle.js';
import type { Climate } from './weather.js';

/** One vehicle's ground truth as written to truth.json. */
export interface TruthEntry {
  vehicleId: string;
  /** 'healthy-cold' | 'healthy-temperate' | 'healthy-hot' | 'healthy-heavy-load' | 'fault'. */
  group: string;
  faults: { kind: FaultKind; onset: string; severity: number }[];
  climate: Climate;
  duty: Duty;
  depot: string;
}

/** Ground-truth group of a vehicle: 'fault', or healthy by climate ('heavy-load' = long haul in heat). */
export function truthGroup(vehicle: SimVehicle): string {
  if (vehicle.faults.length > 0) return 'fault';
  if (vehicle.duty === 'long-haul' && vehicle.climate === 'hot') return 'healthy-heavy-load';
  return `healthy-${vehicle.climate}`;
}

/** Ground truth for a fleet, in fleet order. */
export function groundTruth(fleet: readonly SimVehicle[]): TruthEntry[] {
  return fleet.map((v) => ({
    vehicleId: v.vehicleId,
    group: truthGroup(v),
    faults: v.faults.map((f) => ({ kind: f.kind, onset: new Date(f.onsetMs).toISOString(), severity: f.severity })),
    climate: v.climate,
    duty: v.duty,
    depot: v.depot,
  }));
}
