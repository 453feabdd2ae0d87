import type { Kysely } from 'kysely';
import { createApiKeysRepository } from '../db/api-keys-repository.js';
import { createFleetsRepository } from '../db/fleets-repository.js';
import type { Database } from '../db/schema.js';

/** A running thermocline the evaluation talks to over HTTP, with keys for one fleet. */
export interface EvaluationService {
  baseUrl: string;
  /** Gateway key (ingest scope) and planner key (read scope) of the fleet. */
  ingestKey: string;
  readKey: string;
  /** Stops the service and throws its database away. */
  stop(): Promise<void>;
}

/**
 * Starts a fresh service (its own empty database: peer baselines span a database, so fleets
 * must not share one) for `fleetId`; `worker` says whether the in-process worker runs (streamed
 * pass) or not (one analysis after all data has arrived).
 */
export type ServiceFactory = (options: { fleetId: string; worker: boolean }) => Promise<EvaluationService>;

/** Creates the fleet and its two keys in a migrated database; returns the plain keys. */
export async function createFleetKeys(
  db: Kysely<Database>,
  fleetId: string,
): Promise<{ ingestKey: string; readKey: string }> {
  await createFleetsRepository(db).ensure(fleetId, `${fleetId} (simulated evaluation fleet)`);
  const keys = createApiKeysRepository(db);
  const ingestKey = (await keys.create({ fleetId, scopes: ['ingest'], label: 'evaluation gateways' })).key;
  const readKey = (await keys.create({ fleetId, scopes: ['read'], label: 'evaluation planner' })).key;
  return { ingestKey, readKey };
}
