import { sql } from 'kysely';
import { beforeAll, describe, expect, it } from 'vitest';
import type { Finding } from '../../services/analysis/findings/finding.js';
import { refreshVehicleRisk } from '../../services/db/vehicle-risk.js';
import { createAnalysisStore } from '../../services/db/analysis-results-repository.js';
import { syncFindings } from '../../services/db/findings-sync.js';
import { useTestApp } from '../helpers/test-app.js';
import { postReadings } from '../helpers/worker-fleet.js';
import { DAY_MS } from '../../services/time/durations.js';

const t = useTestApp();
const T = Date.now() - DAY_MS;
let key: string;
let readOnly: string;
let other: string;
let admin: string;

const api = (method: 'GET' | 'PUT' | 'DELETE', url: string, payload?: object, k = key) =>
  t.app.inject({ method, url, headers: t.auth(k), ...(payload ? { payload } : {}) });

const boil: Finding = {
  key: 'boil-margin@2026-01-01T00:00:00.000Z',
  kind: 'boil-margin',
  subKind: null,
  severity: 'critical',
  confidence: 0.9,
  firstSeen: T - 3 * DAY_MS,
  lastSeen: T,
  summary:
    'On 2026-11-20 the coolant reached 118 °C, only 2 °C below its boiling point of 120 °C under the pressure cap.',
  recommendedCheck: 'Pressure-test the cap.',
  troubleCode: 'P0217',
  metrics: { boilingPointC: 120, minMarginC: 2, daysThin: 1 },
  evidence: [{ at: T, scope: 'day', metric: 'peakCoolantC', value: 118, expected: 120, z: null }],
};

async function storeFindings(vehicleId: string): Promise<void> {
  const db = t.tdb.handle.db;
  await sql`insert into vehicle_analysis (vehicle_id, fleet_id, last_reading_at) values (${vehicleId}, 'fleet-dep', to_timestamp(${T / 1000})) on conflict do nothing`.execute(
    db,
  );
  await db.transaction().execute(async (trx) => {
    await syncFindings(trx, {
      vehicleId,
      fleetId: 'fleet-dep',
      asOfMs: T,
      derived: [boil],
      quietPeriodMs: 14 * DAY_MS,
    });
    await refreshVehicleRisk(trx, vehicleId);
  });
}

beforeAll(async () => {
  key = await t.createKey('fleet-dep', ['ingest', 'read']);
  readOnly = await t.createKey('fleet-dep', ['read']);
  other = await t.createKey('fleet-dep-other', ['ingest', 'read']);
  admin = await t.createAdminKey();
  await postReadings(
    t,
    key,
    [0, 1, 2].map((i) => `{"vehicleId":"DEP-1","ts":${T - i * 60_000},"coolant":${100 - i * 10},"ambient":20}`),
  );
  await storeFindings('DEP-1');
});

