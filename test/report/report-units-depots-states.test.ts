import { sql } from 'kysely';
import { beforeAll, describe, expect, it } from 'vitest';
import { temperatureIn } from '../../services/analysis/physics/temperature-unit.js';
import { WORK_LIST_COLUMNS } from '../../services/report/csv-work-list.js';
import type { WeeklyReport } from '../../services/report/weekly-report-schema.js';
import { useTestApp } from '../helpers/test-app.js';
import { seedFleetThroughApi, SEED_WEEK, SEED_WEEK_END_MS, type SeededFleet } from './analysed-fleet.js';

// The demo fleet's data runs to the end of 2026-W48; both W47 and W48 have ended.
const t = useTestApp();
const W47 = '2026-W47';
const W47_END_MS = SEED_WEEK_END_MS - 7 * 86_400_000;
let seeded: SeededFleet;
let w48: WeeklyReport;

const get = (url: string) => t.app.inject({ method: 'GET', url, headers: t.auth(seeded.key) });
const report = async (week: string, extra = '') => {
  const res = await get(`/v1/reports/weekly?week=${week}&refresh=true${extra}`);
  expect(res.statusCode, res.body).toBe(200);
  return res;
};
const statusIn = (r: WeeklyReport, findingId: string) =>
  r.workList.flatMap((w) => w.findings).find((f) => f.findingId === findingId);

beforeAll(async () => {
  seeded = await seedFleetThroughApi(t);
  w48 = (await report(SEED_WEEK)).json() as WeeklyReport;
  expect(w48.workList.length).toBeGreaterThan(1);
}, 300_000);

describe('?unit=F on the weekly report', () => {
  it('gives every temperature of the JSON in °F, numbers and sentences, and says so', async () => {
    const res = await report(SEED_WEEK, '&unit=F');
    expect(res.headers['x-temperature-unit']).toBe('F');
    const f = res.json() as WeeklyReport;
    expect(f.unit).toBe('F');
    expect(f.workList.map((w) => w.vehicleId)).toEqual(w48.workList.map((w) => w.vehicleId));
    const [c, F] = [w48.vehicles[0]!, f.vehicles[0]!];
    expect(F.peaks.boilingPointC).toBeCloseTo(temperatureIn(c.peaks.boilingPointC, 'F'), 2);
    expect(F.warmup.thermostatOpenC).toBeCloseTo(c.warmup.thermostatOpenC * 1.8 + 32, 2);
    expect(F.capPressureKpa).toBe(c.capPressureKpa);
    if (c.peaks.trend) expect(F.peaks.trend!.senSlopeCPerDay).toBeCloseTo(c.peaks.trend.senSlopeCPerDay * 1.8, 2);
    const texts = f.workList.flatMap((w) => [w.why, w.check, ...w.findings.map((x) => x.why)]).join(' ');
    expect(texts).toContain('°F');
    expect(texts).not.toContain('°C');
  });

  it('renders the HTML and the CSV in °F', async () => {
    const html = (await report(SEED_WEEK, '&unit=F&format=html')).body;
    expect(html).toContain('coolant °F');
    expect(html).toContain('temperature °F');
    // Only the method note (the 20 °F criterion stated in both units) keeps °C.
    expect(html.match(/°C/g) ?? []).toHaveLength(1);
    const csv = await report(SEED_WEEK, '&unit=F&format=csv');
    expect(csv.headers['x-temperature-unit']).toBe('F');
    const [header, first] = csv.body.split('\r\n');
    expect(header).toBe(WORK_LIST_COLUMNS.join(','));
    expect(first!.endsWith(',F')).toBe(true);
    expect((await get(`/v1/reports/weekly?week=${SEED_WEEK}&unit=kelvin`)).statusCode).toBe(400);
  });
});

