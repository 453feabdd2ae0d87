import { sql } from 'kysely';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { createFleetsRepository } from '../../services/db/fleets-repository.js';
import { PartitionKeeper } from '../../services/db/partitions.js';
import { createReadingsRepository } from '../../services/db/readings-repository.js';
import type { ReadingChunk } from '../../services/db/reading-chunk.js';
import { BACKOFF_BASE_MS, createQueueRepository } from '../../services/db/analysis-queue-repository.js';
import { createTestDatabase, type TestDatabase } from '../helpers/test-database.js';
import { HOUR_MS } from '../../services/time/durations.js';

let tdb: TestDatabase;
let queue: ReturnType<typeof createQueueRepository>;
const T0 = Date.UTC(2026, 9, 5, 6);

beforeAll(async () => {
  tdb = await createTestDatabase();
  queue = createQueueRepository(tdb.handle.db);
  await createFleetsRepository(tdb.handle.db).ensure('fleet-q');
});
afterAll(async () => tdb.drop());
beforeEach(async () => {
  await sql`delete from analysis_queue`.execute(tdb.handle.db);
});

const row = async (vehicleId: string) =>
  sql<{
    locked_by: string | null;
    attempts: number;
    last_error: string | null;
    dirty_from: Date;
    leased_from: Date | null;
    run_after: Date;
    now: Date;
  }>`
    select locked_by, attempts, last_error, dirty_from, leased_from, run_after, now() as now from analysis_queue where vehicle_id = ${vehicleId}`
    .execute(tdb.handle.db)
    .then((r) => r.rows[0]);

/** Ingests one reading per vehicle through the real ingest path (which enqueues like gateways do). */
async function ingest(readings: Array<[string, number]>) {
  const repo = createReadingsRepository(tdb.handle, new PartitionKeeper());
  const n = readings.length;
  const chunk: ReadingChunk = {
    length: n,
    vehicleIds: readings.map((r) => r[0]),
    tsMs: Float64Array.from(readings.map((r) => r[1])),
    coolantC: new Float64Array(n).fill(80),
    ambientC: new Float64Array(n).fill(NaN),
    speedKph: new Float64Array(n).fill(NaN),
    rpm: new Float64Array(n).fill(NaN),
  };
  async function* one() {
    yield chunk;
  }
  return repo.ingest('fleet-q', one(), {
    keyId: 'test',
    contentType: 'application/json',
    bodyBytes: () => 0,
    rejected: () => 0,
  });
}