describe('depots', () => {
  it('registers a depot by altitude, sets its pressure by the standard atmosphere, and lists it', async () => {
    const res = await api('PUT', '/v1/depots/high-yard', { name: 'High yard', siteAltitudeM: 2000 });
    expect(res.statusCode, res.body).toBe(201);
    // ISO 2533 standard atmosphere: 79.50 kPa at 2000 m (published table, from memory).
    expect(res.json()).toMatchObject({
      depotId: 'high-yard',
      fleetId: 'fleet-dep',
      name: 'High yard',
      siteAltitudeM: 2000,
      siteGiven: true,
      vehicles: 0,
    });
    expect(res.json().atmosphericPressureKpa).toBeCloseTo(79.5, 1);
    expect((await api('PUT', '/v1/depots/high-yard', { name: 'High yard (north)' })).statusCode).toBe(200);
    expect((await api('GET', '/v1/depots/high-yard')).json()).toMatchObject({
      name: 'High yard (north)',
      siteAltitudeM: 2000,
    });
    expect((await api('GET', '/v1/depots')).json().depots.map((d: { depotId: string }) => d.depotId)).toEqual([
      'high-yard',
    ]);
  });

  it('gives its site to the vehicles that name it and have none of their own, in the profile, the findings, the at-risk list and the worker', async () => {
    expect((await api('PUT', '/v1/vehicles/DEP-1', { depot: 'high-yard' })).json()).toMatchObject({
      depot: 'high-yard',
      siteSource: 'depot',
      depotName: 'High yard (north)',
    });
    const vehicle = (await api('GET', '/v1/vehicles/DEP-1')).json();
    expect(vehicle.atmosphericPressureKpa).toBeCloseTo(79.5, 1);
    const [state] = await createAnalysisStore(t.tdb.handle.db).vehicleStates(['DEP-1']);
    expect(state!.profile.atmosphericPressureKpa).toBeCloseTo(79.5, 1);
    const finding = (await api('GET', '/v1/vehicles/DEP-1/findings')).json().findings[0];
    expect(finding).toMatchObject({ depot: 'high-yard', siteSource: 'depot' });
    expect(finding.atmosphericPressureKpa).toBeCloseTo(79.5, 1);
    expect((await api('GET', '/v1/fleet/at-risk')).json().vehicles[0]).toMatchObject({
      vehicleId: 'DEP-1',
      depot: 'high-yard',
      siteSource: 'depot',
    });
    expect((await api('GET', '/v1/fleet/at-risk?depot=elsewhere')).json().vehicles).toEqual([]);
    expect((await api('GET', '/v1/depots/high-yard')).json().vehicles).toBe(1);
    // A vehicle's own site wins over its depot's.
    expect(
      (await api('PUT', '/v1/vehicles/DEP-2', { depot: 'high-yard', atmosphericPressureKpa: 95 })).json(),
    ).toMatchObject({ atmosphericPressureKpa: 95, siteSource: 'vehicle' });
  });

  it("re-analyses the depot's vehicles when its site changes", async () => {
    await sql`delete from analysis_queue`.execute(t.tdb.handle.db);
    expect(
      (await api('PUT', '/v1/depots/high-yard', { atmosphericPressureKpa: 85 })).json().atmosphericPressureKpa,
    ).toBe(85);
    const queued = await t.tdb.handle.db.selectFrom('analysis_queue').select('vehicle_id').execute();
    expect(queued.map((q) => q.vehicle_id)).toEqual(['DEP-1']);
  });

  it('registers a depot a vehicle names for the first time, without a site', async () => {
    await api('PUT', '/v1/vehicles/DEP-3', { depot: 'river-yard' });
    expect((await api('GET', '/v1/depots/river-yard')).json()).toMatchObject({
      siteGiven: false,
      atmosphericPressureKpa: 101.325,
      vehicles: 1,
    });
  });

  it('keeps fleets apart, needs the ingest scope to write, and refuses to delete a depot vehicles still name', async () => {
    expect((await api('GET', '/v1/depots/high-yard', undefined, other)).statusCode).toBe(404);
    expect((await api('GET', '/v1/depots', undefined, other)).json().depots).toEqual([]);
    expect((await api('GET', '/v1/depots/high-yard?fleet=fleet-dep', undefined, other)).statusCode).toBe(403);
    expect((await api('PUT', '/v1/depots/high-yard', { name: 'x' }, readOnly)).statusCode).toBe(403);
    expect((await api('PUT', '/v1/depots/high-yard', { name: 'x' }, admin)).statusCode).toBe(400);
    expect((await api('PUT', '/v1/depots/x?fleet=no-such-fleet', { name: 'x' }, admin)).statusCode).toBe(404);
    expect((await api('GET', '/v1/depots/high-yard?fleet=fleet-dep', undefined, admin)).statusCode).toBe(200);
    expect((await api('PUT', '/v1/depots/high-yard', { siteAltitudeM: 9000 })).statusCode).toBe(400);
    expect((await api('PUT', '/v1/depots/high-yard', { colour: 'red' })).statusCode).toBe(400);
    expect((await api('DELETE', '/v1/depots/high-yard')).statusCode).toBe(409);
    await api('PUT', '/v1/depots/empty-yard', {});
    expect((await api('DELETE', '/v1/depots/empty-yard')).statusCode).toBe(200);
    expect((await api('DELETE', '/v1/depots/empty-yard')).statusCode).toBe(404);
  });
});

