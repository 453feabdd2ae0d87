import { sql } from 'kysely';
import { beforeAll, describe, expect, it } from 'vitest';
import { SAFETY_CAUTION } from '../../services/analysis/findings/finding.js';
import { generateWeeklyReport } from '../../services/report/weekly-report-files.js';
import { WeeklyReportScheduler } from '../../services/report/weekly-report-scheduler.js';
import { useTestApp } from '../helpers/test-app.js';
import { HOUR_MS } from '../../services/time/durations.js';

const t = useTestApp();
const FLEET = 'route-fleet';
const WEEK = '2026-W48';
let key: string;
let otherKey: string;
let admin: string;

beforeAll(async () => {
  key = await t.createKey(FLEET, ['read']);
  otherKey = await t.createKey('other-fleet', ['read']);
  admin = await t.createAdminKey();
  const db = t.tdb.handle.db;
  await sql`update fleets set time_zone = 'Asia/Tokyo', name = 'Route & "Test" <Fleet>' where fleet_id = ${FLEET}`.execute(
    db,
  );
  await db
    .insertInto('vehicles')
    .values({ vehicle_id: 'RT-1', fleet_id: FLEET, label: '=cmd|" /C calc"!A0' })
    .execute();
  await db
    .insertInto('findings')
    .values({
      vehicle_id: 'RT-1',
      finding_id: 'finding-rt-1',
      fleet_id: FLEET,
      finding_key: 'slow-warmup@2026-10-01T00:00:00.000Z',
      kind: 'slow-warmup',
      severity: 'warning',
      confidence: 0.8,
      first_seen: new Date(Date.UTC(2026, 10, 10)),
      last_seen: new Date(Date.UTC(2026, 10, 26)),
      summary: 'Warm-ups take <twice> as long.',
      recommended_check: `Check the thermostat. ${SAFETY_CAUTION}`,
      trouble_code: 'P0128',
      metrics: '{}',
      evidence: '[]',
    })
    .execute();
  await db
    .insertInto('vehicle_analysis')
    .values({ vehicle_id: 'RT-1', fleet_id: FLEET, risk_score: 44, open_findings: 1, max_severity: 'warning' })
    .execute();
});

const get = (url: string, k = key) => t.app.inject({ method: 'GET', url, headers: t.auth(k) });

