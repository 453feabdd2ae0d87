import { sql } from 'kysely';
import { beforeAll, describe, expect, it } from 'vitest';
import type { Finding } from '../../services/analysis/findings/finding.js';
import { refreshVehicleRisk } from '../../services/db/vehicle-risk.js';
import { syncFindings } from '../../services/db/findings-sync.js';
import { useTestApp } from '../helpers/test-app.js';
import { DAY_MS } from '../../services/time/durations.js';

const t = useTestApp();
const T = Date.UTC(2026, 10, 1);
let keyA: string;
let keyB: string;
let admin: string;

function finding(kind: Finding['kind'], severity: Finding['severity'], confidence: number): Finding {
  return {
    key: `${kind}@2026-09-01T00:00:00.000Z`,
    kind,
    subKind: null,
    severity,
    confidence,
    firstSeen: T - 5 * DAY_MS,
    lastSeen: T,
    summary: `${kind} seen`,
    recommendedCheck: 'Check it.',
    troubleCode: kind === 'slow-warmup' ? 'P0128' : null,
    metrics: { medianZ: 2 },
    evidence: [{ at: T - DAY_MS, scope: 'run', metric: 'timeToTargetS', value: 900, expected: 400, z: 3 }],
  };
}

/** A vehicle of `fleet` analysed up to T with these findings (through the worker's own sync). */
async function seed(vehicleId: string, fleet: string, findings: Finding[]) {
  const db = t.tdb.handle.db;
  await sql`insert into vehicles (vehicle_id, fleet_id) values (${vehicleId}, ${fleet})`.execute(db);
  await sql`insert into vehicle_analysis (vehicle_id, fleet_id, last_reading_at) values (${vehicleId}, ${fleet}, to_timestamp(${T / 1000}))`.execute(
    db,
  );
  await db.transaction().execute(async (trx) => {
    await syncFindings(trx, { vehicleId, fleetId: fleet, asOfMs: T, derived: findings, quietPeriodMs: 14 * DAY_MS });
    await refreshVehicleRisk(trx, vehicleId);
  });
}

const get = (url: string, key = keyA) => t.app.inject({ method: 'GET', url, headers: t.auth(key) });

beforeAll(async () => {
  keyA = await t.createKey('fleet-a', ['read']);
  keyB = await t.createKey('fleet-b', ['read']);
  admin = await t.createAdminKey();
  await seed('A-LOW', 'fleet-a', [finding('overshoot', 'advisory', 0.5)]);
  await seed('A-HIGH', 'fleet-a', [finding('boil-margin', 'critical', 0.9), finding('slow-warmup', 'advisory', 0.6)]);
  await seed('A-MID', 'fleet-a', [finding('slow-warmup', 'warning', 0.7)]);
  await seed('A-NONE', 'fleet-a', []);
  await seed('B-1', 'fleet-b', [finding('sensor-fault', 'critical', 1)]);
});

describe('GET /v1/fleet/at-risk', () => {
  it("lists the fleet's vehicles with open findings, highest risk first, each with its findings most severe first", async () => {
    const res = await get('/v1/fleet/at-risk');
    expect(res.statusCode).toBe(200);
    const vehicles = res.json().vehicles as Array<{
      vehicleId: string;
      riskScore: number;
      findings: Array<{ kind: string; severity: string }>;
    }>;
    expect(vehicles.map((v) => v.vehicleId)).toEqual(['A-HIGH', 'A-MID', 'A-LOW']);
    const risks = vehicles.map((v) => v.riskScore);
    expect([...risks].sort((a, b) => b - a)).toEqual(risks);
    expect(vehicles[0]!.findings.map((f) => f.severity)).toEqual(['critical', 'advisory']);
    expect(Object.keys(vehicles[0]!.findings[0]!).sort()).toEqual([
      'confidence',
      'defaultProfile',
      'deferredUntil',
      'firstSeen',
      'id',
      'kind',
      'lastSeen',
      'profileNote',
      'recommendedCheck',
      'severity',
      'status',
      'summary',
      'troubleCode',
    ]);
  });

  it('keeps only vehicles and findings at or above minSeverity, and honours limit', async () => {
    const res = await get('/v1/fleet/at-risk?minSeverity=warning');
    const vehicles = res.json().vehicles as Array<{ vehicleId: string; findings: Array<{ severity: string }> }>;
    expect(vehicles.map((v) => v.vehicleId)).toEqual(['A-HIGH', 'A-MID']);
    expect(vehicles[0]!.findings.map((f) => f.severity)).toEqual(['critical']);
    expect((await get('/v1/fleet/at-risk?limit=1')).json().vehicles).toHaveLength(1);
    expect((await get('/v1/fleet/at-risk?minSeverity=severe')).statusCode).toBe(400);
  });

  it("never shows another fleet's vehicles; an admin key sees every fleet", async () => {
    expect(
      (await get('/v1/fleet/at-risk', keyB)).json().vehicles.map((v: { vehicleId: string }) => v.vehicleId),
    ).toEqual(['B-1']);
    expect((await get('/v1/fleet/at-risk?fleet=fleet-a', keyB)).statusCode).toBe(403);
    expect((await get('/v1/fleet/at-risk', admin)).json().vehicles).toHaveLength(4);
    expect((await t.app.inject({ method: 'GET', url: '/v1/fleet/at-risk' })).statusCode).toBe(401);
  });
});

