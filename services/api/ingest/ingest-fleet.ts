import type { Principal } from '../../db/api-keys-repository.js';
import { BadRequestError, ForbiddenError, NotFoundError } from '../errors.js';

/**
 * The fleet an ingest request writes for: the key's own fleet, or for an admin key the fleet
 * named by `?fleet=` (which must exist). A fleet key naming another fleet is refused (403).
 *
 * @example const fleetId = await ingestFleetOf(principal, request.query.fleet, fleets, '/v1/readings')
 */
export async function ingestFleetOf(principal: Principal, queryFleet: string | undefined, fleets: { exists(fleetId: string): Promise<boolean> }, path: string): Promise<string> {
  if (principal.fleetId === null) {
    if (!queryFleet) throw new BadRequestError(`an admin key must name the fleet: POST ${path}?fleet=<fleetId>`);
    if (!(await fleets.exists(queryFleet))) throw new NotFoundError(`unknown fleet '${queryFleet}'`);
    return queryFleet;
  }
  if (queryFleet && queryFleet !== principal.fleetId) throw new ForbiddenError('this API key belongs to another fleet');
  return principal.fleetId;
}
