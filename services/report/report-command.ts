import { parseArgs } from 'node:util';
import { loadConfig } from '../config.js';
import { openDatabase } from '../db/database.js';
import { migrateToLatest } from '../db/migrator.js';
import { UnknownFleetError } from './build-weekly-report.js';
import { parseIsoWeek } from '../time/iso-week.js';
import { createReportRepository } from '../db/weekly-report-repository.js';
import { writeWeeklyReport } from './weekly-report-files.js';

const USAGE = `usage: thermocline report weekly [--week YYYY-Www] [--fleet FLEET] [--out DIR]

Builds the weekly maintenance report (HTML with charts, CSV work list, JSON) from the analysis
tables, writes it to DIR and archives it in the database (re-running a week replaces it).

  --week   ISO week, e.g. 2026-W48 (default: the last complete week in each fleet's time zone)
  --fleet  one fleet (default: every fleet)
  --out    output directory (default: ./reports)
`;

/** `thermocline report weekly …`: exit 0 on success, 1 on failure, 2 on a usage error. */
export async function run(argv: string[]): Promise<number> {
  let values: {
    week?: string | undefined;
    fleet?: string | undefined;
    out?: string | undefined;
    help?: boolean | undefined;
  };
  let positionals: string[];
  try {
    ({ values, positionals } = parseArgs({
      args: argv,
      allowPositionals: true,
      options: {
        week: { type: 'string' },
        fleet: { type: 'string' },
        out: { type: 'string', default: 'reports' },
        help: { type: 'boolean', short: 'h' },
      },
    }));
  } catch (err) {
    process.stderr.write(`${err instanceof Error ? err.message : String(err)}\n\n${USAGE}`);
    return 2;
  }
  if (values.help) {
    process.stdout.write(USAGE);
    return 0;
  }
  if (positionals.length !== 1 || positionals[0] !== 'weekly') {
    process.stderr.write(USAGE);
    return 2;
  }
  if (values.week) {
    try {
      parseIsoWeek(values.week);
    } catch (err) {
      process.stderr.write(`${(err as Error).message}\n`);
      return 2;
    }
  }
  const config = loadConfig();
  const database = await openDatabase({ databaseUrl: config.databaseUrl, pgliteDir: config.pgliteDir });
  const progress = (message: string) => process.stderr.write(`${message}\n`);
  try {
    progress(`report: using ${database.description}`);
    await migrateToLatest(database.db);
    const fleets = values.fleet
      ? [values.fleet]
      : (await createReportRepository(database.db).fleets()).map((f) => f.fleetId);
    if (fleets.length === 0) {
      progress('no fleets in the database: nothing to report');
      return 1;
    }
    for (const fleetId of fleets) {
      const written = await writeWeeklyReport(database.db, {
        fleetId,
        ...(values.week ? { week: values.week } : {}),
        outDir: values.out!,
        onProgress: progress,
      });
      process.stdout.write(`${written.htmlPath}\n`);
    }
    return 0;
  } catch (err) {
    progress(
      err instanceof UnknownFleetError
        ? err.message
        : `report failed: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}`,
    );
    return 1;
  } finally {
    await database.close();
  }
}
