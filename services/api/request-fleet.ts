import type { Principal } from '../db/api-keys-repository.js';
import { BadRequestError, NotFoundError } from './errors.js';
import { assertFleetAccess } from './plugins/auth.js';

/**
 * Which fleet a request acts on: the one place that decides it. A fleet key acts on its own
 * fleet; naming another one with `?fleet=` is refused (403). An admin key acts on the fleet it
 * names, or, for reads that allow it, on every fleet.
 */

/** The fleets a read covers: the key's own fleet, an admin key's named fleet, or every fleet (null) for an admin key naming none. */
export function fleetScopeOf(principal: Principal, requested: string | undefined): string | null {
  if (requested) assertFleetAccess(principal, requested);
  return principal.fleetId ?? requested ?? null;
}

/**
 * The one fleet a request acts on: the key's own, or the one an admin key names (400 if it names
 * none). With `fleets`, a fleet an admin key names must exist (404).
 *
 * @example const fleetId = await oneFleetOf(principal, request.query.fleet, fleets, 'POST /v1/readings')
 */
export async function oneFleetOf(
  principal: Principal,
  requested: string | undefined,
  fleets?: { exists(fleetId: string): Promise<boolean> },
  what = '',
): Promise<string> {
  const fleetId = fleetScopeOf(principal, requested);
  if (fleetId === null)
    throw new BadRequestError(
      `an admin key must name the fleet: ${what ? `${what}?fleet=<fleetId>` : '?fleet=<fleetId>'}`,
    );
  if (fleets && principal.fleetId === null && !(await fleets.exists(fleetId)))
    throw new NotFoundError(`unknown fleet '${fleetId}'`);
  return fleetId;
}