describe('analysis queue leasing', () => {
  it('leases each dirty vehicle to one worker only, and counts the attempt', async () => {
    for (const v of ['Q-A', 'Q-B', 'Q-C']) await queue.enqueue(v, 'fleet-q', T0);
    const first = await queue.lease('w1', 2, 60_000);
    const second = await queue.lease('w2', 5, 60_000);
    expect(first.map((l) => l.vehicleId)).toEqual(['Q-A', 'Q-B']);
    expect(second.map((l) => l.vehicleId)).toEqual(['Q-C']);
    expect(await queue.lease('w1', 5, 60_000)).toEqual([]);
    expect(first[0]).toMatchObject({ fleetId: 'fleet-q', windowFromMs: T0, attempts: 1 });
    expect((await row('Q-A'))?.locked_by).toBe('w1');
    expect(await queue.counts('fleet-q')).toEqual({ ready: 0, leased: 3, backingOff: 0 });
  });

  it('gives concurrent lease calls disjoint sets of vehicles', async () => {
    const ids = Array.from({ length: 12 }, (_, i) => `Q-P${String(i).padStart(2, '0')}`);
    for (const v of ids) await queue.enqueue(v, 'fleet-q', T0);
    const batches = await Promise.all(['w1', 'w2', 'w3', 'w4'].map((w) => queue.lease(w, 4, 60_000)));
    const leased = batches.flat().map((l) => l.vehicleId);
    expect(new Set(leased).size).toBe(leased.length);
    expect(leased.sort()).toEqual(ids);
  });

  it('leases only the fleet asked for', async () => {
    await queue.enqueue('Q-F1', 'fleet-q', T0);
    await queue.enqueue('Q-F2', 'other-fleet', T0);
    expect((await queue.lease('w1', 10, 60_000, { fleetId: 'other-fleet' })).map((l) => l.vehicleId)).toEqual(['Q-F2']);
  });

  it('removes the row on finish when no reading arrived during the lease', async () => {
    await ingest([['Q-D', T0]]);
    const [lease] = await queue.lease('w1', 1, 60_000);
    expect(await queue.finish('w1', lease!)).toBe('done');
    expect(await row('Q-D')).toBeUndefined();
  });

  it('releases the row on finish when readings arrived during the lease, with exactly their earliest time as the new window', async () => {
    await ingest([['Q-E', T0]]);
    const [lease] = await queue.lease('w1', 1, 60_000);
    await ingest([
      ['Q-E', T0 + 5 * HOUR_MS],
      ['Q-E', T0 + 3 * HOUR_MS],
    ]);
    expect(await queue.finish('w1', lease!)).toBe('again');
    const r = await row('Q-E');
    expect(r).toMatchObject({ locked_by: null, attempts: 0, leased_from: null });
    expect(r?.dirty_from.getTime()).toBe(T0 + 3 * HOUR_MS);
    const [again] = await queue.lease('w2', 1, 60_000);
    expect(again?.windowFromMs).toBe(T0 + 3 * HOUR_MS);
  });

  /** run_after was set to "now + backoff" by fail(); the row is read a moment later, on a loaded machine up to a second. */
  function expectBackoff(r: { run_after: Date; now: Date }, backoffMs: number): void {
    const left = r.run_after.getTime() - r.now.getTime();
    expect(left).toBeLessThanOrEqual(backoffMs);
    expect(left).toBeGreaterThan(backoffMs - 1000);
  }

  it('keeps the window after a failure, records the error and backs off exponentially', async () => {
    await ingest([['Q-F', T0]]);
    const [lease] = await queue.lease('w1', 1, 60_000);
    await ingest([['Q-F', T0 + HOUR_MS]]);
    await queue.fail('w1', lease!.vehicleId, 'division by zero');
    let r = await row('Q-F');
    expect(r).toMatchObject({ locked_by: null, last_error: 'division by zero', attempts: 1, leased_from: null });
    expect(r?.dirty_from.getTime()).toBe(T0);
    expectBackoff(r!, BACKOFF_BASE_MS);
    expect(await queue.lease('w2', 1, 60_000)).toEqual([]);
    expect(await queue.counts('fleet-q')).toMatchObject({ backingOff: 1 });

    const [retry] = await queue.lease('w2', 1, 60_000, { ignoreBackoff: true });
    expect(retry).toMatchObject({ windowFromMs: T0, attempts: 2 });
    await queue.fail('w2', 'Q-F', 'division by zero again');
    r = await row('Q-F');
    expectBackoff(r!, 2 * BACKOFF_BASE_MS);
  });

  it('frees an expired lease in the sweep, keeps its window, and stops the dead worker from finishing it', async () => {
    await ingest([['Q-G', T0]]);
    const [lease] = await queue.lease('dead', 1, 60_000);
    await ingest([['Q-G', T0 + HOUR_MS]]);
    // The lease runs out (moved into the past rather than waited for).
    await sql`update analysis_queue set locked_until = now() - interval '1 second' where vehicle_id = 'Q-G'`.execute(
      tdb.handle.db,
    );
    expect(await queue.holds('dead', 'Q-G')).toBe(false);
    expect(await queue.sweepExpired()).toEqual(['Q-G']);
    const r = await row('Q-G');
    expect(r).toMatchObject({ locked_by: null, last_error: 'lease of dead expired' });
    expect(r?.dirty_from.getTime()).toBe(T0);
    expect(await queue.finish('dead', lease!)).toBe('lost');
    expect(await row('Q-G')).toBeDefined();
  });

  it("lets another worker take over an expired lease directly, with the dead worker's window", async () => {
    await ingest([['Q-H', T0]]);
    await queue.lease('dead', 1, 60_000);
    await ingest([['Q-H', T0 + HOUR_MS]]);
    expect(await queue.lease('w2', 1, 60_000)).toEqual([]);
    await sql`update analysis_queue set locked_until = now() - interval '1 second' where vehicle_id = 'Q-H'`.execute(
      tdb.handle.db,
    );
    const [taken] = await queue.lease('w2', 1, 60_000);
    expect(taken).toMatchObject({ vehicleId: 'Q-H', windowFromMs: T0, attempts: 2 });
  });

  it('gives leases back on release without counting the attempt', async () => {
    await queue.enqueue('Q-I', 'fleet-q', T0);
    await queue.lease('w1', 1, 60_000);
    expect(await queue.release('w1', ['Q-I'])).toBe(1);
    expect(await row('Q-I')).toMatchObject({ locked_by: null, attempts: 0, last_error: null });
    expect((await queue.lease('w2', 1, 60_000))[0]).toMatchObject({ vehicleId: 'Q-I', windowFromMs: T0 });
  });

  it('extends only the leases the worker holds', async () => {
    await queue.enqueue('Q-J', 'fleet-q', T0);
    await queue.lease('w1', 1, 1000);
    expect(await queue.extend('w2', ['Q-J'], 60_000)).toBe(0);
    expect(await queue.extend('w1', ['Q-J'], 60_000)).toBe(1);
    const r = await sql<{
      left_ms: number;
    }>`select extract(epoch from locked_until - now()) * 1000 as left_ms from analysis_queue where vehicle_id = 'Q-J'`.execute(
      tdb.handle.db,
    );
    expect(Number(r.rows[0]!.left_ms)).toBeGreaterThan(50_000);
  });
});
