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

function finding(kind: Finding['kind']): Finding {
  return {
    key: `${kind}@2026-09-01T00:00:00.000Z`,
    kind,
    subKind: null,
    severity: 'warning',
    confidence: 0.8,
    firstSeen: T - 5 * DAY_MS,
    lastSeen: T,
    summary: `${kind} seen`,
    recommendedCheck: 'Check it.',
    troubleCode: null,
    metrics: {},
    evidence: [],
  };
}

const api = (method: 'GET' | 'POST' | 'PATCH' | 'DELETE', url: string, body?: Record<string, unknown>, k = key) =>
  t.app.inject({ method, url, headers: t.auth(k), ...(body ? { payload: body } : {}) });
const statuses = async () =>
  Object.fromEntries(
    ((await api('GET', '/v1/vehicles/SE-1/findings')).json().findings as Array<{ kind: string; status: string }>).map(
      (f) => [f.kind, f.status],
    ),
  );
const idOf = async (kind: string) =>
  ((await api('GET', '/v1/vehicles/SE-1/findings')).json().findings as Array<{ id: string; kind: string }>).find(
    (f) => f.kind === kind,
  )!.id;

beforeAll(async () => {
  key = await t.createKey('fleet-se', ['read']);
  other = await t.createKey('fleet-other', ['read']);
  const db = t.tdb.handle.db;
  await sql`insert into vehicles (vehicle_id, fleet_id) values ('SE-1', 'fleet-se')`.execute(db);
  await sql`insert into vehicle_analysis (vehicle_id, fleet_id, last_reading_at) values ('SE-1', 'fleet-se', to_timestamp(${T / 1000}))`.execute(
    db,
  );
  await db.transaction().execute(async (trx) => {
    await syncFindings(trx, {
      vehicleId: 'SE-1',
      fleetId: 'fleet-se',
      asOfMs: T,
      derived: [finding('boil-margin'), finding('overheating-trend'), finding('slow-warmup')],
      quietPeriodMs: 14 * DAY_MS,
    });
    await refreshVehicleRisk(trx, 'SE-1');
  });
});

describe('recording service events', () => {
  it('records a pressure cap replacement, which resolves the boil-margin and overheating findings and queues a re-analysis', async () => {
    const res = await api('POST', '/v1/vehicles/SE-1/service-events', {
      kind: 'pressure-cap-replaced',
      at: new Date(T).toISOString(),
      notes: 'cap held 60 kPa of 100',
    });
    expect(res.statusCode).toBe(201);
    const body = res.json() as { event: { kind: string; resolvedFindings: string[] }; resolvedFindings: string[] };
    expect(body.event.kind).toBe('pressure-cap-replaced');
    expect(body.resolvedFindings.sort()).toEqual([await idOf('boil-margin'), await idOf('overheating-trend')].sort());
    expect(body.event.resolvedFindings).toEqual(body.resolvedFindings);
    expect(await statuses()).toEqual({
      'boil-margin': 'resolved',
      'overheating-trend': 'resolved',
      'slow-warmup': 'open',
    });
    const queued = await t.tdb.handle.db
      .selectFrom('analysis_queue')
      .select('vehicle_id')
      .where('vehicle_id', '=', 'SE-1')
      .execute();
    expect(queued).toHaveLength(1);
  });

  it('records an inspection with no fault found, which resolves nothing and names the findings it looked at', async () => {
    const warm = await idOf('slow-warmup');
    const res = await api('POST', '/v1/vehicles/SE-1/service-events', {
      kind: 'inspected-no-fault-found',
      at: new Date(T + DAY_MS).toISOString(),
      findingIds: [warm],
    });
    expect(res.statusCode).toBe(201);
    expect(res.json().event).toMatchObject({ resolvedFindings: [], inspectedFindings: [warm] });
    expect((await statuses())['slow-warmup']).toBe('open');
  });

  it('accepts the water pump and coolant mix kinds and refuses an unknown kind', async () => {
    expect(
      (
        await api('POST', '/v1/vehicles/SE-1/service-events', {
          kind: 'water-pump-replaced',
          at: new Date(T - 30 * DAY_MS).toISOString(),
        })
      ).statusCode,
    ).toBe(201);
    expect(
      (
        await api('POST', '/v1/vehicles/SE-1/service-events', {
          kind: 'coolant-mix-corrected',
          at: new Date(T - 31 * DAY_MS).toISOString(),
        })
      ).statusCode,
    ).toBe(201);
    expect((await api('POST', '/v1/vehicles/SE-1/service-events', { kind: 'head-gasket-swapped' })).statusCode).toBe(
      400,
    );
  });
});

