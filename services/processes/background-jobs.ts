import type { Logger } from 'pino';
import type { Config } from '../config.js';
import type { DatabaseHandle } from '../db/database.js';
import { WeeklyReportScheduler } from '../report/weekly-report-scheduler.js';
import { Worker } from '../worker/worker.js';

/** The analysis worker and the weekly report schedule that runs beside it, started together. */
export interface BackgroundJobs {
  worker: Worker;
  /** Undefined when REPORT_SCHEDULE=false. */
  reports: WeeklyReportScheduler | undefined;
  /** Stops both: the worker finishes the vehicle in hand and releases its other leases. */
  stop(): Promise<void>;
}

/**
 * Starts an analysis worker with the configured poll, lease and batch settings, and the weekly
 * report schedule beside it (unless REPORT_SCHEDULE=false). The same for the in-process worker of
 * `thermocline serve` and for `thermocline worker`. Several processes may each run a schedule: a
 * week already archived after it ended is not built again, and building it twice at the same
 * moment only replaces it.
 */
export function startBackgroundJobs(config: Config, database: DatabaseHandle, logger: Logger): BackgroundJobs {
  const worker = new Worker({
    handle: database,
    pollMs: config.workerPollMs,
    leaseMs: config.workerLeaseMs,
    batchSize: config.workerBatchSize,
    logger,
  });
  worker.start();
  const reports = config.reportSchedule
    ? new WeeklyReportScheduler({
        db: database.db,
        weekday: config.reportWeekday,
        hour: config.reportHour,
        ...(config.reportDir ? { outDir: config.reportDir } : {}),
        log: (message) => logger.info(message),
      })
    : undefined;
  reports?.start();
  return {
    worker,
    reports,
    stop: async () => {
      await Promise.all([worker.stop(), reports?.stop()]);
    },
  };
}

/** Calls `onSignal` once, at the first SIGTERM or SIGINT. */
export function onStopSignal(onSignal: (signal: string) => void): void {
  let stopping = false;
  const stop = (signal: string) => {
    if (stopping) return;
    stopping = true;
    onSignal(signal);
  };
  process.once('SIGTERM', () => stop('SIGTERM'));
  process.once('SIGINT', () => stop('SIGINT'));
}
