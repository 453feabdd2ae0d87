import { parseArgs } from 'node:util';
import pino from 'pino';
import { loadConfig } from '../config.js';
import { createApiKeysRepository } from '../db/api-keys-repository.js';
import { openDatabase } from '../db/database.js';
import { migrateToLatest } from '../db/migrator.js';
import { buildApp } from '../api/app.js';
import { onStopSignal, startBackgroundJobs } from './background-jobs.js';

const HELP = `usage: thermocline serve

Runs the HTTP API (and, unless IN_PROCESS_WORKER=false, the analysis worker in the same process).
Configuration comes from the environment: PORT, HOST, DATABASE_URL, PGLITE_DIR, ADMIN_API_KEY,
LOG_LEVEL (see README.md). Stops gracefully on SIGTERM or SIGINT.
`;

export async function run(argv: string[]): Promise<number> {
  const { values } = parseArgs({ args: argv, options: { help: { type: 'boolean', short: 'h' } } });
  if (values.help) {
    process.stdout.write(HELP);
    return 0;
  }
  const config = loadConfig();
  const logger = pino({ level: config.logLevel });
  const database = await openDatabase({
    databaseUrl: config.databaseUrl,
    pgliteDir: config.pgliteDir,
    poolSize: config.dbPoolSize,
    onPoolError: (err) => logger.warn({ err }, 'idle database connection failed; the pool replaces it'),
  });
  logger.info({ database: database.kind }, `thermocline starting on ${database.description}`);
  const applied = await migrateToLatest(database.db);
  if (applied.length > 0) logger.info({ applied }, 'migrations applied');
  if (config.adminApiKey) {
    const keyId = await createApiKeysRepository(database.db).ensureBootstrapAdmin(config.adminApiKey);
    logger.info({ keyId }, 'bootstrap admin key from ADMIN_API_KEY is active');
  }

  const app = await buildApp({ config, database, closeDatabase: true, logger: logger });
  await app.listen({ port: config.port, host: config.host });
  // The in-process worker starts once the API answers and wakes whenever an ingest commits.
  const jobs = config.inProcessWorker ? startBackgroundJobs(config, database, logger) : undefined;
  if (jobs) {
    app.ingestNotifier.on('readings', () => jobs.worker.wake());
    app.ingestNotifier.on('analysis-needed', () => jobs.worker.wake());
  }

  return new Promise<number>((resolve) => {
    onStopSignal((signal) => {
      app.log.info({ signal }, 'shutting down: no new connections, finishing requests in flight');
      // A request that never ends must not keep the process alive: after the grace period the
      // connections are cut and the process exits.
      setTimeout(() => {
        app.log.error({ graceMs: config.shutdownGraceMs }, 'shutdown did not finish within the grace period; exiting');
        app.server.closeAllConnections();
        process.exit(1);
      }, config.shutdownGraceMs).unref();
      // The worker stops first (its vehicle in hand finished, other leases released): app.close()
      // closes the database.
      Promise.resolve(jobs?.stop())
        .then(() => app.close())
        .then(
          () => {
            app.log.info('stopped');
            resolve(0);
          },
          (err: unknown) => {
            app.log.error({ err }, 'shutdown failed');
            resolve(1);
          },
        );
    });
  });
}
