import { sql } from 'kysely';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createFleetsRepository } from '../../services/db/fleets-repository.js';
import { createQueueRepository } from '../../services/db/analysis-queue-repository.js';
import { createTestDatabase, testDatabaseKind, type TestDatabase } from '../helpers/test-database.js';

// Regression: an ingest marks vehicles in the queue in id order while the worker's heartbeat
// updated its leased rows in heap order; the two deadlocked (1 in 13,421 small batches in one
// probe), and when the worker lost, its batch's leases sat until they expired. Every statement
// that locks several queue rows now takes them in id order. Needs two connections: PostgreSQL.

let tdb: TestDatabase;
beforeAll(async () => {
  tdb = await createTestDatabase();
  await createFleetsRepository(tdb.handle.db).ensure('fleet-lo');
});
afterAll(async () => tdb.drop());

/** Resolves once some statement of this database waits for a row lock. */
async function someoneWaitsForALock(): Promise<void> {
  for (;;) {
    const r = await sql<{ n: number }>`
      select count(*)::int as n from pg_stat_activity where datname = current_database() and wait_event_type = 'Lock'`.execute(
      tdb.handle.db,
    );
    if (r.rows[0]!.n > 0) return;
    await new Promise((resolve) => setTimeout(resolve, 20));
  }
}

describe.skipIf(testDatabaseKind() === 'pglite')('queue rows locked by several statements at once', () => {
  it.each(['extend', 'release'] as const)(
    'a worker %s waiting behind an ingest never deadlocks with it',
    async (op) => {
      const queue = createQueueRepository(tdb.handle.db);
      await sql`delete from analysis_queue`.execute(tdb.handle.db);
      // Inserted b before a: the heap order is the reverse of the id order.
      for (const v of ['LO-b', 'LO-a']) await queue.enqueue(v, 'fleet-lo', Date.now() - 3_600_000);
      expect((await queue.lease('w1', 10, 60_000)).map((l) => l.vehicleId)).toEqual(['LO-a', 'LO-b']);
      let workerDone: Promise<number> | undefined;
      await tdb.handle.db.transaction().execute(async (trx) => {
        // The ingest's marking statement takes rows in id order: LO-a first…
        await queue.enqueue('LO-a', 'fleet-lo', Date.now(), trx);
        workerDone =
          op === 'extend' ? queue.extend('w1', ['LO-a', 'LO-b'], 60_000) : queue.release('w1', ['LO-a', 'LO-b']);
        await someoneWaitsForALock();
        // …then LO-b, which the worker's statement must not have locked while it waits for LO-a.
        await queue.enqueue('LO-b', 'fleet-lo', Date.now(), trx);
      });
      expect(await workerDone).toBe(2);
    },
  );
});
