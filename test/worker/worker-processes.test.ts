import { sql } from 'kysely';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { monthIndexOf, PartitionKeeper } from '../../services/db/partitions.js';
import { createQueueRepository } from '../../services/db/analysis-queue-repository.js';
import { createTestDatabase, testDatabaseKind, type TestDatabase } from '../helpers/test-database.js';
import { WorkerProcess } from '../helpers/worker-process.js';
import { DAY_MS } from '../../services/time/durations.js';

const START = Date.UTC(2026, 9, 5);
const DAYS = 12;
let tdb: TestDatabase;
const workers: WorkerProcess[] = [];

/** Twelve days of one 8-hour shift a day at 10 s: a Newton warm-up to a regulated 90 °C. */
async function seedVehicles(ids: string[]): Promise<void> {
  const db = tdb.handle.db;
  await sql`insert into vehicles (vehicle_id, fleet_id) select unnest(${ids}::text[]), 'fleet-w'`.execute(db);
  await sql`
    insert into readings (vehicle_id, ts, coolant_c, ambient_c, speed_kph, rpm)
    select v, to_timestamp(${START / 1000}::float8 + d * 86400 + 6 * 3600 + s), round(least(90, 105 - 95 * exp(-s / 500.0))), 10, 50, 1500
    from unnest(${ids}::text[]) v, generate_series(0, ${DAYS - 1}) d, generate_series(0, 8 * 3600, 10) s`.execute(db);
  const queue = createQueueRepository(db);
  for (const id of ids) await queue.enqueue(id, 'fleet-w', START);
}

function start(env: Record<string, string>): WorkerProcess {
  const w = new WorkerProcess({ DATABASE_URL: tdb.url!, WORKER_POLL_MS: '100', ...env });
  workers.push(w);
  return w;
}

const LAST_READING_MS = START + (DAYS - 1) * DAY_MS + (6 * 3600 + 8 * 3600) * 1000;

describe.skipIf(testDatabaseKind() !== 'postgres')('real worker processes on PostgreSQL', () => {
  beforeAll(async () => {
    tdb = await createTestDatabase();
    await new PartitionKeeper().ensure(tdb.handle.db, [monthIndexOf(START), monthIndexOf(START + DAYS * DAY_MS)]);
  });
  afterAll(async () => {
    for (const w of workers) w.kill('SIGKILL');
    await Promise.all(workers.map((w) => w.exited));
    await tdb?.drop();
  });

  it('never analyse one vehicle in two processes at the same time, and stop cleanly on SIGTERM', async () => {
    const ids = Array.from({ length: 8 }, (_, i) => `P-${i + 1}`);
    await seedVehicles(ids);
    const pair = [start({ WORKER_BATCH_SIZE: '1' }), start({ WORKER_BATCH_SIZE: '1' })];
    const passes = () => pair.flatMap((w) => w.analysed());
    const doneAfter = (since: number) => () =>
      ids.every((id) => passes().some((p) => p.vehicleId === id && p.queue === 'done' && p.startedAt >= since));
    const waitAll = (since: number) => Promise.race(pair.map((w) => w.waitFor(doneAfter(since), 90_000)));
    await waitAll(0);
    // More rounds while both run: every vehicle dirty again, analysed again by whichever worker leases it.
    const queue = createQueueRepository(tdb.handle.db);
    for (let round = 0; round < 3; round++) {
      const since = Date.now();
      for (const id of ids) await queue.enqueue(id, 'fleet-w', START);
      await waitAll(since);
    }

    const byVehicle = new Map<string, Array<{ startedAt: number; finishedAt: number; workerId: string }>>();
    for (const p of passes()) byVehicle.set(p.vehicleId, [...(byVehicle.get(p.vehicleId) ?? []), p]);
    for (const [id, list] of byVehicle) {
      list.sort((a, b) => a.startedAt - b.startedAt);
      for (let i = 1; i < list.length; i++)
        expect(list[i]!.startedAt, `${id}: pass ${i} began before pass ${i - 1} ended`).toBeGreaterThanOrEqual(
          list[i - 1]!.finishedAt,
        );
    }
    expect(pair.every((w) => w.analysed().length > 0)).toBe(true);
    expect(new Set(passes().map((p) => p.workerId)).size).toBe(2);

    for (const w of pair) w.kill('SIGTERM');
    expect((await Promise.all(pair.map((w) => w.exited))).map((e) => e.code)).toEqual([0, 0]);
    const left = await sql<{
      n: number;
    }>`select count(*)::int as n from analysis_queue where vehicle_id like 'P-%'`.execute(tdb.handle.db);
    expect(left.rows[0]!.n).toBe(0);
  });

  it('loses nothing when a worker is killed with SIGKILL holding leases: another picks them up after the lease expires', async () => {
    const ids = Array.from({ length: 6 }, (_, i) => `K-${i + 1}`);
    await seedVehicles(ids);
    const victim = start({ WORKER_BATCH_SIZE: '6', WORKER_LEASE_MS: '1500' });
    await victim.waitFor((lines) => lines.some((l) => l.msg === 'vehicle analysed'));
    victim.kill('SIGKILL');
    expect((await victim.exited).signal).toBe('SIGKILL');
    const held = await sql<{
      vehicle_id: string;
    }>`select vehicle_id from analysis_queue where vehicle_id like 'K-%' and locked_by is not null`.execute(
      tdb.handle.db,
    );
    expect(held.rows.length).toBeGreaterThan(0);

    const rescuer = start({ WORKER_BATCH_SIZE: '6', WORKER_LEASE_MS: '1500' });
    const finishedByVictim = new Set(victim.analysed().map((p) => p.vehicleId));
    const rest = ids.filter((id) => !finishedByVictim.has(id));
    await rescuer.waitFor(
      () => rest.every((id) => rescuer.analysed().some((p) => p.vehicleId === id && p.queue === 'done')),
      90_000,
    );

    const state = await tdb.handle.db
      .selectFrom('vehicle_analysis')
      .select(['vehicle_id', 'last_reading_at'])
      .where('vehicle_id', 'in', ids)
      .orderBy('vehicle_id')
      .execute();
    expect(state.map((s) => [s.vehicle_id, s.last_reading_at?.getTime()])).toEqual(
      ids.map((id) => [id, LAST_READING_MS]),
    );
    const left = await sql<{
      n: number;
    }>`select count(*)::int as n from analysis_queue where vehicle_id like 'K-%'`.execute(tdb.handle.db);
    expect(left.rows[0]!.n).toBe(0);
    rescuer.kill('SIGTERM');
    expect((await rescuer.exited).code).toBe(0);
  });
});
