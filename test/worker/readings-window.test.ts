import { sql } from 'kysely';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { monthIndexOf, PartitionKeeper } from '../../services/db/partitions.js';
import { readWindowAsText, readWindows } from '../../services/worker/readings-window.js';
import { createTestDatabase, type TestDatabase } from '../helpers/test-database.js';

let tdb: TestDatabase;
const T0 = Date.UTC(2026, 9, 5, 6);
const HOUR_MS = 3_600_000;

/** Inserts readings in the given order (which becomes their heap order). */
async function insert(rows: Array<[string, number, number, number | null]>) {
  const db = tdb.handle.db;
  await sql`
    insert into readings (vehicle_id, ts, coolant_c, ambient_c, speed_kph, rpm)
    select v, to_timestamp(t / 1000), c, a, case when c > 80 then 42.5 end, 1500
    from unnest(${rows.map((r) => r[0])}::text[], ${rows.map((r) => r[1])}::float8[], ${rows.map((r) => r[2])}::real[], ${rows.map((r) => r[3])}::real[])
      with ordinality as u(v, t, c, a, o)
    order by o`.execute(db);
}

beforeAll(async () => {
  tdb = await createTestDatabase();
  await new PartitionKeeper().ensure(tdb.handle.db, new Set([monthIndexOf(T0)]));
  // Three vehicles posting interleaved, every 10 s for two hours, with values that do not print exactly.
  const rows: Array<[string, number, number, number | null]> = [];
  for (let i = 0; i < 720; i++) {
    for (const [k, v] of ['RW-A', 'RW-B', 'RW-C'].entries()) {
      if (i >= 300 && i < 360 && v === 'RW-A') continue; // A's gap, back-filled below
      rows.push([v, T0 + i * 10_000, 20 + i * 0.1 + k / 3, k === 1 ? null : 11.7 + (i % 7) / 10]);
    }
  }
  await insert(rows);
  // A's missing ten minutes arrive late: stored after everything else, out of time order.
  const late: Array<[string, number, number, number | null]> = [];
  for (let i = 359; i >= 300; i--) late.push(['RW-A', T0 + i * 10_000, 50.3 + i / 7, 12.1]);
  await insert(late);
});
afterAll(async () => tdb.drop());

describe('readWindows', () => {
  it('reads several vehicles\' windows at once exactly as Postgres prints each one alone, ascending in time', async () => {
    const windows = [
      { vehicleId: 'RW-A', fromMs: T0 + 0.5 * HOUR_MS, toMs: T0 + 1.5 * HOUR_MS },
      { vehicleId: 'RW-B', fromMs: T0, toMs: T0 + 2 * HOUR_MS },
      { vehicleId: 'RW-C', fromMs: T0 + HOUR_MS, toMs: T0 + HOUR_MS + 10_000 },
      { vehicleId: 'RW-none', fromMs: T0, toMs: T0 + 2 * HOUR_MS },
    ];
    const together = await readWindows(tdb.handle, windows);
    expect(together).toHaveLength(4);
    for (const [k, w] of windows.entries()) {
      const alone = await readWindowAsText(tdb.handle, w.vehicleId, w.fromMs, w.toMs);
      expect(together[k], w.vehicleId).toEqual(alone);
    }
    const a = together[0]!;
    expect(a.ts.length).toBe(360);
    for (let i = 1; i < a.ts.length; i++) expect(a.ts[i]).toBe(a.ts[i - 1]! + 10_000);
    expect(Number.isNaN(together[1]!.ambient[0])).toBe(true);
    expect(together[2]!.ts.length).toBe(1);
    expect(together[3]!.ts.length).toBe(0);
  });

  it('returns the rows a caller already holds (a prefix) before the rows it reads', async () => {
    const [head] = await readWindows(tdb.handle, [{ vehicleId: 'RW-B', fromMs: T0, toMs: T0 + HOUR_MS }]);
    const [joined, other] = await readWindows(tdb.handle, [
      { vehicleId: 'RW-B', fromMs: T0 + HOUR_MS, toMs: T0 + 2 * HOUR_MS, prefix: head! },
      { vehicleId: 'RW-C', fromMs: T0, toMs: T0 + HOUR_MS },
    ]);
    expect(joined).toEqual(await readWindowAsText(tdb.handle, 'RW-B', T0, T0 + 2 * HOUR_MS));
    expect(other).toEqual(await readWindowAsText(tdb.handle, 'RW-C', T0, T0 + HOUR_MS));
  });
});
