import { sql } from 'kysely';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { monthIndexOf, PartitionKeeper } from '../../services/db/partitions.js';
import { WindowBuffers } from '../../services/db/pg-wire/binary-window-decoder.js';
import { readWindowAsText, readWindows } from '../../services/db/reading-windows.js';
import { createTestDatabase, type TestDatabase } from '../helpers/test-database.js';
import { HOUR_MS } from '../../services/time/durations.js';

let tdb: TestDatabase;
const T0 = Date.UTC(2026, 9, 5, 6);

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
  it("reads several vehicles' windows at once exactly as Postgres prints each one alone, ascending in time", async () => {
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

  it("reads windows longer than their buffers' first room into buffers reused from read to read, with a prefix and late rows", async () => {
    // RW-D: 9,000 readings a second apart, its 6,000th to 7,000th arriving late in reverse.
    const d0 = T0 + 3 * HOUR_MS;
    const rows: Array<[string, number, number, number | null]> = [];
    for (let i = 0; i < 9000; i++)
      if (i < 6000 || i >= 7000) rows.push(['RW-D', d0 + i * 1000, 60 + i / 9, 10 + (i % 11) / 3]);
    await insert(rows);
    const late: Array<[string, number, number, number | null]> = [];
    for (let i = 6999; i >= 6000; i--) late.push(['RW-D', d0 + i * 1000, 70.1 + i / 13, null]);
    await insert(late);
    const mid = d0 + 5000 * 1000;
    const end = d0 + 9000 * 1000;
    const buffers = new WindowBuffers();
    const [c, head] = await readWindows(
      tdb.handle,
      [
        { vehicleId: 'RW-C', fromMs: T0, toMs: T0 + HOUR_MS },
        { vehicleId: 'RW-D', fromMs: d0, toMs: mid },
      ],
      buffers,
    );
    expect(c).toEqual(await readWindowAsText(tdb.handle, 'RW-C', T0, T0 + HOUR_MS));
    expect(head).toEqual(await readWindowAsText(tdb.handle, 'RW-D', d0, mid));
    const kept = {
      ts: head!.ts.slice(),
      coolant: head!.coolant.slice(),
      ambient: head!.ambient.slice(),
      speedKph: head!.speedKph.slice(),
      rpm: head!.rpm.slice(),
    };
    const [joined, b] = await readWindows(
      tdb.handle,
      [
        { vehicleId: 'RW-D', fromMs: mid, toMs: end, prefix: kept },
        { vehicleId: 'RW-B', fromMs: T0, toMs: T0 + 2 * HOUR_MS },
      ],
      buffers,
    );
    const whole = await readWindowAsText(tdb.handle, 'RW-D', d0, end);
    expect(whole.ts.length).toBe(9000);
    expect(joined).toEqual(whole);
    expect(b).toEqual(await readWindowAsText(tdb.handle, 'RW-B', T0, T0 + 2 * HOUR_MS));
  });
});

describe('WindowBuffers', () => {
  it("holds at most twice the largest read's rows when each read's rows fall in another window", () => {
    const buffers = new WindowBuffers();
    const windows = 8;
    const rows = 200_000;
    for (let k = 0; k < windows; k++) {
      buffers.reserve(k, rows, 0);
      buffers.trim(Array.from({ length: windows }, (_, j) => (j === k ? rows : 0)));
      expect(buffers.windows[k]![0]!.length).toBeGreaterThanOrEqual(rows);
    }
    expect(buffers.capacityRows()).toBeLessThanOrEqual(2 * 262_144);
  });
});
