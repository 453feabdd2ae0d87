import { parseArgs } from 'node:util';
import pino from 'pino';
import { loadConfig } from '../config.js';
import { openDatabase } from '../db/database.js';
import { migrateToLatest } from '../db/migrator.js';
import { AnalysisRuns } from '../worker/analysis-runs.js';
import { onStopSignal, startBackgroundJobs } from './background-jobs.js';

const HELP = `usage: thermocline worker [--once]

Runs a standalone analysis worker against DATABASE_URL: leases dirty vehicles from the analysis
queue, analyses them and writes runs, days, findings and risk. Any number of workers may run in
parallel (vehicles are leased with FOR UPDATE SKIP LOCKED). Stops gracefully on SIGTERM or
SIGINT: finishes the vehicle in hand and releases its other leases.

options:
  --once        analyse every vehicle that is dirty now, then exit
  -h, --help    show this help

environment: DATABASE_URL (required: the embedded database belongs to the API process, whose
in-process worker analyses it), WORKER_POLL_MS, WORKER_LEASE_MS, WORKER_BATCH_SIZE, LOG_LEVEL,
REPORT_SCHEDULE, REPORT_WEEKDAY, REPORT_HOUR, REPORT_DIR (the weekly report is built on schedule).
`;

export async function run(argv: string[]): Promise<number> {
  const { values } = parseArgs({
    args: argv,
    options: { once: { type: 'boolean' }, help: { type: 'boolean', short: 'h' } },
  });
  if (values.help) {
    process.stdout.write(HELP);
    return 0;
  }
  const config = loadConfig();
  if (!config.databaseUrl) {
    process.stderr.write(
      'thermocline worker: set DATABASE_URL; the embedded database is analysed by the worker inside `thermocline serve`\n',
    );
    return 2;
  }
  const logger = pino({ level: config.logLevel });
  const database = await openDatabase({
    databaseUrl: config.databaseUrl,
    pgliteDir: config.pgliteDir,
    poolSize: 3,
    onPoolError: (err) => logger.warn({ err }, 'idle database connection failed; the pool replaces it'),
  });
  try {
    logger.info({ database: database.kind }, `thermocline worker starting on ${database.description}`);
    await migrateToLatest(database.db);
    if (values.once) {
      const runs = new AnalysisRuns(database, {
        leaseMs: config.workerLeaseMs,
        batchSize: config.workerBatchSize,
        logger,
      });
      const result = await runs.start(null).done;
      logger.info(result, 'analysis run finished');
      return result.status === 'succeeded' && result.vehiclesFailed === 0 ? 0 : 1;
    }
    const jobs = startBackgroundJobs(config, database, logger);
    await new Promise<void>((resolve) =>
      onStopSignal((signal) => {
        logger.info({ signal }, 'stopping: finishing the vehicle in hand, releasing the other leases');
        resolve();
      }),
    );
    await jobs.stop();
    return 0;
  } finally {
    await database.close();
  }
}