describe('depots and default profiles in the report', () => {
  it('shows the depot of a work-list vehicle and marks the findings of one on the default profile', async () => {
    const [a, b] = [w48.workList[0]!.vehicleId, w48.workList[1]!.vehicleId];
    expect(
      (
        await t.app.inject({
          method: 'PUT',
          url: `/v1/vehicles/${a}`,
          headers: t.auth(seeded.key),
          payload: { depot: 'east-depot' },
        })
      ).statusCode,
    ).toBe(200);
    await sql`update vehicles set profile_set_at = null where vehicle_id = ${b}`.execute(t.tdb.handle.db);
    const r = (await report(SEED_WEEK)).json() as WeeklyReport;
    expect(r.workList.find((w) => w.vehicleId === a)).toMatchObject({ depot: 'east-depot', defaultProfile: false });
    const row = r.workList.find((w) => w.vehicleId === b)!;
    expect(row.defaultProfile).toBe(true);
    const assumed = row.findings.filter((f) =>
      ['boil-margin', 'overheating-trend', 'freeze-risk', 'slow-warmup', 'overshoot'].includes(f.kind),
    );
    expect(assumed.length).toBeGreaterThan(0);
    for (const f of assumed) expect(f.profileNote, f.kind).toMatch(/assumes? the default profile/);
    expect(r.workList.find((w) => w.vehicleId === a)!.findings.every((f) => f.profileNote === null)).toBe(true);
    const html = (await report(SEED_WEEK, '&format=html')).body;
    expect(html).toContain('depot east-depot');
    expect(html).toContain('class="note profile-note"');
    await sql`update vehicles set profile_set_at = now() where vehicle_id = ${b}`.execute(t.tdb.handle.db);
  });
});

describe("planner decisions in a past week's report", () => {
  it('shows a deferral made after the week ended as not made yet, while the current state says deferred', async () => {
    const target = w48.workList[0]!.findings[0]!;
    const until = new Date(Date.now() + 20 * 86_400_000).toISOString();
    const res = await t.app.inject({
      method: 'POST',
      url: `/v1/findings/${target.findingId}/defer`,
      headers: t.auth(seeded.key),
      payload: { until, reason: 'parts on order' },
    });
    expect(res.statusCode, res.body).toBe(200);
    expect(res.json().status).toBe('deferred');
    expect(statusIn((await report(SEED_WEEK)).json() as WeeklyReport, target.findingId)).toMatchObject({
      status: 'open',
      deferredUntil: null,
    });
  });

  it('shows an acknowledgement and a deferral made during the week as they stood at its end, though both were undone later', async () => {
    const w47 = (await report(W47)).json() as WeeklyReport;
    const [ackd, deferred] = w47.workList
      .flatMap((w) => w.findings)
      .filter((f) => f.status === 'open' && !f.findingId.includes('@'));
    expect(deferred).toBeDefined();
    const act = (path: string, payload?: object) =>
      t.app.inject({
        method: 'POST',
        url: `/v1/findings/${path}`,
        headers: t.auth(seeded.key),
        ...(payload ? { payload } : {}),
      });
    expect((await act(`${ackd!.findingId}/acknowledge`)).statusCode).toBe(200);
    expect(
      (
        await act(`${deferred!.findingId}/defer`, {
          until: new Date(Date.now() + 30 * 86_400_000).toISOString(),
          reason: 'next planned service',
        })
      ).statusCode,
    ).toBe(200);
    // Both decisions were taken two days before W47 ended (the audit and the row say so) ...
    const then = new Date(W47_END_MS - 2 * 86_400_000);
    const db = t.tdb.handle.db;
    await sql`update planner_actions set at = ${then} where subject_id in (${ackd!.findingId}, ${deferred!.findingId})`.execute(
      db,
    );
    await sql`update findings set acknowledged_at = ${then} where finding_id = ${ackd!.findingId}`.execute(db);
    // ... and undone today.
    expect((await act(`${ackd!.findingId}/reopen`)).json().status).toBe('open');
    expect((await act(`${deferred!.findingId}/reopen`)).json().status).toBe('open');
    const again = (await report(W47)).json() as WeeklyReport;
    expect(statusIn(again, ackd!.findingId)).toMatchObject({ status: 'acknowledged' });
    expect(statusIn(again, deferred!.findingId)).toMatchObject({
      status: 'deferred',
      deferredReason: 'next planned service',
      deferredUntil: expect.stringMatching(/^\d{4}-\d{2}-\d{2}$/),
    });
    const html = (await report(W47, '&format=html')).body;
    expect(html).toContain('(acknowledged, not yet repaired)');
    expect(html).toContain('next planned service');
  });
});