describe('the default-profile flag on findings', () => {
  it('marks the findings of a vehicle on the default profile, says which figures are assumed, and drops it once a profile is set', async () => {
    await sql`insert into vehicles (vehicle_id, fleet_id) values ('DEP-9', 'fleet-dep')`.execute(t.tdb.handle.db);
    await storeFindings('DEP-9');
    const f = (await api('GET', '/v1/findings?vehicle=DEP-9')).json().findings[0];
    expect(f).toMatchObject({
      defaultProfile: true,
      profileNote: expect.stringMatching(/boiling point assumes the default profile \(100 kPa cap, 50 % glycol/),
    });
    const brief = (await api('GET', '/v1/fleet/at-risk'))
      .json()
      .vehicles.find((v: { vehicleId: string }) => v.vehicleId === 'DEP-9');
    expect(brief).toMatchObject({
      defaultProfile: true,
      findings: [{ defaultProfile: true, profileNote: expect.any(String) }],
    });
    await api('PUT', '/v1/vehicles/DEP-9', { capPressureKpa: 110, glycolPercent: 50 });
    expect((await api('GET', '/v1/vehicles/DEP-9/findings')).json().findings[0]).toMatchObject({
      defaultProfile: false,
      profileNote: null,
    });
  });
});

describe('?unit=F', () => {
  it('answers findings in °F: temperatures with the offset, margins without, sentences too, and says so', async () => {
    const res = await api('GET', '/v1/findings?vehicle=DEP-1&unit=F');
    expect(res.headers['x-temperature-unit']).toBe('F');
    const body = res.json();
    expect(body.unit).toBe('F');
    expect(body.findings[0].metrics).toEqual({ boilingPointC: 248, minMarginC: 3.6, daysThin: 1 });
    expect(body.findings[0].evidence[0]).toMatchObject({ metric: 'peakCoolantC', value: 244.4, expected: 248 });
    expect(body.findings[0].summary).toBe(
      'On 2026-11-20 the coolant reached 244 °F, only 4 °F below its boiling point of 248 °F under the pressure cap.',
    );
    const c = await api('GET', '/v1/findings?vehicle=DEP-1');
    expect(c.headers['x-temperature-unit']).toBe('C');
    expect(c.json()).toMatchObject({ unit: 'C', findings: [{ metrics: { boilingPointC: 120 } }] });
  });

  it("converts readings, runs, days, the at-risk list, the vehicle profile and a vehicle's findings", async () => {
    const readings = (await api('GET', '/v1/vehicles/DEP-1/readings?unit=F&maxPoints=2')).json();
    expect(readings.unit).toBe('F');
    expect(Math.max(...readings.points.map((p: { coolantMaxC: number }) => p.coolantMaxC))).toBe(212);
    expect(readings.points[0].ambientC).toBe(68);
    const db = t.tdb.handle.db;
    await sql`insert into engine_runs (vehicle_id, start_ts, end_ts, start_kind, open, metrics)
              values ('DEP-1', to_timestamp(${T / 1000}), to_timestamp(${T / 1000 + 3600}), 'cold', false, '{"peakCoolantC": 100, "overshootC": 5, "timeToTargetS": 600}'::jsonb)`.execute(
      db,
    );
    await sql`insert into vehicle_days (vehicle_id, day, metrics) values ('DEP-1', '2026-11-20', '{"peakCoolantC": 0, "engineHours": 2}'::jsonb)`.execute(
      db,
    );
    expect((await api('GET', '/v1/vehicles/DEP-1/runs?unit=F')).json().runs[0].metrics).toEqual({
      peakCoolantC: 212,
      overshootC: 9,
      timeToTargetS: 600,
    });
    expect((await api('GET', '/v1/vehicles/DEP-1/days?unit=F')).json().days[0].metrics).toEqual({
      peakCoolantC: 32,
      engineHours: 2,
    });
    expect((await api('GET', '/v1/fleet/at-risk?unit=F')).json().vehicles[0].findings[0].summary).toContain('244 °F');
    expect((await api('GET', '/v1/vehicles/DEP-1?unit=F')).json()).toMatchObject({
      unit: 'F',
      thermostatOpenC: 190.4,
      capPressureKpa: 100,
    });
    expect((await api('GET', '/v1/vehicles?unit=F')).json().vehicles[0].thermostatOpenC).toBe(190.4);
    expect((await api('GET', '/v1/vehicles/DEP-1/findings?unit=F')).json().findings[0].metrics.boilingPointC).toBe(248);
  });

  it('answers 400 for any other unit, on every endpoint that takes one', async () => {
    for (const url of [
      '/v1/findings',
      '/v1/vehicles/DEP-1/findings',
      '/v1/vehicles/DEP-1/readings',
      '/v1/vehicles/DEP-1/runs',
      '/v1/vehicles/DEP-1/days',
      '/v1/fleet/at-risk',
      '/v1/vehicles/DEP-1',
      '/v1/vehicles',
      '/v1/reports/weekly',
    ]) {
      for (const unit of ['K', 'f', 'fahrenheit', '']) {
        const res = await api('GET', `${url}?unit=${unit}`);
        expect(res.statusCode, `${url}?unit=${unit}`).toBe(400);
      }
    }
  });

  it('documents the unit parameter and the unit field in /openapi.json', async () => {
    const doc = (await t.app.inject({ method: 'GET', url: '/openapi.json' })).json() as {
      paths: Record<
        string,
        Record<string, { parameters?: Array<{ name: string }>; responses: Record<string, unknown> }>
      >;
    };
    for (const path of [
      '/v1/findings',
      '/v1/vehicles/{vehicleId}/findings',
      '/v1/vehicles/{vehicleId}/readings',
      '/v1/vehicles/{vehicleId}/runs',
      '/v1/vehicles/{vehicleId}/days',
      '/v1/fleet/at-risk',
      '/v1/vehicles/{vehicleId}',
      '/v1/vehicles',
      '/v1/reports/weekly',
    ]) {
      expect(
        (doc.paths[path]!.get!.parameters ?? []).map((p) => p.name),
        path,
      ).toContain('unit');
    }
    for (const path of ['/v1/depots', '/v1/depots/{depotId}'])
      expect(Object.keys(doc.paths[path]!), path).toEqual(expect.arrayContaining(['get']));
    expect(Object.keys(doc.paths['/v1/depots/{depotId}']!)).toEqual(expect.arrayContaining(['put', 'delete']));
  });
});
