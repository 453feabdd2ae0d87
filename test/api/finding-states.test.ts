import { sql } from 'kysely';
import { beforeAll, describe, expect, it } from 'vitest';
import type { Finding } from '../../services/analysis/findings/finding.js';
import { refreshVehicleRisk } from '../../services/db/vehicle-risk.js';
import { syncFindings } from '../../services/db/findings-sync.js';
import { useTestApp } from '../helpers/test-app.js';
import { DAY_MS } from '../../services/time/durations.js';

const t = useTestApp();
const T = Date.UTC(2026, 10, 1);
let key: string;
let other: string;

function finding(kind: Finding['kind'], severity: Finding['severity']): Finding {
  return {
    key: `${kind}@2026-09-01T00:00:00.000Z`,
    kind,
    subKind: null,
    severity,
    confidence: 0.9,
    firstSeen: T - 5 * DAY_MS,
    lastSeen: T,
    summary: `${kind} seen`,
    recommendedCheck: 'Check it.',
    troubleCode: null,
    metrics: {},
    evidence: [],
  };
}

async function seed(vehicleId: string, findings: Finding[]) {
  const db = t.tdb.handle.db;
  await sql`insert into vehicles (vehicle_id, fleet_id) values (${vehicleId}, 'fleet-s')`.execute(db);
  await sql`insert into vehicle_analysis (vehicle_id, fleet_id, last_reading_at) values (${vehicleId}, 'fleet-s', to_timestamp(${T / 1000}))`.execute(
    db,
  );
  await db.transaction().execute(async (trx) => {
    await syncFindings(trx, {
      vehicleId,
      fleetId: 'fleet-s',
      asOfMs: T,
      derived: findings,
      quietPeriodMs: 14 * DAY_MS,
    });
    await refreshVehicleRisk(trx, vehicleId);
  });
}

const get = (url: string) => t.app.inject({ method: 'GET', url, headers: t.auth(key) });
const post = (url: string, body?: unknown, k = key) =>
  t.app.inject({
    method: 'POST',
    url,
    headers: t.auth(k),
    ...(body === undefined ? {} : { payload: body as Record<string, unknown> }),
  });
const atRisk = async () =>
  (await get('/v1/fleet/at-risk')).json().vehicles as Array<{
    vehicleId: string;
    riskScore: number;
    findings: Array<{ id: string; status: string; deferredUntil: string | null }>;
  }>;
const findingOf = async (vehicleId: string) =>
  ((await get(`/v1/vehicles/${vehicleId}/findings`)).json().findings as Array<{ id: string }>)[0]!.id;

beforeAll(async () => {
  key = await t.createKey('fleet-s', ['read']);
  other = await t.createKey('fleet-o', ['read']);
  await seed('S-BOIL', [finding('boil-margin', 'critical')]);
  await seed('S-WARM', [finding('slow-warmup', 'warning')]);
});

describe('acknowledging a finding', () => {
  it('keeps the vehicle in the at-risk list with the same risk, the finding shown as acknowledged', async () => {
    const before = (await atRisk()).find((v) => v.vehicleId === 'S-BOIL')!;
    const id = await findingOf('S-BOIL');
    expect((await post(`/v1/findings/${id}/acknowledge`)).json()).toMatchObject({ status: 'acknowledged' });
    const after = (await atRisk()).find((v) => v.vehicleId === 'S-BOIL')!;
    expect(after.riskScore).toBe(before.riskScore);
    expect(after.riskScore).toBeGreaterThan(0);
    expect(after.findings[0]).toMatchObject({ id, status: 'acknowledged' });
    expect((await atRisk()).map((v) => v.vehicleId)).toEqual(['S-BOIL', 'S-WARM']);
  });

  it('is undone by reopen, which clears who acknowledged it and is audited', async () => {
    const id = await findingOf('S-BOIL');
    const res = await post(`/v1/findings/${id}/reopen`);
    expect(res.statusCode).toBe(200);
    expect(res.json()).toMatchObject({ status: 'open', acknowledgedAt: null, acknowledgedBy: null });
    expect((await post(`/v1/findings/${id}/reopen`)).json().status).toBe('open');
    const audit = await t.tdb.handle.db
      .selectFrom('planner_actions')
      .select(['action', 'before', 'after'])
      .where('subject_id', '=', id)
      .orderBy('at')
      .execute();
    expect(audit.map((a) => a.action)).toEqual(['acknowledge', 'reopen']);
    expect(audit[1]).toMatchObject({ before: { status: 'acknowledged' }, after: { status: 'open' } });
  });
});

