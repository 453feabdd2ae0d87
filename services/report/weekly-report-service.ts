import type { Kysely } from 'kysely';
import type { Database } from '../db/schema.js';
import { formatIsoWeek, parseIsoWeek, weekWindow } from '../time/iso-week.js';
import { weekDataStamp } from './report-coverage.js';
import { createReportRepository, type ArchivedReport, type WeekData } from '../db/weekly-report-repository.js';
import { generateWeeklyReport } from './weekly-report-files.js';
import type { WeeklyReport } from './weekly-report-schema.js';

/** Whether an archived report still tells the truth about its week, and the week's data now. */
export interface ArchiveState {
  archived: ArchivedReport | undefined;
  data: WeekData;
  /** Archived after the week ended, from the data the tables hold now. */
  fresh: boolean;
}

/** The archive of a fleet's week checked against what the analysis tables hold now. */
export async function archiveState(
  db: Kysely<Database>,
  fleetId: string,
  isoWeek: string,
  timeZone: string,
): Promise<ArchiveState> {
  const repo = createReportRepository(db);
  const win = weekWindow(parseIsoWeek(isoWeek), timeZone);
  const archived = await repo.archived(fleetId, isoWeek);
  const data = await repo.weekData(fleetId, win.dates[0]!, win.dates[6]!, win.endMs);
  const stamp = (archived?.json as Partial<WeeklyReport> | undefined)?.coverage?.stamp;
  const fresh = archived !== undefined && archived.generatedAt.getTime() >= win.endMs && stamp === weekDataStamp(data);
  return { archived, data, fresh };
}

export interface ServedReport {
  json: WeeklyReport;
  html: string;
  csv: string;
  source: 'archive' | 'built';
}

/**
 * The report of a fleet's week as the API serves it: the archived copy while it is fresh (built
 * after the week ended, from the data the tables still hold), else built now and archived. A
 * past week whose readings arrived after it was archived (a back-fill, gateways that were
 * offline) is so built again instead of being served stale.
 */
export async function currentWeeklyReport(
  db: Kysely<Database>,
  o: { fleetId: string; isoWeek: string; timeZone: string; refresh: boolean },
): Promise<ServedReport> {
  if (!o.refresh) {
    const state = await archiveState(db, o.fleetId, o.isoWeek, o.timeZone);
    if (state.fresh && state.archived)
      return {
        json: state.archived.json as WeeklyReport,
        html: state.archived.html,
        csv: state.archived.csv,
        source: 'archive',
      };
  }
  const rendered = await generateWeeklyReport(db, { fleetId: o.fleetId, week: formatIsoWeek(parseIsoWeek(o.isoWeek)) });
  return { json: rendered.report, html: rendered.html, csv: rendered.csv, source: 'built' };
}
