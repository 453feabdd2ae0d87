import { beforeAll, describe, expect, it } from 'vitest';
import { useTestApp } from '../helpers/test-app.js';

const t = useTestApp();
let key: string;
let admin: string;

beforeAll(async () => {
  key = await t.createKey('fleet-v', ['ingest', 'read']);
  admin = await t.createAdminKey();
});

const put = (vehicleId: string, payload: unknown, k = key, query = '') =>
  t.app.inject({
    method: 'PUT',
    url: `/v1/vehicles/${vehicleId}${query}`,
    headers: t.auth(k),
    payload: payload as object,
  });
const get = (url: string) => t.app.inject({ method: 'GET', url, headers: t.auth(key) });

describe('PUT /v1/vehicles/{vehicleId}', () => {
  it('creates a vehicle with 201, filling the defaults, and updates it with 200 keeping unnamed fields', async () => {
    const created = await put('V-1', { engineFamily: 'diesel-13l', thermostatOpenC: 82 });
    expect(created.statusCode).toBe(201);
    expect(created.json()).toMatchObject({
      vehicleId: 'V-1',
      fleetId: 'fleet-v',
      engineFamily: 'diesel-13l',
      thermostatOpenC: 82,
      capPressureKpa: 100,
      glycolPercent: 50,
      label: null,
    });
    const updated = await put('V-1', { capPressureKpa: 103.5, label: 'depot north' });
    expect(updated.statusCode).toBe(200);
    expect(updated.json()).toMatchObject({
      engineFamily: 'diesel-13l',
      thermostatOpenC: 82,
      capPressureKpa: 103.5,
      label: 'depot north',
    });
    expect(Date.parse(updated.json().updatedAt)).toBeGreaterThanOrEqual(Date.parse(created.json().updatedAt));
    const stored = await t.tdb.handle.db
      .selectFrom('vehicles')
      .selectAll()
      .where('vehicle_id', '=', 'V-1')
      .executeTakeFirstOrThrow();
    expect([stored.thermostat_open_c, stored.cap_pressure_kpa, stored.label]).toEqual([82, 103.5, 'depot north']);
  });

  it('accepts the limits of each profile field', async () => {
    expect((await put('V-LIM', { thermostatOpenC: 60, capPressureKpa: 0, glycolPercent: 0 })).statusCode).toBe(201);
    expect((await put('V-LIM', { thermostatOpenC: 110, capPressureKpa: 250, glycolPercent: 70 })).statusCode).toBe(200);
  });

  it.each([
    ['a thermostat below 60 °C', { thermostatOpenC: 59.9 }],
    ['a thermostat above 110 °C', { thermostatOpenC: 110.1 }],
    ['a negative cap pressure', { capPressureKpa: -1 }],
    ['a cap above 250 kPa', { capPressureKpa: 250.5 }],
    ['glycol above 70 %', { glycolPercent: 71 }],
    ['negative glycol', { glycolPercent: -0.1 }],
    ['a thermostat that is not a number', { thermostatOpenC: 'warm' }],
    ['an unknown field', { radiatorColour: 'black' }],
    ['an empty engine family', { engineFamily: '' }],
  ])('answers 400 with the uniform error body for %s and changes nothing', async (_name, payload) => {
    const res = await put('V-BAD', payload);
    expect(res.statusCode).toBe(400);
    expect(res.json()).toEqual({ error: { code: 'validation_failed', message: expect.any(String) } });
    expect(
      await t.tdb.handle.db.selectFrom('vehicles').select('vehicle_id').where('vehicle_id', '=', 'V-BAD').execute(),
    ).toEqual([]);
  });

  it('answers 400 for a malformed JSON body and for a vehicle id outside the allowed characters', async () => {
    const malformed = await t.app.inject({
      method: 'PUT',
      url: '/v1/vehicles/V-2',
      headers: { ...t.auth(key), 'content-type': 'application/json' },
      payload: '{"label":',
    });
    expect(malformed.statusCode).toBe(400);
    expect(malformed.json().error.code).toBe('bad_request');
    const badId = await put('bad%20id', {});
    expect(badId.statusCode).toBe(400);
    expect(badId.json().error.code).toBe('validation_failed');
  });

  it('makes an admin key name an existing fleet for a new vehicle', async () => {
    expect((await put('V-ADM', {}, admin)).statusCode).toBe(400);
    expect((await put('V-ADM', {}, admin, '?fleet=nowhere')).statusCode).toBe(404);
    const res = await put('V-ADM', { label: 'by admin' }, admin, '?fleet=fleet-v');
    expect(res.statusCode).toBe(201);
    expect(res.json().fleetId).toBe('fleet-v');
  });
});

describe('GET /v1/vehicles', () => {
  it('pages through the fleet in vehicle id order with nextAfter', async () => {
    for (const id of ['P-3', 'P-1', 'P-5', 'P-2', 'P-4']) expect((await put(id, {})).statusCode).toBe(201);
    const all = (await get('/v1/vehicles?limit=1000'))
      .json()
      .vehicles.map((v: { vehicleId: string }) => v.vehicleId) as string[];
    const seen: string[] = [];
    let after: string | null = null;
    let pages = 0;
    do {
      const res = await get(`/v1/vehicles?limit=2${after ? `&after=${after}` : ''}`);
      expect(res.statusCode).toBe(200);
      const body = res.json() as { vehicles: Array<{ vehicleId: string }>; nextAfter: string | null };
      expect(body.vehicles.length).toBeLessThanOrEqual(2);
      seen.push(...body.vehicles.map((v) => v.vehicleId));
      after = body.nextAfter;
      pages++;
    } while (after !== null && pages < 20);
    expect(seen).toEqual(all);
    expect(all).toEqual([...all].sort());
    expect(all).toEqual(expect.arrayContaining(['P-1', 'P-2', 'P-3', 'P-4', 'P-5']));
    // The last page says so itself: no empty page after it.
    expect(pages).toBe(Math.ceil(all.length / 2));
  });

  it('answers 400 for a page size outside 1..1000', async () => {
    expect((await get('/v1/vehicles?limit=0')).statusCode).toBe(400);
    expect((await get('/v1/vehicles?limit=1001')).statusCode).toBe(400);
  });
});

describe('GET /v1/vehicles/{vehicleId}', () => {
  it("returns the vehicle's profile", async () => {
    await put('G-1', { engineFamily: 'petrol-2l', glycolPercent: 40 });
    const res = await get('/v1/vehicles/G-1');
    expect(res.statusCode).toBe(200);
    expect(res.json()).toMatchObject({
      vehicleId: 'G-1',
      fleetId: 'fleet-v',
      engineFamily: 'petrol-2l',
      glycolPercent: 40,
      thermostatOpenC: 88,
    });
  });

  it('answers 404 with the uniform error body for an unknown vehicle', async () => {
    const res = await get('/v1/vehicles/NOPE-1');
    expect(res.statusCode).toBe(404);
    expect(res.json()).toEqual({ error: { code: 'not_found', message: expect.any(String) } });
  });
});
