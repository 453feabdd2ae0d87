import type { Kysely } from 'kysely';
import type { Database } from './schema.js';

export const FLEET_ID_PATTERN = /^[A-Za-z0-9][A-Za-z0-9_.-]{0,63}$/;

export function createFleetsRepository(db: Kysely<Database>) {
  return {
    /** Creates the fleet if it does not exist yet; returns whether it was created. */
    async ensure(fleetId: string, name?: string, timeZone?: string): Promise<boolean> {
      if (!FLEET_ID_PATTERN.test(fleetId))
        throw new Error(`fleet id '${fleetId}' must be 1–64 letters, digits, '_', '.' or '-'`);
      const result = await db
        .insertInto('fleets')
        .values({ fleet_id: fleetId, name: name ?? fleetId, ...(timeZone ? { time_zone: timeZone } : {}) })
        .onConflict((oc) => oc.column('fleet_id').doNothing())
        .executeTakeFirst();
      return Number(result.numInsertedOrUpdatedRows ?? 0) > 0;
    },

    async exists(fleetId: string): Promise<boolean> {
      return (
        (await db.selectFrom('fleets').select('fleet_id').where('fleet_id', '=', fleetId).executeTakeFirst()) !==
        undefined
      );
    },
  };
}