describe('findings', () => {
  it("filters the fleet's findings by status and kind", async () => {
    const all = (await get('/v1/findings')).json().findings as Array<{
      vehicleId: string;
      kind: string;
      status: string;
      evidence: unknown[];
    }>;
    expect(all).toHaveLength(4);
    expect(all.every((f) => f.vehicleId.startsWith('A-') && f.evidence.length === 1)).toBe(true);
    const slow = (await get('/v1/findings?kind=slow-warmup&status=open')).json().findings as Array<{
      vehicleId: string;
    }>;
    expect(slow.map((f) => f.vehicleId).sort()).toEqual(['A-HIGH', 'A-MID']);
    expect((await get('/v1/findings?status=resolved')).json().findings).toEqual([]);
  });

  it('acknowledges an open finding once, for the key that did it, and keeps the vehicle at risk', async () => {
    const [mid] = (await get('/v1/vehicles/A-MID/findings')).json().findings as Array<{
      id: string;
      status: string;
      troubleCode: string | null;
    }>;
    expect(mid).toMatchObject({ status: 'open', troubleCode: 'P0128' });
    const ack = await t.app.inject({
      method: 'POST',
      url: `/v1/findings/${mid!.id}/acknowledge`,
      headers: t.auth(keyA),
    });
    expect(ack.statusCode).toBe(200);
    expect(ack.json()).toMatchObject({ id: mid!.id, status: 'acknowledged', acknowledgedBy: expect.any(String) });
    const again = await t.app.inject({
      method: 'POST',
      url: `/v1/findings/${mid!.id}/acknowledge`,
      headers: t.auth(keyA),
    });
    expect(again.json().acknowledgedAt).toBe(ack.json().acknowledgedAt);
    expect((await get('/v1/fleet/at-risk')).json().vehicles.map((v: { vehicleId: string }) => v.vehicleId)).toEqual([
      'A-HIGH',
      'A-MID',
      'A-LOW',
    ]);
    expect((await get('/v1/findings?status=acknowledged')).json().findings).toHaveLength(1);
  });

  it("refuses to acknowledge another fleet's finding, an unknown one and a resolved one", async () => {
    const [b] = (await get('/v1/vehicles/B-1/findings', keyB)).json().findings as Array<{ id: string }>;
    expect(
      (await t.app.inject({ method: 'POST', url: `/v1/findings/${b!.id}/acknowledge`, headers: t.auth(keyA) }))
        .statusCode,
    ).toBe(403);
    expect(
      (await t.app.inject({ method: 'POST', url: '/v1/findings/no-such-id/acknowledge', headers: t.auth(keyA) }))
        .statusCode,
    ).toBe(404);
    await sql`update findings set status = 'resolved' where vehicle_id = 'B-1'`.execute(t.tdb.handle.db);
    const res = await t.app.inject({ method: 'POST', url: `/v1/findings/${b!.id}/acknowledge`, headers: t.auth(keyB) });
    expect(res.statusCode).toBe(409);
    expect(res.json().error.code).toBe('conflict');
  });

  it("answers 404 for an unknown vehicle and 403 for another fleet's vehicle", async () => {
    expect((await get('/v1/vehicles/NOPE/findings')).statusCode).toBe(404);
    expect((await get('/v1/vehicles/B-1/findings')).statusCode).toBe(403);
    expect((await get('/v1/vehicles/B-1/runs')).statusCode).toBe(403);
    expect((await get('/v1/vehicles/B-1/readings')).statusCode).toBe(403);
  });
});

describe('analysis runs', () => {
  it('answers 202 with a status URL that reports the finished run to its own fleet only', async () => {
    const res = await t.app.inject({ method: 'POST', url: '/v1/analysis/runs', headers: t.auth(keyA) });
    expect(res.statusCode).toBe(202);
    const { runId, statusUrl } = res.json() as { runId: string; statusUrl: string };
    expect(res.headers.location).toBe(statusUrl);
    let status = (await get(statusUrl)).json();
    while (status.status === 'running') status = (await get(statusUrl)).json();
    expect(status).toMatchObject({
      runId,
      fleetId: 'fleet-a',
      status: 'succeeded',
      vehiclesAnalysed: 0,
      vehiclesFailed: 0,
    });
    expect((await get(statusUrl, keyB)).statusCode).toBe(403);
    expect((await get('/v1/analysis/runs/unknown')).statusCode).toBe(404);
  });
});

describe('OpenAPI', () => {
  it('documents every planner route with tags and response schemas', async () => {
    const doc = (await t.app.inject({ method: 'GET', url: '/openapi.json' })).json() as {
      paths: Record<string, Record<string, { tags?: string[]; responses?: Record<string, unknown> }>>;
    };
    const routes: Array<[string, string]> = [
      ['/v1/fleet/at-risk', 'get'],
      ['/v1/findings', 'get'],
      ['/v1/findings/{findingId}/acknowledge', 'post'],
      ['/v1/vehicles/{vehicleId}/runs', 'get'],
      ['/v1/vehicles/{vehicleId}/findings', 'get'],
      ['/v1/vehicles/{vehicleId}/readings', 'get'],
      ['/v1/vehicles/{vehicleId}/service-events', 'post'],
      ['/v1/analysis/runs', 'post'],
      ['/v1/analysis/runs/{runId}', 'get'],
    ];
    for (const [path, method] of routes) {
      const op = doc.paths[path]?.[method];
      expect(op?.tags?.length, `${method} ${path}`).toBeGreaterThan(0);
      expect(Object.keys(op?.responses ?? {}), `${method} ${path}`).toEqual(expect.arrayContaining(['401', '403']));
    }
  });
});
