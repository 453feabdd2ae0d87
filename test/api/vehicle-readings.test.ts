import { beforeAll, describe, expect, it } from 'vitest';
import { useTestApp } from '../helpers/test-app.js';
import { postReadings } from '../helpers/worker-fleet.js';

const t = useTestApp();
let key: string;
const START = Date.UTC(2026, 9, 5, 6);
const N = 3600;
const SPIKE_AT = 1234;
const DIP_AT = 2345;

beforeAll(async () => {
  key = await t.createKey('fleet-c', ['ingest', 'read']);
  // One hour at 1 s: a 90 °C plateau with one 118 °C sample and one 61 °C sample.
  const items: string[] = [];
  for (let i = 0; i < N; i++) {
    const coolant = i === SPIKE_AT ? 118 : i === DIP_AT ? 61 : 90;
    items.push(
      `{"vehicleId":"C-1","ts":${START + i * 1000},"coolant":${coolant},"ambient":${10 + (i % 2)},"speedKph":50,"rpm":1500}`,
    );
  }
  expect(await postReadings(t, key, items)).toBe(N);
});

const get = (query: string) =>
  t.app.inject({ method: 'GET', url: `/v1/vehicles/C-1/readings${query}`, headers: t.auth(key) });

describe('GET /v1/vehicles/{vehicleId}/readings', () => {
  it('downsamples into at most maxPoints buckets and keeps the single-sample peak and dip', async () => {
    const res = await get(`?from=${START}&to=${START + N * 1000}&maxPoints=7`);
    expect(res.statusCode).toBe(200);
    const body = res.json() as {
      bucketMs: number;
      points: Array<{
        t: string;
        n: number;
        coolantMinC: number;
        coolantMaxC: number;
        coolantMeanC: number;
        ambientC: number;
      }>;
    };
    expect(body.points.length).toBeLessThanOrEqual(7);
    expect(body.bucketMs).toBe(Math.ceil((N * 1000) / 7));
    expect(body.points.reduce((s, p) => s + p.n, 0)).toBe(N);
    expect(Math.max(...body.points.map((p) => p.coolantMaxC))).toBe(118);
    expect(Math.min(...body.points.map((p) => p.coolantMinC))).toBe(61);
    const spikeBucket = body.points.find((p) => p.coolantMaxC === 118)!;
    expect(Date.parse(spikeBucket.t)).toBe(START + Math.floor((SPIKE_AT * 1000) / body.bucketMs) * body.bucketMs);
    // A mean alone would have hidden the spike: one 118 among ~514 readings of 90.
    expect(spikeBucket.coolantMeanC).toBeLessThan(91);
    expect(body.points[0]!.ambientC).toBeCloseTo(10.5, 1);
  });

  it('defaults to the week before the latest reading and accepts RFC 3339 times', async () => {
    const res = await get('?maxPoints=100');
    expect(res.json().to).toBe(new Date(START + (N - 1) * 1000 + 1).toISOString());
    expect(res.json().points.reduce((s: number, p: { n: number }) => s + p.n, 0)).toBe(N);
    const iso = await get(
      `?from=${new Date(START).toISOString()}&to=${new Date(START + 60_000).toISOString()}&maxPoints=60`,
    );
    expect(iso.json().points).toHaveLength(60);
  });

  it('answers 400 for an unreadable time, an empty window and an out-of-range maxPoints', async () => {
    expect((await get('?from=yesterday')).statusCode).toBe(400);
    expect((await get(`?from=${START}&to=${START}`)).statusCode).toBe(400);
    expect((await get('?maxPoints=1')).statusCode).toBe(400);
  });
});
