import { sql } from 'kysely';
import { beforeAll, describe, expect, it } from 'vitest';
import { useTestApp } from '../helpers/test-app.js';

// Large requests are stored in chunks of 5,000; a chunk is first tried as a plain INSERT and,
// on a duplicate, rolled back to its savepoint and stored with ON CONFLICT DO NOTHING. These
// cases cross chunk boundaries on purpose.
const t = useTestApp();
let key: string;

beforeAll(async () => {
  key = await t.createKey('fleet-chunks', ['ingest']);
});

const BASE_MS = Math.floor((Date.now() - 3 * 86_400_000) / 60_000) * 60_000;
const line = (vehicleId: string, k: number) =>
  `{"vehicleId":"${vehicleId}","ts":${BASE_MS + k * 10_000},"coolant":${20 + (k % 70)}}`;

async function post(lines: string[]) {
  const res = await t.app.inject({
    method: 'POST',
    url: '/v1/readings',
    headers: { ...t.auth(key), 'content-type': 'application/x-ndjson' },
    payload: lines.join('\n'),
  });
  expect(res.statusCode).toBe(200);
  return res.json() as { accepted: number; duplicates: number; rejected: unknown[] };
}

async function dirtyFrom(vehicleId: string): Promise<number | undefined> {
  const r = await sql<{
    dirty_from: Date;
  }>`select dirty_from from analysis_queue where vehicle_id = ${vehicleId}`.execute(t.tdb.handle.db);
  return r.rows[0]?.dirty_from.getTime();
}

describe('ingest across chunks', () => {
  it('stores only the new half of a retried 12,000-line batch and marks the earliest new reading for analysis', async () => {
    const first = Array.from({ length: 6000 }, (_, k) => line('CH-1', k));
    expect(await post(first)).toEqual({ accepted: 6000, duplicates: 0, rejected: [] });
    await sql`delete from analysis_queue where vehicle_id = 'CH-1'`.execute(t.tdb.handle.db);

    // New readings first (one whole chunk and part of the next), then the old ones again.
    const second = [...Array.from({ length: 6000 }, (_, k) => line('CH-1', 6000 + k)), ...first];
    expect(await post(second)).toEqual({ accepted: 6000, duplicates: 6000, rejected: [] });
    expect(await t.countReadings(['CH-1'])).toBe(12_000);
    expect(await dirtyFrom('CH-1')).toBe(BASE_MS + 6000 * 10_000);
  });

  it('does not mark a vehicle whose readings were all duplicates', async () => {
    const lines = Array.from({ length: 5500 }, (_, k) => line('CH-2', k));
    await post(lines);
    await sql`delete from analysis_queue where vehicle_id = 'CH-2'`.execute(t.tdb.handle.db);
    expect(await post(lines)).toEqual({ accepted: 0, duplicates: 5500, rejected: [] });
    expect(await dirtyFrom('CH-2')).toBeUndefined();
  });

  it('counts a reading repeated within one chunk as a duplicate', async () => {
    const lines = Array.from({ length: 3000 }, (_, k) => line('CH-3', k));
    lines.splice(1500, 0, line('CH-3', 42));
    expect(await post(lines)).toEqual({ accepted: 3000, duplicates: 1, rejected: [] });
    expect(await t.countReadings(['CH-3'])).toBe(3000);
  });
});