describe('GET /v1/reports/weekly', () => {
  it("answers the JSON report of the key's fleet with the work list and the caution split from the check", async () => {
    const res = await get(`/v1/reports/weekly?week=${WEEK}`);
    expect(res.statusCode, res.body).toBe(200);
    expect(res.headers['content-type']).toMatch(/^application\/json/);
    const r = res.json();
    expect(r.week).toMatchObject({
      isoWeek: WEEK,
      firstDay: '2026-11-23',
      lastDay: '2026-11-29',
      start: '2026-11-22T15:00:00.000Z',
    });
    expect(r.workList).toEqual([
      expect.objectContaining({
        rank: 1,
        vehicleId: 'RT-1',
        priority: 'book this week',
        since: '2026-11-10',
        check: 'Check the thermostat.',
        troubleCode: 'P0128',
        checks: ['Check the thermostat.'],
        findings: [expect.objectContaining({ findingId: 'finding-rt-1', status: 'open' })],
      }),
    ]);
    expect(r.workList[0].cautions[0]).toBe(SAFETY_CAUTION);
    expect(r.findings.totals).toEqual({ new: 0, ongoing: 1, resolved: 0 });
  });

  it('answers self-contained HTML with escaped text, inline SVG and no external URL', async () => {
    const res = await get(`/v1/reports/weekly?week=${WEEK}&format=html`);
    expect(res.statusCode).toBe(200);
    expect(res.headers['content-type']).toMatch(/^text\/html/);
    const html = res.body;
    expect(html).toContain('Route &amp; &quot;Test&quot; &lt;Fleet&gt;');
    expect(html).toContain('Warm-ups take &lt;twice&gt; as long.');
    expect(html).toContain('id="legend"');
    expect(html).toContain('related code P0128 (OBD-II) / SPN 110 FMI 18 (J1939)');
    expect(html).toContain('id="coverage"');
    expect(html.match(/<svg class="chart"/g)).toHaveLength(2);
    expect(html).not.toMatch(/https?:\/\//i);
    expect(html).not.toMatch(/\bsrc\s*=|@import|url\((?!#)/i);
    expect([...html.matchAll(/href="([^"]*)"/g)].every((m) => m[1]!.startsWith('#'))).toBe(true);
  });

  it('answers the CSV work list as an attachment, with a formula-looking label defused', async () => {
    const res = await get(`/v1/reports/weekly?week=${WEEK}&format=csv`);
    expect(res.statusCode).toBe(200);
    expect(res.headers['content-type']).toMatch(/^text\/csv/);
    expect(res.headers['content-disposition']).toBe(`attachment; filename="weekly-report-${FLEET}-${WEEK}.csv"`);
    const [header, row] = res.body.split('\r\n');
    expect(header!.startsWith('rank,vehicleId,label,')).toBe(true);
    expect(row).toContain(`1,RT-1,"'=cmd|"" /C calc""!A0",44,book this week`);
  });

  it("keeps fleets apart: another fleet's key gets 403, an admin must name the fleet, an unknown fleet is 404", async () => {
    expect((await get(`/v1/reports/weekly?week=${WEEK}&fleet=${FLEET}`, otherKey)).statusCode).toBe(403);
    const other = await get(`/v1/reports/weekly?week=${WEEK}`, otherKey);
    expect(other.statusCode).toBe(200);
    expect(other.json().workList).toEqual([]);
    expect((await get(`/v1/reports/weekly?week=${WEEK}`, admin)).statusCode).toBe(400);
    expect((await get(`/v1/reports/weekly?week=${WEEK}&fleet=${FLEET}`, admin)).json().fleet.fleetId).toBe(FLEET);
    expect((await get(`/v1/reports/weekly?week=${WEEK}&fleet=nope`, admin)).statusCode).toBe(404);
  });

  it('answers 400 for a malformed week, a week the year does not have, a week not started and an unknown format', async () => {
    for (const q of ['week=2026-48', 'week=2025-W53', 'week=2999-W01', `week=${WEEK}&format=pdf`]) {
      const res = await get(`/v1/reports/weekly?${q}`);
      expect(res.statusCode, q).toBe(400);
      expect(res.json().error.code).toBe('validation_failed');
    }
    expect((await t.app.inject({ method: 'GET', url: `/v1/reports/weekly?week=${WEEK}` })).statusCode).toBe(401);
  });

  it('is documented in /openapi.json under the reports tag with its three media types', async () => {
    const doc = (await t.app.inject({ method: 'GET', url: '/openapi.json' })).json();
    const op = doc.paths['/v1/reports/weekly'].get;
    expect(op.tags).toEqual(['reports']);
    expect(Object.keys(op.responses['200'].content).sort()).toEqual(['application/json', 'text/csv', 'text/html']);
    expect(op.parameters.map((p: { name: string }) => p.name)).toEqual(
      expect.arrayContaining(['week', 'format', 'fleet', 'refresh']),
    );
  });
});

describe('the report archive and the scheduler', () => {
  it('replaces the archived report when a week is built again', async () => {
    const db = t.tdb.handle.db;
    await generateWeeklyReport(db, { fleetId: FLEET, week: '2026-W47', now: Date.UTC(2026, 10, 24) });
    await generateWeeklyReport(db, { fleetId: FLEET, week: '2026-W47', now: Date.UTC(2026, 10, 25) });
    const rows = await db
      .selectFrom('weekly_reports')
      .select(['generated_at', 'report_json'])
      .where('fleet_id', '=', FLEET)
      .where('iso_week', '=', '2026-W47')
      .execute();
    expect(rows).toHaveLength(1);
    expect(rows[0]!.generated_at.toISOString()).toBe('2026-11-25T00:00:00.000Z');
    expect((rows[0]!.report_json as { generatedAt: string }).generatedAt).toBe('2026-11-25T00:00:00.000Z');
  });

  it("builds the last complete week once the weekday and hour have come in the fleet's time zone, and only once", async () => {
    const log: string[] = [];
    const scheduler = new WeeklyReportScheduler({ db: t.tdb.handle.db, weekday: 1, hour: 6, log: (m) => log.push(m) });
    // Monday 2027-03-08 06:00 in Tokyo (UTC+9) is Sunday 21:00 UTC; the fleet in UTC waits till Monday 06:00 UTC,
    // and on Sunday catches up on its last complete week, W08, never built in this database.
    const dueTokyo = Date.UTC(2027, 2, 7, 21);
    expect(scheduler.dueAt(dueTokyo, 'Asia/Tokyo')).toBe(dueTokyo);
    expect(await scheduler.tick(dueTokyo - 60_000)).toEqual(['other-fleet/2027-W08']);
    expect(await scheduler.tick(dueTokyo)).toEqual([`${FLEET}/2027-W09`]);
    expect(await scheduler.tick(dueTokyo + HOUR_MS)).toEqual([]);
    expect(await scheduler.tick(Date.UTC(2027, 2, 8, 6))).toEqual(['other-fleet/2027-W09']);
    expect(await scheduler.tick(Date.UTC(2027, 2, 8, 7))).toEqual([]);
    expect(log.every((m) => m.endsWith('built'))).toBe(true);
    await scheduler.stop();
  });
});
