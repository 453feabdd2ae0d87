import { beforeAll, describe, expect, it } from 'vitest';
import { formatIsoWeek, lastCompleteIsoWeek, weekWindow } from '../../services/time/iso-week.js';
import { createReportRepository } from '../../services/db/weekly-report-repository.js';
import { WeeklyReportScheduler } from '../../services/report/weekly-report-scheduler.js';
import type { WeeklyReport } from '../../services/report/weekly-report-schema.js';
import { concatSamples, syntheticDrive } from '../analysis/synthetic-drive.js';
import { useTestApp } from '../helpers/test-app.js';
import { analyseNow, postReadings, readingItems } from '../helpers/worker-fleet.js';
import { DAY_MS } from '../../services/time/durations.js';

// The case: the service starts after a week has ended, the scheduled job archives that
// week before any of its readings exist, then the gateways' back-fill of three weeks arrives.
const t = useTestApp();
const FLEET = 'backfill-fleet';
const NOW = Date.now();
const WEEK = formatIsoWeek(lastCompleteIsoWeek(NOW, 'UTC'));
const WIN = weekWindow(lastCompleteIsoWeek(NOW, 'UTC'), 'UTC');
const VEHICLES = ['BF-1', 'BF-2'];
let key: string;

/** One morning drive a day, warming from 8 °C, for the 21 days before the week's end. */
function backfill(vehicleId: string): string[] {
  const days = Array.from({ length: 21 }, (_, d) =>
    syntheticDrive({
      startMs: WIN.endMs - (21 - d) * DAY_MS + 7 * 3_600_000,
      ambientC: 8,
      startCoolantC: 8,
      durationS: 3600,
      periodS: 30,
    }),
  );
  return readingItems(vehicleId, concatSamples(days));
}

const scheduler = () => new WeeklyReportScheduler({ db: t.tdb.handle.db, weekday: 1, hour: 0 });
const report = async () => {
  const res = await t.app.inject({ method: 'GET', url: `/v1/reports/weekly?week=${WEEK}`, headers: t.auth(key) });
  expect(res.statusCode, res.body).toBe(200);
  return { body: res.json() as WeeklyReport, source: res.headers['x-report-source'] };
};

beforeAll(async () => {
  key = await t.createKey(FLEET, ['ingest', 'read']);
});

describe('a past week whose readings arrive after its report was archived', () => {
  it('is archived empty by the scheduled build at start-up, saying it covers no readings', async () => {
    expect(await scheduler().tick(NOW)).toEqual([`${FLEET}/${WEEK}`]);
    const archived = (await createReportRepository(t.tdb.handle.db).archived(FLEET, WEEK))!.json as WeeklyReport;
    expect(archived.coverage).toMatchObject({ readings: 0, vehiclesWithData: 0, complete: true });
    expect(archived.coverage.statement).toMatch(/^No readings of this week have been analysed/);
  });

  it('is not rebuilt by the schedule while the back-filled readings wait for analysis', async () => {
    for (const v of VEHICLES) await postReadings(t, key, backfill(v));
    const log: string[] = [];
    expect(
      await new WeeklyReportScheduler({ db: t.tdb.handle.db, weekday: 1, hour: 0, log: (m) => log.push(m) }).tick(NOW),
    ).toEqual([]);
    expect(log.join('\n')).toContain(`waits for the analysis of ${VEHICLES.length} vehicle(s)`);
    const { body, source } = await report();
    expect(source).toBe('built');
    expect(body.coverage).toMatchObject({ pendingVehicles: VEHICLES.length, complete: false });
  });

  it('is rebuilt by the schedule once the analysis has caught up, and served in full from the archive', async () => {
    await analyseNow(t, key);
    expect(await scheduler().tick(NOW)).toEqual([`${FLEET}/${WEEK}`]);
    const { body, source } = await report();
    expect(source).toBe('archive');
    expect(body.summary.vehiclesReporting).toBe(VEHICLES.length);
    expect(body.summary.coldStarts).toBe(7 * VEHICLES.length);
    expect(body.coverage).toMatchObject({
      vehiclesWithData: VEHICLES.length,
      vehicleDays: 7 * VEHICLES.length,
      pendingVehicles: 0,
      complete: true,
    });
    expect(body.coverage.readings).toBeGreaterThan(0);
    expect(body.coverage.statement).toMatch(
      /^Covers [\d,]+ analysed readings from 2 of 2 vehicles \(14 vehicle-days\)/,
    );
    expect(await scheduler().tick(NOW)).toEqual([]);
  });

  it('is rebuilt on request when more readings of the week arrive and are analysed, without waiting for the schedule', async () => {
    const before = (await report()).body.coverage.readings;
    await postReadings(
      t,
      key,
      readingItems(
        'BF-3',
        syntheticDrive({ startMs: WIN.startMs + DAY_MS + 7 * 3_600_000, ambientC: 8, startCoolantC: 8, periodS: 30 }),
      ),
    );
    await analyseNow(t, key);
    const { body, source } = await report();
    expect(source).toBe('built');
    expect(body.coverage.readings).toBeGreaterThan(before);
    expect(body.coverage.vehiclesWithData).toBe(3);
    const html = await t.app.inject({
      method: 'GET',
      url: `/v1/reports/weekly?week=${WEEK}&format=html`,
      headers: t.auth(key),
    });
    expect(html.body).toContain('from 3 of 3 vehicles');
  });
});
