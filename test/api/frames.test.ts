import { gzipSync } from 'node:zlib';
import fc from 'fast-check';
import { beforeAll, describe, expect, it } from 'vitest';
import { useTestApp } from '../helpers/test-app.js';

const t = useTestApp({ maxReadingsPerRequest: 10_000 });
let key: string;
let otherKey: string;

beforeAll(async () => {
  key = await t.createKey('fleet-f', ['ingest', 'read']);
  otherKey = await t.createKey('fleet-g', ['ingest']);
});

/** Whole minutes, an hour ago. */
const BASE_MS = Math.floor((Date.now() - 3_600_000) / 60_000) * 60_000;
const iso = (offsetMs: number) => new Date(BASE_MS + offsetMs).toISOString();

interface Frame {
  vehicleId: string;
  ts: string;
  canId: string;
  data: string;
}
const et1 = (v: string, ms: number, raw: number): Frame => ({
  vehicleId: v,
  ts: iso(ms),
  canId: '18FEEE00',
  data: `${raw.toString(16).padStart(2, '0')}FFFFFFFFFFFFFF`,
});
// 1500 rpm (SPN 190 = 12000 = 0x2EE0), 20 °C ambient and 100 kPa (AMB), 100 kPa coolant pressure and 80 % level (PGN 65263).
const eec1 = (v: string, ms: number): Frame => ({
  vehicleId: v,
  ts: iso(ms),
  canId: '0CF00400',
  data: 'FFFFFFE02EFFFFFF',
});
const amb = (v: string, ms: number): Frame => ({
  vehicleId: v,
  ts: iso(ms),
  canId: '18FEF500',
  data: 'C8FFFFA024FFFFFF',
});
const fluid = (v: string, ms: number): Frame => ({
  vehicleId: v,
  ts: iso(ms),
  canId: '18FEEF00',
  data: 'FFFFFFFFFFFF32C8',
});

function post(
  protocol: 'j1939' | 'obd',
  body: string | Buffer,
  contentType = 'application/json',
  headers: Record<string, string> = {},
  k = key,
) {
  return t.app.inject({
    method: 'POST',
    url: `/v1/frames/${protocol}`,
    headers: { ...t.auth(k), 'content-type': contentType, ...headers },
    payload: body,
  });
}

async function stored(vehicleId: string) {
  const rows = await t.tdb.handle.db
    .selectFrom('readings')
    .selectAll()
    .where('vehicle_id', '=', vehicleId)
    .orderBy('ts')
    .execute();
  return rows.map((r) => [
    r.ts.getTime() - BASE_MS,
    r.coolant_c,
    r.ambient_c,
    r.speed_kph,
    r.rpm,
    r.barometric_kpa,
    r.coolant_level_pct,
    r.coolant_pressure_kpa,
  ]);
}

/** A minute of a bus: coolant every second, engine speed every 100 ms, ambient every 5 s, fluid every 10 s. */
function busMinute(v: string): Frame[] {
  const frames: Frame[] = [];
  for (let ms = 0; ms < 60_000; ms += 100) {
    frames.push(eec1(v, ms + 50));
    if (ms % 1000 === 0) frames.push(et1(v, ms + 200, 120 + Math.floor(ms / 20_000)));
    if (ms % 5000 === 0) frames.push(amb(v, ms));
    if (ms % 10_000 === 0) frames.push(fluid(v, ms));
  }
  return frames;
}

