import type { Logger } from 'pino';
import type { Config } from '../config.js';
import type { DatabaseHandle } from '../db/database.js';
import { WeeklyReportScheduler } from '../report/weekly-report-scheduler.js';

/**
 * The weekly report schedule that runs beside every worker (in-process or standalone), or
 * undefined when REPORT_SCHEDULE=false. Several workers may each run one: a week already archived
 * after it ended is not built again, and building it twice at the same moment only replaces it.
 */
export function startReportSchedule(config: Config, database: DatabaseHandle, logger: Logger): WeeklyReportScheduler | undefined {
  if (!config.reportSchedule) return undefined;
  const scheduler = new WeeklyReportScheduler({
    db: database.db,
    weekday: config.reportWeekday,
    hour: config.reportHour,
    ...(config.reportDir ? { outDir: config.reportDir } : {}),
    log: (message) => logger.info(message),
  });
  scheduler.start();
  return scheduler;
}
