import { mkdir, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { Kysely } from 'kysely';
import {
  convertTemperatures,
  TEMPERATURE_SENTENCE_FIELDS,
  type TemperatureUnit,
} from '../analysis/physics/temperature-unit.js';
import type { Database } from '../db/schema.js';
import { type BuildReportOptions, buildWeeklyReport } from './build-weekly-report.js';
import { renderWorkListCsv } from './csv-work-list.js';
import { renderReportHtml } from './html-report.js';
import { createReportRepository } from '../db/weekly-report-repository.js';
import type { WeeklyReport } from './weekly-report-schema.js';

/** A report in its three formats. */
export interface RenderedReport {
  report: WeeklyReport;
  json: string;
  html: string;
  csv: string;
}

export interface GenerateOptions extends BuildReportOptions {
  /** Called with a line of progress at each stage. */
  onProgress?: (message: string) => void;
}

/** Renders the report object as JSON, HTML and the CSV work list. */
export function renderWeeklyReport(report: WeeklyReport): RenderedReport {
  return {
    report,
    json: `${JSON.stringify(report, null, 2)}\n`,
    html: renderReportHtml(report),
    csv: renderWorkListCsv(report.workList, report.unit ?? 'C'),
  };
}

/**
 * The report (built and archived in °C) with every temperature in `unit`, numbers and sentences
 * alike (services/analysis/physics/temperature-unit.ts), rendered again.
 */
export function reportInUnit(report: WeeklyReport, unit: TemperatureUnit): RenderedReport {
  return renderWeeklyReport({ ...convertTemperatures(report, unit, TEMPERATURE_SENTENCE_FIELDS), unit });
}

/**
 * Builds, renders and archives one fleet's week (replacing an earlier report of the same
 * week in weekly_reports).
 */
export async function generateWeeklyReport(db: Kysely<Database>, options: GenerateOptions): Promise<RenderedReport> {
  const progress = options.onProgress ?? (() => {});
  progress(`gathering ${options.fleetId} ${options.week ?? '(last complete week)'} from the analysis tables`);
  const report = await buildWeeklyReport(db, options);
  progress(
    `${report.week.isoWeek}: ${report.summary.vehiclesReporting}/${report.summary.vehicles} vehicles reporting, ${report.workList.length} work items on ${report.summary.vehiclesToBook} vehicles; drawing ${report.vehicles.length * 2} charts`,
  );
  const rendered = renderWeeklyReport(report);
  await createReportRepository(db).archive(
    report.fleet.fleetId,
    report.week.isoWeek,
    report,
    rendered.html,
    rendered.csv,
    new Date(report.generatedAt),
  );
  progress(`archived ${report.fleet.fleetId} ${report.week.isoWeek} in weekly_reports`);
  return rendered;
}

export interface WrittenReport {
  isoWeek: string;
  htmlPath: string;
  csvPath: string;
  jsonPath: string;
  report: WeeklyReport;
}

/** `weekly-report-<fleet>-<week>` (fleet ids are restricted to letters, digits, '_', '.', '-'). */
export const reportBaseName = (fleetId: string, isoWeek: string) => `weekly-report-${fleetId}-${isoWeek}`;

/**
 * Writes one fleet's weekly report into `outDir` as HTML, CSV and JSON, and archives it.
 * The week defaults to the last complete ISO week in the fleet's time zone.
 * @example const { htmlPath } = await writeWeeklyReport(db, { fleetId: 'quillmoor', outDir: 'reports' })
 */
export async function writeWeeklyReport(
  db: Kysely<Database>,
  options: GenerateOptions & { outDir: string },
): Promise<WrittenReport> {
  const rendered = await generateWeeklyReport(db, options);
  const { report } = rendered;
  await mkdir(options.outDir, { recursive: true });
  const base = join(options.outDir, reportBaseName(report.fleet.fleetId, report.week.isoWeek));
  const paths = { htmlPath: `${base}.html`, csvPath: `${base}.csv`, jsonPath: `${base}.json` };
  await writeFile(paths.htmlPath, rendered.html);
  await writeFile(paths.csvPath, rendered.csv);
  await writeFile(paths.jsonPath, rendered.json);
  options.onProgress?.(`wrote ${paths.htmlPath}, ${paths.csvPath}, ${paths.jsonPath}`);
  return { isoWeek: report.week.isoWeek, ...paths, report };
}