describe('deferring a finding', () => {
  it('keeps it counting for risk and shows the date and reason', async () => {
    const id = await findingOf('S-WARM');
    const until = new Date(Date.now() + 10 * DAY_MS).toISOString();
    const res = await post(`/v1/findings/${id}/defer`, { until, reason: 'booked with the next planned service' });
    expect(res.statusCode).toBe(200);
    expect(res.json()).toMatchObject({
      status: 'deferred',
      deferredUntil: until,
      deferredReason: 'booked with the next planned service',
      deferredBy: expect.any(String),
    });
    const v = (await atRisk()).find((x) => x.vehicleId === 'S-WARM')!;
    expect(v.riskScore).toBeGreaterThan(0);
    expect(v.findings[0]).toMatchObject({ id, status: 'deferred', deferredUntil: until });
    expect((await get('/v1/findings?status=deferred')).json().findings.map((f: { id: string }) => f.id)).toEqual([id]);
  });

  it("refuses a date in the past, a missing reason and another fleet's finding", async () => {
    const id = await findingOf('S-WARM');
    expect((await post(`/v1/findings/${id}/defer`, { until: '2020-01-01', reason: 'x' })).statusCode).toBe(400);
    expect((await post(`/v1/findings/${id}/defer`, { until: '2999-01-01' })).statusCode).toBe(400);
    expect(
      (
        await post(
          `/v1/findings/${id}/defer`,
          { until: new Date(Date.now() + DAY_MS).toISOString(), reason: 'x' },
          other,
        )
      ).statusCode,
    ).toBe(403);
  });

  it('ends on its date at the next analysis pass, back to open', async () => {
    const id = await findingOf('S-WARM');
    await sql`update findings set deferred_until = now() - interval '1 minute' where finding_id = ${id}`.execute(
      t.tdb.handle.db,
    );
    await t.tdb.handle.db.transaction().execute((trx) =>
      syncFindings(trx, {
        vehicleId: 'S-WARM',
        fleetId: 'fleet-s',
        asOfMs: T,
        derived: [finding('slow-warmup', 'warning')],
        quietPeriodMs: 14 * DAY_MS,
      }),
    );
    expect((await get(`/v1/vehicles/S-WARM/findings`)).json().findings[0]).toMatchObject({
      id,
      status: 'open',
      deferredUntil: null,
    });
  });

  it('answers 409 on a resolved finding, for every planner action', async () => {
    const id = await findingOf('S-WARM');
    await sql`update findings set status = 'resolved', resolved_at = now() where finding_id = ${id}`.execute(
      t.tdb.handle.db,
    );
    for (const action of ['acknowledge', 'reopen'])
      expect((await post(`/v1/findings/${id}/${action}`)).statusCode).toBe(409);
    expect(
      (await post(`/v1/findings/${id}/defer`, { until: new Date(Date.now() + DAY_MS).toISOString(), reason: 'x' }))
        .statusCode,
    ).toBe(409);
  });
});

describe('OpenAPI', () => {
  it('documents the defer and reopen actions with tags and the deferred status', async () => {
    const doc = (await t.app.inject({ method: 'GET', url: '/openapi.json' })).json() as {
      paths: Record<string, Record<string, { tags?: string[] }>>;
    };
    for (const action of ['defer', 'reopen'])
      expect(doc.paths[`/v1/findings/{findingId}/${action}`]?.post?.tags).toEqual(['findings']);
    expect(JSON.stringify(doc)).toContain('"deferred"');
  });
});
