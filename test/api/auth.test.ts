import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApiKeysRepository } from '../../services/db/api-keys-repository.js';
import { createTestApp, useTestApp, type TestApp } from '../helpers/test-app.js';

const t = useTestApp();
const keys: Record<'a' | 'aRead' | 'aIngest' | 'b' | 'admin', string> = {
  a: '',
  aRead: '',
  aIngest: '',
  b: '',
  admin: '',
};
const TS = new Date(Date.now() - 3_600_000).toISOString();

beforeAll(async () => {
  keys.a = await t.createKey('fleet-a', ['ingest', 'read']);
  keys.aRead = await t.createKey('fleet-a', ['read']);
  keys.aIngest = await t.createKey('fleet-a', ['ingest']);
  keys.b = await t.createKey('fleet-b', ['ingest', 'read']);
  keys.admin = await t.createAdminKey();
  for (const [key, vehicleId] of [
    [keys.a, 'A-1'],
    [keys.b, 'B-1'],
  ] as const) {
    const res = await t.app.inject({
      method: 'PUT',
      url: `/v1/vehicles/${vehicleId}`,
      headers: t.auth(key),
      payload: { label: vehicleId },
    });
    expect(res.statusCode).toBe(201);
  }
});

function expectError(res: { statusCode: number; json(): unknown }, status: number, code: string): void {
  expect(res.statusCode).toBe(status);
  expect(res.json()).toEqual({ error: { code, message: expect.any(String) } });
}

function postReadings(key: string, vehicleId: string, query = '') {
  return t.app.inject({
    method: 'POST',
    url: `/v1/readings${query}`,
    headers: t.auth(key),
    payload: { readings: [{ vehicleId, ts: TS, coolant: 80 }] },
  });
}

describe('authentication', () => {
  it('answers 401 without a key, with a malformed header and with an unknown key', async () => {
    expectError(await t.app.inject({ method: 'GET', url: '/v1/vehicles' }), 401, 'unauthorized');
    expectError(
      await t.app.inject({ method: 'GET', url: '/v1/vehicles', headers: { authorization: `Basic ${keys.a}` } }),
      401,
      'unauthorized',
    );
    expectError(
      await t.app.inject({
        method: 'GET',
        url: '/v1/vehicles',
        headers: t.auth('tck_0123456789abcdef_' + 'x'.repeat(32)),
      }),
      401,
      'unauthorized',
    );
    // A real key id with a wrong secret.
    const forged = keys.a.slice(0, keys.a.lastIndexOf('_') + 1) + 'y'.repeat(32);
    expectError(
      await t.app.inject({ method: 'GET', url: '/v1/vehicles', headers: t.auth(forged) }),
      401,
      'unauthorized',
    );
  });

  it('answers 401 once a key is revoked', async () => {
    const key = await t.createKey('fleet-a', ['read']);
    expect((await t.app.inject({ method: 'GET', url: '/v1/vehicles', headers: t.auth(key) })).statusCode).toBe(200);
    expect(await createApiKeysRepository(t.tdb.handle.db).revoke(key)).toBe(true);
    expectError(await t.app.inject({ method: 'GET', url: '/v1/vehicles', headers: t.auth(key) }), 401, 'unauthorized');
  });

  it('answers 403 when the key lacks the scope of the route', async () => {
    expectError(await postReadings(keys.aRead, 'A-1'), 403, 'forbidden');
    expectError(
      await t.app.inject({ method: 'GET', url: '/v1/vehicles', headers: t.auth(keys.aIngest) }),
      403,
      'forbidden',
    );
    expectError(
      await t.app.inject({ method: 'PUT', url: '/v1/vehicles/A-1', headers: t.auth(keys.aRead), payload: {} }),
      403,
      'forbidden',
    );
    expect(await t.countReadings(['A-1'])).toBe(0);
  });

  it('stores the bootstrap admin key hashed, idempotently, and re-enables it after a revoke', async () => {
    const operatorKey = 'operator-chosen-admin-key-0123456789';
    const repo = createApiKeysRepository(t.tdb.handle.db);
    const keyId = await repo.ensureBootstrapAdmin(operatorKey);
    expect(await repo.ensureBootstrapAdmin(operatorKey)).toBe(keyId);
    const stored = await t.tdb.handle.db.selectFrom('api_keys').selectAll().where('key_id', '=', keyId).execute();
    expect(stored).toHaveLength(1);
    expect(stored[0]!.secret_hash).not.toContain(operatorKey);
    expect(
      (await t.app.inject({ method: 'GET', url: '/v1/vehicles/B-1', headers: t.auth(operatorKey) })).statusCode,
    ).toBe(200);
    await repo.revoke(keyId);
    expect(
      (await t.app.inject({ method: 'GET', url: '/v1/vehicles/B-1', headers: t.auth(operatorKey) })).statusCode,
    ).toBe(401);
    await repo.ensureBootstrapAdmin(operatorKey);
    expect(
      (await t.app.inject({ method: 'GET', url: '/v1/vehicles/B-1', headers: t.auth(operatorKey) })).statusCode,
    ).toBe(200);
  });
});