describe('POST /v1/frames/j1939', () => {
  it('decodes frames into one reading per sample period on the coolant timestamps, with the other channels aligned', async () => {
    const res = await post('j1939', JSON.stringify({ frames: busMinute('F-1') }));
    expect(res.statusCode).toBe(200);
    expect(res.json()).toEqual({ accepted: 6, duplicates: 0, ignored: 0, rejected: [] });
    expect(await stored('F-1')).toEqual(
      [0, 10_000, 20_000, 30_000, 40_000, 50_000].map((ms) => [
        ms + 200,
        80 + Math.floor(ms / 20_000),
        20,
        null,
        1500,
        100,
        80,
        100,
      ]),
    );
  });

  it("decimates to the vehicle's configured sample period", async () => {
    const put = await t.app.inject({
      method: 'PUT',
      url: '/v1/vehicles/F-30',
      headers: t.auth(key),
      payload: { samplePeriodS: 30 },
    });
    expect(put.json()).toMatchObject({ samplePeriodS: 30 });
    expect((await post('j1939', JSON.stringify({ frames: busMinute('F-30') }))).json()).toMatchObject({ accepted: 2 });
    expect((await stored('F-30')).map((r) => r[0])).toEqual([200, 30_200]);
  });

  it('answers a retried request with duplicates and stores nothing twice', async () => {
    const body = JSON.stringify({ frames: busMinute('F-2') });
    expect((await post('j1939', body)).json()).toMatchObject({ accepted: 6, duplicates: 0 });
    expect((await post('j1939', body)).json()).toMatchObject({ accepted: 0, duplicates: 6 });
    expect(await t.countReadings(['F-2'])).toBe(6);
  });

  it('gives the same readings when the frames come in several requests, in reverse order, some at the same time', async () => {
    await post('j1939', JSON.stringify({ frames: busMinute('F-3') }));
    const frames = busMinute('F-4').reverse();
    const parts = [0, 1, 2, 3, 4].map((k) => frames.filter((_, i) => i % 5 === k));
    await post('j1939', JSON.stringify({ frames: parts[0] }));
    await Promise.all(parts.slice(1, 4).map((p) => post('j1939', JSON.stringify({ frames: p }))));
    await post('j1939', JSON.stringify({ frames: parts[4] }));
    expect(await stored('F-4')).toEqual(await stored('F-3'));
  });

  it('moves a reading to an earlier coolant frame of its slot that arrives later', async () => {
    expect((await post('j1939', JSON.stringify({ frames: [et1('F-5', 5000, 123)] }))).json()).toMatchObject({
      accepted: 1,
    });
    expect((await post('j1939', JSON.stringify({ frames: [et1('F-5', 1000, 122)] }))).json()).toMatchObject({
      accepted: 1,
    });
    expect(await stored('F-5')).toEqual([[1000, 82, null, null, null, null, null, null]]);
  });

  it('takes NDJSON and gzip-compressed CSV, and canId as 0x-prefixed hex', async () => {
    const ndjson = [et1('F-6', 0, 123), { ...amb('F-6', 0), canId: '0x18FEF500' }]
      .map((f) => JSON.stringify(f))
      .join('\n');
    expect((await post('j1939', ndjson, 'application/x-ndjson')).json()).toEqual({
      accepted: 1,
      duplicates: 0,
      ignored: 0,
      rejected: [],
    });
    const csv = `vehicleId,ts,canId,data\nF-7,${iso(0)},18FEEE00,7B FF FF FF FF FF FF FF\n`;
    expect((await post('j1939', gzipSync(csv), 'text/csv', { 'content-encoding': 'gzip' })).json()).toEqual({
      accepted: 1,
      duplicates: 0,
      ignored: 0,
      rejected: [],
    });
    expect((await stored('F-6'))[0]).toEqual([0, 83, 20, null, null, 100, null, null]);
  });

  it('rejects malformed rows with their index, ignores unknown PGNs and "not available" values, and counts them in /metrics', async () => {
    const frames = [
      et1('F-8', 0, 123),
      { vehicleId: 'F-8', ts: iso(0), canId: '3FFFFFFF', data: '7BFFFFFFFFFFFFFF' },
      { vehicleId: 'F-8', ts: iso(0), canId: '18FEEE00', data: '7B' },
      { vehicleId: 'F-8', ts: iso(0), canId: '18FEEE00', data: 'zz' },
      { vehicleId: 'F-8', ts: iso(0), canId: '18FEEE00', data: '7BFFFFFFFFFFFFFFFF' },
      { vehicleId: 'F-8', ts: iso(0), canId: '18FEDF00', data: '0011223344556677' },
      { vehicleId: 'F-8', ts: iso(1000), canId: '18FEEE00', data: 'FEFFFFFFFFFFFFFF' },
      { vehicleId: 'F-8', ts: 'yesterday', canId: '18FEEE00', data: '7BFFFFFFFFFFFFFF' },
    ];
    const res = await post('j1939', JSON.stringify({ frames }));
    expect(res.statusCode).toBe(200);
    const body = res.json();
    expect(body).toMatchObject({ accepted: 1, duplicates: 0, ignored: 2 });
    expect(body.rejected.map((r: { index: number }) => r.index)).toEqual([1, 2, 3, 4, 7]);
    expect(body.rejected[1].reason).toMatch(/PGN 65262 is sent as 8 data bytes, got 1/);
    const metrics = (await t.app.inject({ method: 'GET', url: '/metrics' })).body;
    expect(metrics).toMatch(/thermocline_bus_frames_total\{protocol="j1939",result="unknown-pgn"\} [1-9]/);
  });

  it('answers 200 with per-row reasons, never a 500, for rows of random identifiers and data', async () => {
    const field = fc.oneof(
      fc.string({ maxLength: 40 }),
      fc.stringMatching(/^[0-9A-Fa-fx ]{0,24}$/),
      fc.integer(),
      fc.constant(null),
      fc.double(),
    );
    const rows = fc.sample(
      fc.record({
        vehicleId: fc.oneof(fc.constant('F-RND'), fc.string({ maxLength: 5 })),
        ts: fc.oneof(fc.constant(iso(0)), field),
        canId: field,
        data: field,
      }),
      { seed: 18, numRuns: 400 },
    );
    for (const protocol of ['j1939', 'obd'] as const) {
      const res = await post(protocol, JSON.stringify({ [protocol === 'j1939' ? 'frames' : 'responses']: rows }));
      expect(res.statusCode, res.body).toBe(200);
      const body = res.json();
      expect(body.rejected.length + body.ignored + body.accepted + body.duplicates).toBeGreaterThan(0);
    }
    const ndjson = await post('j1939', '{"vehicleId":"F-RND"\n[1,2]\n"x"\n', 'application/x-ndjson');
    expect(ndjson.json()).toMatchObject({
      accepted: 0,
      rejected: [{ index: 0, reason: 'not valid JSON' }, { index: 1 }, { index: 2 }],
    });
  });

  it("refuses a body naming another fleet's vehicle with 403 and stores nothing", async () => {
    await post('j1939', JSON.stringify({ frames: [et1('F-9', 0, 123)] }));
    const res = await post(
      'j1939',
      JSON.stringify({ frames: [et1('F-9', 10_000, 124), et1('G-1', 0, 100)] }),
      'application/json',
      {},
      otherKey,
    );
    expect(res.statusCode).toBe(403);
    expect(await t.countReadings(['F-9', 'G-1'])).toBe(1);
    expect((await t.app.inject({ method: 'GET', url: '/metrics' })).body).toMatch(
      /thermocline_ingest_failures_total\{status="403"\} [1-9]/,
    );
  });

  it('answers a body without a frames array with 400', async () => {
    const res = await post('j1939', JSON.stringify({ readings: [] }));
    expect(res.statusCode).toBe(400);
    expect(res.json().error.message).toMatch(/"frames"/);
  });
});

