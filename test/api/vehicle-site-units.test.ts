import { beforeAll, describe, expect, it } from 'vitest';
import { useTestApp } from '../helpers/test-app.js';
import { postReadings } from '../helpers/worker-fleet.js';

const t = useTestApp();
let key: string;

beforeAll(async () => {
  key = await t.createKey('fleet-site', ['ingest', 'read']);
});

const put = (vehicleId: string, payload: object) =>
  t.app.inject({ method: 'PUT', url: `/v1/vehicles/${vehicleId}`, headers: t.auth(key), payload });

describe('vehicle site and units', () => {
  it('flags a vehicle registered by its readings as running on the default profile until a profile is set', async () => {
    await postReadings(t, key, [`{"vehicleId":"SITE-0","ts":${Date.now() - 3_600_000},"coolant":20}`]);
    const res = await t.app.inject({ method: 'GET', url: '/v1/vehicles/SITE-0', headers: t.auth(key) });
    expect(res.json()).toMatchObject({ defaultProfile: true, atmosphericPressureKpa: 101.325, glycolPercent: 50 });
    expect((await put('SITE-0', { label: 'van 0' })).json().defaultProfile).toBe(true);
    expect((await put('SITE-0', { capPressureKpa: 90 })).json().defaultProfile).toBe(false);
  });

  it('takes the cap in psi or bar and stores kPa', async () => {
    expect((await put('SITE-1', { capPressure: 15, capPressureUnit: 'psi' })).json().capPressureKpa).toBeCloseTo(
      103.42,
      2,
    );
    expect((await put('SITE-1', { capPressure: 1.1, capPressureUnit: 'bar' })).json().capPressureKpa).toBeCloseTo(
      110,
      6,
    );
    expect((await put('SITE-1', { capPressure: 1.1, capPressureUnit: 'bar', capPressureKpa: 110 })).statusCode).toBe(
      400,
    );
    expect((await put('SITE-1', { capPressure: 40, capPressureUnit: 'psi' })).statusCode).toBe(400);
  });

  it('takes glycol by volume, stores it by mass (densities 1.113 and 0.998 g/cm³) and says which', async () => {
    const res = (await put('SITE-2', { glycolPercent: 50, glycolBasis: 'volume' })).json();
    expect(res.glycolPercent).toBeCloseTo(52.72, 1);
    expect(res.glycolPercentByVolume).toBeCloseTo(50, 1);
    expect(res.glycolBasis).toBe('volume');
    expect((await put('SITE-2', { glycolPercent: 40 })).json()).toMatchObject({
      glycolPercent: 40,
      glycolBasis: 'mass',
    });
    expect((await put('SITE-2', { glycolPercent: 69, glycolBasis: 'volume' })).statusCode).toBe(400);
  });

  it('derives the site pressure from the altitude (ISO 2533) or takes it as given, and the worker uses it', async () => {
    const high = (await put('SITE-3', { depot: 'pass-depot', siteAltitudeM: 2000 })).json();
    expect(high).toMatchObject({ depot: 'pass-depot', siteAltitudeM: 2000 });
    expect(high.atmosphericPressureKpa).toBeCloseTo(79.5, 1);
    expect((await put('SITE-3', { atmosphericPressureKpa: 85 })).json().atmosphericPressureKpa).toBe(85);
    const { createAnalysisStore } = await import('../../services/db/analysis-results-repository.js');
    const [state] = await createAnalysisStore(t.tdb.handle.db).vehicleStates(['SITE-3']);
    expect(state!.profile.atmosphericPressureKpa).toBe(85);
  });

  it('documents the new profile fields in the OpenAPI document', async () => {
    const doc = JSON.stringify((await t.app.inject({ method: 'GET', url: '/openapi.json' })).json());
    for (const field of [
      'glycolBasis',
      'capPressureUnit',
      'siteAltitudeM',
      'atmosphericPressureKpa',
      'defaultProfile',
      'depot',
    ])
      expect(doc).toContain(field);
  });
});