describe('fleet isolation', () => {
  it("does not let a key of fleet A read fleet B's vehicle or list fleet B", async () => {
    expectError(
      await t.app.inject({ method: 'GET', url: '/v1/vehicles/B-1', headers: t.auth(keys.a) }),
      403,
      'forbidden',
    );
    expectError(
      await t.app.inject({ method: 'GET', url: '/v1/vehicles?fleet=fleet-b', headers: t.auth(keys.a) }),
      403,
      'forbidden',
    );
    const list = await t.app.inject({ method: 'GET', url: '/v1/vehicles', headers: t.auth(keys.a) });
    expect(list.json().vehicles.map((v: { vehicleId: string }) => v.vehicleId)).toEqual(['A-1']);
  });

  it("does not let a key of fleet A change fleet B's vehicle", async () => {
    expectError(
      await t.app.inject({
        method: 'PUT',
        url: '/v1/vehicles/B-1',
        headers: t.auth(keys.a),
        payload: { label: 'taken' },
      }),
      403,
      'forbidden',
    );
    const b = await t.app.inject({ method: 'GET', url: '/v1/vehicles/B-1', headers: t.auth(keys.b) });
    expect(b.json()).toMatchObject({ fleetId: 'fleet-b', label: 'B-1' });
  });

  it("answers 403 and stores nothing of a batch from fleet A that names fleet B's vehicle", async () => {
    const res = await t.app.inject({
      method: 'POST',
      url: '/v1/readings',
      headers: t.auth(keys.a),
      payload: {
        readings: [
          { vehicleId: 'A-1', ts: TS, coolant: 80 },
          { vehicleId: 'A-NEW', ts: TS, coolant: 80 },
          { vehicleId: 'B-1', ts: TS, coolant: 80 },
        ],
      },
    });
    expectError(res, 403, 'forbidden');
    expect(res.json().error.message).toContain('B-1');
    expect(await t.countReadings(['A-1', 'A-NEW', 'B-1'])).toBe(0);
    expect(
      await t.tdb.handle.db.selectFrom('vehicles').select('vehicle_id').where('vehicle_id', '=', 'A-NEW').execute(),
    ).toEqual([]);
    expect(
      await t.tdb.handle.db
        .selectFrom('analysis_queue')
        .select('vehicle_id')
        .where('vehicle_id', 'in', ['A-1', 'B-1'])
        .execute(),
    ).toEqual([]);
  });

  it('refuses a fleet key that names another fleet in the query', async () => {
    expectError(await postReadings(keys.a, 'A-1', '?fleet=fleet-b'), 403, 'forbidden');
    expect(await t.countReadings(['A-1'])).toBe(0);
  });

  it('lets an admin key see and write every fleet', async () => {
    const list = await t.app.inject({ method: 'GET', url: '/v1/vehicles', headers: t.auth(keys.admin) });
    expect(list.json().vehicles.map((v: { vehicleId: string }) => v.vehicleId)).toEqual(['A-1', 'B-1']);
    const onlyB = await t.app.inject({ method: 'GET', url: '/v1/vehicles?fleet=fleet-b', headers: t.auth(keys.admin) });
    expect(onlyB.json().vehicles.map((v: { vehicleId: string }) => v.vehicleId)).toEqual(['B-1']);
    expect(
      (await t.app.inject({ method: 'GET', url: '/v1/vehicles/A-1', headers: t.auth(keys.admin) })).statusCode,
    ).toBe(200);
    expect((await postReadings(keys.admin, 'B-1', '?fleet=fleet-b')).json()).toEqual({
      accepted: 1,
      duplicates: 0,
      rejected: [],
    });
    expect(await t.countReadings(['B-1'])).toBe(1);
  });

  it('makes an admin key name the fleet of its readings, and an existing one', async () => {
    expectError(await postReadings(keys.admin, 'A-1'), 400, 'bad_request');
    expectError(await postReadings(keys.admin, 'A-1', '?fleet=no-such-fleet'), 404, 'not_found');
  });
});

describe('rate limit', () => {
  let limited: TestApp;
  beforeAll(async () => {
    limited = await createTestApp({ rateLimitPerMinute: 3 });
  });
  afterAll(async () => {
    await limited?.close();
  });

  it('answers 429 with the uniform error body once a key exceeds its requests per minute, per key', async () => {
    const key = await limited.createKey('fleet-a', ['read']);
    const other = await limited.createKey('fleet-a', ['read']);
    const get = (k: string) => limited.app.inject({ method: 'GET', url: '/v1/vehicles', headers: limited.auth(k) });
    for (let i = 0; i < 3; i++) expect((await get(key)).statusCode).toBe(200);
    const res = await get(key);
    expectError(res, 429, 'rate_limited');
    expect(res.headers['retry-after']).toBeDefined();
    // Another key has its own budget; health checks are never limited.
    expect((await get(other)).statusCode).toBe(200);
    for (let i = 0; i < 5; i++)
      expect((await limited.app.inject({ method: 'GET', url: '/healthz' })).statusCode).toBe(200);
  });
});