describe('the repair history', () => {
  it('lists the events newest first with what each resolved, a page at a time by cursor', async () => {
    const all = (await api('GET', '/v1/vehicles/SE-1/service-events')).json() as {
      events: Array<{ kind: string }>;
      nextCursor: string | null;
    };
    expect(all.events.map((e) => e.kind)).toEqual([
      'inspected-no-fault-found',
      'pressure-cap-replaced',
      'water-pump-replaced',
      'coolant-mix-corrected',
    ]);
    expect(all.nextCursor).toBeNull();
    const seen: string[] = [];
    let cursor: string | null = null;
    do {
      const res = (
        await api('GET', `/v1/vehicles/SE-1/service-events?limit=1${cursor ? `&cursor=${cursor}` : ''}`)
      ).json() as { events: Array<{ kind: string }>; nextCursor: string | null };
      seen.push(...res.events.map((e) => e.kind));
      cursor = res.nextCursor;
    } while (cursor);
    expect(seen).toEqual(all.events.map((e) => e.kind));
    expect((await api('GET', '/v1/vehicles/SE-1/service-events?cursor=bm9wZQ')).statusCode).toBe(400);
    expect((await api('GET', '/v1/vehicles/SE-1/service-events', undefined, other)).statusCode).toBe(403);
    expect((await api('GET', '/v1/vehicles/NOPE/service-events')).statusCode).toBe(404);
  });
});

describe('correcting and deleting an event', () => {
  const capEvent = async () =>
    ((await api('GET', '/v1/vehicles/SE-1/service-events')).json().events as Array<{ id: string; kind: string }>).find(
      (e) => e.kind === 'pressure-cap-replaced' || e.kind === 'thermostat-replaced',
    )!.id;

  it('corrects the kind: what the wrong kind resolved is reopened, what the right kind addresses is resolved, and the change is audited', async () => {
    const id = await capEvent();
    const res = await api('PATCH', `/v1/vehicles/SE-1/service-events/${id}`, { kind: 'thermostat-replaced' });
    expect(res.statusCode).toBe(200);
    expect(res.json()).toMatchObject({ kind: 'thermostat-replaced', updatedAt: expect.any(String) });
    expect(await statuses()).toEqual({
      'boil-margin': 'open',
      'overheating-trend': 'resolved',
      'slow-warmup': 'resolved',
    });
    const one = (await api('GET', `/v1/vehicles/SE-1/service-events/${id}`)).json() as {
      history: Array<{ action: string; before: { kind: string }; after: { kind: string } }>;
    };
    expect(one.history).toHaveLength(1);
    expect(one.history[0]).toMatchObject({
      action: 'correct',
      before: { kind: 'pressure-cap-replaced' },
      after: { kind: 'thermostat-replaced' },
    });
    expect((await api('PATCH', `/v1/vehicles/SE-1/service-events/${id}`, {})).statusCode).toBe(400);
  });

  it('deletes an event: the findings it resolved are reopened, it leaves the history and the analysis, and the deletion is audited', async () => {
    const id = await capEvent();
    const res = await api('DELETE', `/v1/vehicles/SE-1/service-events/${id}`);
    expect(res.statusCode).toBe(200);
    expect(res.json().reopenedFindings.sort()).toEqual(
      [await idOf('overheating-trend'), await idOf('slow-warmup')].sort(),
    );
    expect(await statuses()).toEqual({ 'boil-margin': 'open', 'overheating-trend': 'open', 'slow-warmup': 'open' });
    expect(
      (await api('GET', '/v1/vehicles/SE-1/service-events')).json().events.map((e: { id: string }) => e.id),
    ).not.toContain(id);
    expect((await api('GET', `/v1/vehicles/SE-1/service-events/${id}`)).statusCode).toBe(404);
    expect((await api('DELETE', `/v1/vehicles/SE-1/service-events/${id}`)).statusCode).toBe(404);
    const audit = await t.tdb.handle.db
      .selectFrom('planner_actions')
      .select('action')
      .where('subject_id', '=', id)
      .orderBy('at')
      .execute();
    expect(audit.map((a) => a.action)).toEqual(['correct', 'delete']);
  });

  it('documents every service-event route with its tag', async () => {
    const doc = (await t.app.inject({ method: 'GET', url: '/openapi.json' })).json() as {
      paths: Record<string, Record<string, { tags?: string[] }>>;
    };
    for (const [path, method] of [
      ['/v1/vehicles/{vehicleId}/service-events', 'get'],
      ['/v1/vehicles/{vehicleId}/service-events', 'post'],
      ['/v1/vehicles/{vehicleId}/service-events/{eventId}', 'get'],
      ['/v1/vehicles/{vehicleId}/service-events/{eventId}', 'patch'],
      ['/v1/vehicles/{vehicleId}/service-events/{eventId}', 'delete'],
    ] as const) {
      expect(doc.paths[path]?.[method]?.tags, `${method} ${path}`).toEqual(['service events']);
    }
  });
});
