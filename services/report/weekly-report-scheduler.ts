import type { Kysely } from 'kysely';
import type { Database } from '../db/schema.js';
import { formatIsoWeek, isoWeekAt, isoWeekDate, lastCompleteIsoWeek, weekWindow } from './iso-week.js';
import { createReportRepository } from './report-repository.js';
import { generateWeeklyReport, writeWeeklyReport } from './weekly-report-files.js';
import { zonedTimeToUtcMs } from './zoned-time.js';

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

/**
 * Builds each fleet's report for the last complete ISO week once the configured weekday and
 * hour have come in the fleet's time zone (`fleets.time_zone`). A week already archived after
 * it ended is not built again, so ticks are idempotent and a restart catches up.
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
    if (!Number.isInteger(this.weekday) || this.weekday < 1 || this.weekday > 7) throw new RangeError(`weekday must be 1 (Monday) to 7 (Sunday), got ${this.weekday}`);
    if (!Number.isInteger(this.hour) || this.hour < 0 || this.hour > 23) throw new RangeError(`hour must be 0 to 23, got ${this.hour}`);
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
    this.running ??= this.check(now).finally(() => { this.running = undefined; });
    return this.running;
  }

  private async check(now: number): Promise<string[]> {
    const repo = createReportRepository(this.options.db);
    const built: string[] = [];
    for (const fleet of await repo.fleets()) {
      const { timeZone } = fleet;
      if (now < this.dueAt(now, timeZone)) continue;
      const week = lastCompleteIsoWeek(now, timeZone);
      const isoWeek = formatIsoWeek(week);
      const archived = await repo.archived(fleet.fleetId, isoWeek);
      if (archived && archived.generatedAt.getTime() >= weekWindow(week, timeZone).endMs) continue;
      try {
        const options = { fleetId: fleet.fleetId, week: isoWeek, now };
        if (this.options.outDir) await writeWeeklyReport(this.options.db, { ...options, outDir: this.options.outDir });
        else await generateWeeklyReport(this.options.db, options);
        built.push(`${fleet.fleetId}/${isoWeek}`);
        this.log(`weekly report ${fleet.fleetId} ${isoWeek} built`);
      } catch (err) {
        this.log(`weekly report ${fleet.fleetId} ${isoWeek} failed: ${err instanceof Error ? err.message : String(err)}`);
      }
    }
    return built;
  }

  /** Checks now and then every `intervalMs`. */
  start(): void {
    if (this.timer) return;
    const run = () => { void this.tick().catch((err: unknown) => this.log(`weekly report check failed: ${String(err)}`)); };
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