describe('POST /v1/frames/obd', () => {
  it('decodes service 01 responses with several PIDs into readings', async () => {
    const responses = [
      { vehicleId: 'O-1', ts: iso(0), data: '41 05 7B 0C 1A F8 0D 32' },
      { vehicleId: 'O-1', ts: iso(500), data: '41 46 3C 33 65' },
      { vehicleId: 'O-1', ts: iso(10_000), data: '41 05 7C' },
      { vehicleId: 'O-1', ts: iso(10_000), data: '7F 01 12' },
    ];
    const res = await post('obd', JSON.stringify({ responses }));
    expect(res.json()).toMatchObject({ accepted: 2, duplicates: 0, ignored: 0, rejected: [{ index: 3 }] });
    expect(await stored('O-1')).toEqual([
      [0, 83, null, 50, 1726, null, null, null],
      [10_000, 84, 20, 50, 1726, 101, null, null],
    ]);
  });
});

describe('POST /v1/readings with the bus channels', () => {
  it('stores barometric pressure, coolant level and coolant pressure, and rejects them out of range', async () => {
    const res = await t.app.inject({
      method: 'POST',
      url: '/v1/readings',
      headers: { ...t.auth(key), 'content-type': 'application/json' },
      payload: JSON.stringify({
        readings: [
          {
            vehicleId: 'R-1',
            ts: iso(0),
            coolant: 80,
            barometricKpa: 89.5,
            coolantLevelPct: 96.4,
            coolantPressureKpa: 110,
          },
          { vehicleId: 'R-1', ts: iso(10_000), coolant: 80, coolantLevelPct: 140 },
        ],
      }),
    });
    expect(res.json()).toMatchObject({
      accepted: 1,
      rejected: [{ index: 1, reason: expect.stringMatching(/SPN 111/) }],
    });
    const [row] = await stored('R-1');
    expect(row!.slice(5)).toEqual([89.5, 96.4, 110]);
  });
});
