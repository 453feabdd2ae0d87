import http from 'node:http';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildApp } from '../../../services/api/app.js';
import { openDatabase } from '../../../services/db/database.js';
import { createTestApp, testConfig, type TestApp } from '../../helpers/test-app.js';
import { testDatabaseKind } from '../../helpers/test-database.js';
import { listenOnLoopback } from '../../helpers/raw-http.js';

// Smaller regressions found by the same probe:
// - requests with no or a bad key were never rate-limited, and each cost a database lookup;
// - the health checks' exemption from rate limiting matched exact URLs (`/healthz?probe=1` got 429);
// - a client aborting mid-body was logged at error level and counted as "database unavailable" (503);
// - /readyz waited for ever when the pool could not hand out a client.

let t: TestApp;
let base: string;
beforeAll(async () => {
  t = await createTestApp({ rateLimitPerMinute: 5, authFailuresPerMinute: 4 });
  base = await listenOnLoopback(t.app);
});
afterAll(async () => t?.close());

describe('rate limits', () => {
  it('answer 429 with Retry-After to an address that keeps failing to authenticate, before looking its keys up', async () => {
    const statuses: number[] = [];
    for (let i = 0; i < 6; i++)
      statuses.push(
        (
          await t.app.inject({
            method: 'GET',
            url: '/v1/vehicles',
            headers: { authorization: `Bearer tck_made${i}_up` },
            remoteAddress: '10.0.0.9',
          })
        ).statusCode,
      );
    expect(statuses).toEqual([401, 401, 401, 401, 429, 429]);
    const limited = await t.app.inject({ method: 'GET', url: '/v1/vehicles', remoteAddress: '10.0.0.9' });
    expect(limited.statusCode).toBe(429);
    expect(Number(limited.headers['retry-after'])).toBeGreaterThan(0);
    expect(limited.json()).toEqual({
      error: { code: 'rate_limited', message: expect.stringMatching(/failed authentications/) },
    });
    // Another address is not affected.
    expect((await t.app.inject({ method: 'GET', url: '/v1/vehicles', remoteAddress: '10.0.0.10' })).statusCode).toBe(
      401,
    );
  });

  it('never apply to the health checks and metrics, whatever their query string', async () => {
    for (let i = 0; i < 12; i++) {
      for (const url of ['/healthz?probe=1', '/readyz?x', '/metrics?name[]=a', '/healthz'])
        expect((await t.app.inject({ method: 'GET', url })).statusCode, url).toBe(200);
    }
  });
});

describe('a client that aborts mid-body', () => {
  it('is not counted as a database outage', async () => {
    const key = await t.createKey('fleet-ab', ['ingest']);
    const req = http.request(`${base}/v1/readings`, {
      method: 'POST',
      headers: { authorization: `Bearer ${key}`, 'content-type': 'application/x-ndjson', 'content-length': '1000000' },
    });
    req.on('error', () => undefined);
    req.write(`{"vehicleId":"AB-1","ts":${Date.now() - 60_000},"coolant":70}\n{"vehicleId":"AB-1","ts":`);
    await new Promise((resolve) => setTimeout(resolve, 100));
    req.destroy();
    // The service notices the abort on its own time; wait until the failure is counted.
    let metrics = '';
    for (let i = 0; i < 100 && !/thermocline_ingest_failures_total\{/.test(metrics); i++) {
      await new Promise((resolve) => setTimeout(resolve, 20));
      metrics = (await t.app.inject({ method: 'GET', url: '/metrics' })).body;
    }
    expect(metrics).toMatch(/thermocline_ingest_failures_total\{status="client_closed"\} 1/);
    expect(metrics).not.toMatch(/thermocline_ingest_failures_total\{status="503"\}/);
    expect(await t.countReadings(['AB-1'])).toBe(0);
  });
});

describe.skipIf(testDatabaseKind() === 'pglite')('/readyz with a pool that cannot hand out a client', () => {
  it('answers 503 within about a second, and 200 again once a client is free', async () => {
    const handle = await openDatabase({ databaseUrl: t.tdb.url, pgliteDir: '', poolSize: 1 });
    const app = await buildApp({ config: testConfig(), database: handle });
    try {
      const held = await handle.pool!.connect();
      const started = Date.now();
      const res = await app.inject({ method: 'GET', url: '/readyz' });
      expect(res.statusCode).toBe(503);
      expect(Date.now() - started).toBeLessThan(5_000);
      held.release();
      expect((await app.inject({ method: 'GET', url: '/readyz' })).statusCode).toBe(200);
    } finally {
      await app.close();
      await handle.close();
    }
  });
});
