import type { Kysely } from 'kysely';
import { createDepotsRepository, type DepotPatch, type DepotView } from '../../db/depots-repository.js';
import type { Database } from '../../db/schema.js';
import { createQueueRepository } from '../../db/analysis-queue-repository.js';

/**
 * Registering or changing a depot. When its site changes, the vehicles that take their site from
 * it (no site of their own) are queued, so the worker re-derives their findings with the new
 * boiling point from the stored history.
 */
export function createDepotActions(db: Kysely<Database>) {
  const depots = createDepotsRepository(db);
  const queue = createQueueRepository(db);
  return {
    async put(fleetId: string, depotId: string, patch: DepotPatch): Promise<{ depot: DepotView; created: boolean }> {
      return db.transaction().execute(async (trx) => {
        const { created } = await depots.upsert(trx, fleetId, depotId, patch);
        if (patch.atmosphericPressureKpa !== undefined || patch.siteAltitudeM !== undefined) {
          for (const v of await depots.vehiclesUsingSite(trx, fleetId, depotId)) {
            if (v.lastReadingMs !== null) await queue.enqueue(v.vehicleId, fleetId, v.lastReadingMs, trx);
          }
        }
        return { depot: (await depots.get(fleetId, depotId, trx))!, created };
      });
    },
  };
}
