import type { FastifyInstance } from 'fastify';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildApp } from '../../../services/api/app.js';
import { openDatabase, type DatabaseHandle } from '../../../services/db/database.js';
import { createFleetKey, testConfig } from '../../helpers/test-app.js';
import { createTestDatabase, testDatabaseKind, type TestDatabase } from '../../helpers/test-database.js';
import { listenOnLoopback, postReadings, request } from '../../helpers/raw-http.js';

// Regression: a body of more than one chunk runs in a transaction on a pooled client; reaching a
// month with no partition, it asked the same pool for a second client to create it. With
// DB_POOL_SIZE=1 and one 12,000-line body, or with every client held by such bodies at once,
// every request hung for good, /readyz hung and SIGTERM no longer stopped the process.

let tdb: TestDatabase;
let handle: DatabaseHandle;
let app: FastifyInstance;
let base: string;
let key: string;
const POOL_SIZE = 1;

beforeAll(async () => {
  tdb = await createTestDatabase();
  // On PostgreSQL a pool smaller than the concurrent backfills below; PGlite has one connection anyway.
  handle =
    testDatabaseKind() === 'postgres'
      ? await openDatabase({ databaseUrl: tdb.url, pgliteDir: '', poolSize: POOL_SIZE })
      : tdb.handle;
  app = await buildApp({ config: testConfig(), database: handle });
  base = await listenOnLoopback(app);
  key = await createFleetKey(handle.db, 'fleet-bf', ['ingest']);
});
afterAll(async () => {
  await app?.close();
  if (handle !== tdb.handle) await handle?.close();
  await tdb?.drop();
});

/** NDJSON of `n` readings a minute apart, the first `monthsAgo` months back (months with no partition yet). */
function backfill(vehicleId: string, monthsAgo: number, n: number): string {
  const start = new Date();
  start.setUTCMonth(start.getUTCMonth() - monthsAgo, 20);
  let out = '';
  for (let i = 0; i < n; i++)
    out += `{"vehicleId":"${vehicleId}","ts":${start.getTime() + i * 60_000},"coolant":${60 + (i % 30)}}\n`;
  return out;
}

/** Fails after `ms` instead of waiting for the test timeout: a hang must show as a hang. */
function within<T>(ms: number, what: Promise<T>): Promise<T> {
  return Promise.race([
    what,
    new Promise<never>((_, reject) => setTimeout(() => reject(new Error(`no answer within ${ms} ms`)), ms).unref()),
  ]);
}

describe('back-filled bodies that cross into months with no partition', () => {
  it('store a 12,000-line body that needs two new partitions while it holds the only client of the pool', async () => {
    // 12,000 minutes ≈ 8.3 days from the 20th: the body crosses a month boundary.
    const res = await within(30_000, postReadings(base, key, 'application/x-ndjson', backfill('BF-1', 14, 12_000)));
    expect(res.status, res.text).toBe(200);
    expect(res.json).toMatchObject({ accepted: 12_000, duplicates: 0 });
  });

  it('store six such bodies at once on a pool of one client, and /readyz answers meanwhile', async () => {
    const bodies = Array.from({ length: 6 }, (_, i) =>
      postReadings(base, key, 'application/x-ndjson', backfill(`BF-${10 + i}`, 2 + 2 * i, 7_000)),
    );
    const ready = within(10_000, request(base, 'GET', '/readyz', {}));
    const replies = await within(60_000, Promise.all(bodies));
    for (const r of replies) expect(r.status, r.text).toBe(200);
    expect([200, 503]).toContain((await ready).status);
    expect((await within(5_000, request(base, 'GET', '/readyz', {}))).status).toBe(200);
    const stored = await handle.db
      .selectFrom('readings')
      .select((eb) => eb.fn.countAll<number>().as('n'))
      .where('vehicle_id', 'like', 'BF-1_')
      .executeTakeFirstOrThrow();
    expect(Number(stored.n)).toBe(6 * 7_000);
  });
});
