import type { Kysely } from 'kysely';
import type { Database } from '../db/schema.js';
import { formatIsoWeek, isoWeekAt, isoWeekDate, lastCompleteIsoWeek } from '../time/iso-week.js';
import { createReportRepository } from '../db/weekly-report-repository.js';
import { generateWeeklyReport, writeWeeklyReport } from './weekly-report-files.js';
import { archiveState } from './weekly-report-service.js';
import { zonedTimeToUtcMs } from '../time/zoned-time.js';
import { WEEK_MS } from '../time/durations.js';

export interface WeeklyReportSchedulerOptions {
  db: Kysely<Database>;
  /** ISO weekday the report is built on, 1 = Monday … 7 = Sunday (default 1). */
  weekday?: number;
  /** Local hour (0–23, in each fleet's time zone) from which it is built (default 6). */
  hour?: number;
  /** Also write the files here (default: archive in the database only). */
  outDir?: string;
  /** How often `start()` checks, ms (default 15 min). */
  intervalMs?: number;
  log?: (message: string) => void;
}

export const DEFAULT_REPORT_WEEKDAY = 1;
export const DEFAULT_REPORT_HOUR = 6;
export const DEFAULT_SCHEDULER_INTERVAL_MS = 15 * 60_000;
/** The due report waits at most this long after it is due for the fleet's analysis to catch up, then is built anyway (saying so), ms. */
export const MAX_ANALYSIS_WAIT_MS = 24 * 3_600_000;
/** Archived reports generated within this many weeks are checked for staleness and rebuilt, weeks. */
export const REBUILD_LOOKBACK_WEEKS = 8;

/**
 * Builds each fleet's report for the last complete ISO week once the configured weekday and
 * hour have come in the fleet's time zone (`fleets.time_zone`) and the fleet's analysis has
 * caught up with the week (no vehicle's queued readings reach back before its end; after
 * MAX_ANALYSIS_WAIT_MS it is built anyway and its coverage says what is missing). Archived
 * reports of recent weeks whose data changed since (a back-fill) are built again once their
 * analysis has caught up. A fresh archive is not built again, so ticks are idempotent and a
 * restart catches up.
 * `tick(now)` does one check (testable without timers); `start()` runs it on an interval.
 */
export class WeeklyReportScheduler {
  private readonly weekday: number;
  private readonly hour: number;
  private readonly log: (message: string) => void;
  private timer: NodeJS.Timeout | undefined;
  private running: Promise<string[]> | undefined;

  constructor(private readonly options: WeeklyReportSchedulerOptions) {
    this.weekday = options.weekday ?? DEFAULT_REPORT_WEEKDAY;
    this.hour = options.hour ?? DEFAULT_REPORT_HOUR;
    if (!Number.isInteger(this.weekday) || this.weekday < 1 || this.weekday > 7)
      throw new RangeError(`weekday must be 1 (Monday) to 7 (Sunday), got ${this.weekday}`);
    if (!Number.isInteger(this.hour) || this.hour < 0 || this.hour > 23)
      throw new RangeError(`hour must be 0 to 23, got ${this.hour}`);
    this.log = options.log ?? (() => {});
  }

  /** The instant the report of the week before `now`'s week is due in `timeZone`. */
  dueAt(now: number, timeZone: string): number {
    const date = isoWeekDate(isoWeekAt(now, timeZone), this.weekday);
    const [y, m, d] = date.split('-').map(Number) as [number, number, number];
    return zonedTimeToUtcMs(y, m, d, this.hour, timeZone);
  }

  /**
   * One check at `now` (epoch ms): builds and archives every fleet's due report. Returns the
   * reports built as `fleet/week`. A fleet that fails is logged and does not stop the others.
   */
  tick(now: number = Date.now()): Promise<string[]> {
    // A tick still running (a slow database) is joined rather than doubled.
    this.running ??= this.check(now).finally(() => {
      this.running = undefined;
    });
    return this.running;
  }

  private async check(now: number): Promise<string[]> {
    const repo = createReportRepository(this.options.db);
    const built: string[] = [];
    for (const fleet of await repo.fleets()) {
      const { timeZone } = fleet;
      const due = this.dueAt(now, timeZone);
      if (now < due) continue;
      const dueWeek = formatIsoWeek(lastCompleteIsoWeek(now, timeZone));
      const weeks = new Set([
        dueWeek,
        ...(await repo.archivedWeeks(fleet.fleetId, now - REBUILD_LOOKBACK_WEEKS * WEEK_MS)),
      ]);
      for (const isoWeek of weeks) {
        const state = await archiveState(this.options.db, fleet.fleetId, isoWeek, timeZone);
        if (state.fresh) continue;
        if (state.data.pendingVehicles > 0 && (state.archived !== undefined || now < due + MAX_ANALYSIS_WAIT_MS)) {
          this.log(
            `weekly report ${fleet.fleetId} ${isoWeek} waits for the analysis of ${state.data.pendingVehicles} vehicle(s)`,
          );
          continue;
        }
        try {
          const options = { fleetId: fleet.fleetId, week: isoWeek, now };
          if (this.options.outDir)
            await writeWeeklyReport(this.options.db, { ...options, outDir: this.options.outDir });
          else await generateWeeklyReport(this.options.db, options);
          built.push(`${fleet.fleetId}/${isoWeek}`);
          this.log(
            `weekly report ${fleet.fleetId} ${isoWeek} ${state.archived ? 'rebuilt: its data changed since it was archived' : 'built'}`,
          );
        } catch (err) {
          this.log(
            `weekly report ${fleet.fleetId} ${isoWeek} failed: ${err instanceof Error ? err.message : String(err)}`,
          );
        }
      }
    }
    return built;
  }

  /** Checks now and then every `intervalMs`. */
  start(): void {
    if (this.timer) return;
    const run = () => {
      void this.tick().catch((err: unknown) => this.log(`weekly report check failed: ${String(err)}`));
    };
    this.timer = setInterval(run, this.options.intervalMs ?? DEFAULT_SCHEDULER_INTERVAL_MS);
    this.timer.unref();
    run();
  }

  /** Stops the interval and waits for a check in progress. */
  async stop(): Promise<void> {
    if (this.timer) clearInterval(this.timer);
    this.timer = undefined;
    await this.running?.catch(() => undefined);
  }
}
