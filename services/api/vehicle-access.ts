import type { Principal } from '../db/api-keys-repository.js';
import type { VehicleProfile, VehiclesRepository } from '../db/vehicles-repository.js';
import { NotFoundError } from './errors.js';
import { assertFleetAccess } from './plugins/auth.js';

/** The vehicle, if it exists (404) and belongs to the key's fleet (403). */
export async function requireVehicle(
  vehicles: VehiclesRepository,
  principal: Principal,
  vehicleId: string,
): Promise<VehicleProfile> {
  const vehicle = await vehicles.get(vehicleId);
  if (!vehicle) throw new NotFoundError(`no vehicle '${vehicleId}'`);
  assertFleetAccess(principal, vehicle.fleetId);
  return vehicle;
}
