import { buildApp } from '../../services/api/app.js';
import { createFleetKeys, type ServiceFactory } from '../../services/evaluation/evaluation-service.js';
import { Worker } from '../../services/worker/worker.js';
import { testConfig } from './test-app.js';
import { createTestDatabase } from './test-database.js';

/**
 * Services for the field evaluation inside the test process: each on a fresh test database of
 * the project's engine (server clone or in-memory PGlite), listening on a real port, with the
 * in-process worker wired as `thermocline serve` wires it.
 */
export function testServiceFactory(): ServiceFactory {
  return async ({ fleetId, worker }) => {
    const tdb = await createTestDatabase();
    const config = testConfig({ rateLimitPerMinute: 10_000_000, ingestMaxAgeDays: 36_500 });
    const app = await buildApp({ config, database: tdb.handle });
    const baseUrl = await app.listen({ port: 0, host: '127.0.0.1' });
    const keys = await createFleetKeys(tdb.handle.db, fleetId);
    const w = worker
      ? new Worker({
          handle: tdb.handle,
          pollMs: config.workerPollMs,
          leaseMs: config.workerLeaseMs,
          batchSize: config.workerBatchSize,
        })
      : undefined;
    if (w) {
      app.ingestNotifier.on('readings', () => w.wake());
      app.ingestNotifier.on('analysis-needed', () => w.wake());
      w.start();
    }
    return {
      baseUrl,
      ...keys,
      async stop() {
        await w?.stop();
        await app.close();
        await tdb.drop();
      },
    };
  };
}
