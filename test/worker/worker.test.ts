import { sql } from 'kysely';
import { beforeAll, describe, expect, it } from 'vitest';
import type { WorkerLogger } from '../../services/worker/lease-processor.js';
import { Worker } from '../../services/worker/worker.js';
import { useTestApp } from '../helpers/test-app.js';
import { postReadings } from '../helpers/worker-fleet.js';
import { HOUR_MS } from '../../services/time/durations.js';

const t = useTestApp();
const START = Date.UTC(2026, 9, 5, 6);
let key: string;

/** 100 readings at 10 s of one vehicle, warming from 20 °C. */
const items = (vehicleId: string) =>
  Array.from(
    { length: 100 },
    (_, i) =>
      `{"vehicleId":"${vehicleId}","ts":${START + i * 10_000},"coolant":${Math.min(90, 20 + i)},"ambient":15,"speedKph":40,"rpm":1400}`,
  );

/** A logger that calls `onAnalysed` for each 'vehicle analysed' line. */
function logger(onAnalysed: (vehicleId: string) => void): WorkerLogger {
  return {
    info: (obj, msg) => {
      if (msg === 'vehicle analysed') onAnalysed((obj as { vehicleId: string }).vehicleId);
    },
    warn: () => undefined,
    error: () => undefined,
  };
}

beforeAll(async () => {
  key = await t.createKey('fleet-wk', ['ingest', 'read']);
});

describe('the Worker', () => {
  it('wakes when an ingest commits instead of waiting for its next poll', async () => {
    let analysed!: (id: string) => void;
    const seen = new Promise<string>((resolve) => (analysed = resolve));
    const worker = new Worker({
      handle: t.tdb.handle,
      pollMs: HOUR_MS,
      leaseMs: 60_000,
      batchSize: 10,
      logger: logger((id) => analysed(id)),
    });
    t.app.ingestNotifier.on('readings', () => worker.wake());
    worker.start();
    await postReadings(t, key, items('WK-1'));
    expect(await seen).toBe('WK-1');
    await worker.stop();
    const state = await t.tdb.handle.db
      .selectFrom('vehicle_analysis')
      .select('last_reading_at')
      .where('vehicle_id', '=', 'WK-1')
      .executeTakeFirstOrThrow();
    expect(state.last_reading_at?.getTime()).toBe(START + 99 * 10_000);
  });

  it('finishes the vehicle in hand on stop and releases the rest of its batch', async () => {
    t.app.ingestNotifier.removeAllListeners('readings');
    await postReadings(t, key, [...items('WS-1'), ...items('WS-2'), ...items('WS-3')]);
    const done: string[] = [];
    let stopping: Promise<void> | undefined;
    let stopped!: () => void;
    const firstDone = new Promise<void>((resolve) => (stopped = resolve));
    const worker = new Worker({
      handle: t.tdb.handle,
      pollMs: HOUR_MS,
      leaseMs: 60_000,
      batchSize: 10,
      logger: logger((id) => {
        done.push(id);
        stopping ??= worker.stop();
        stopped();
      }),
    });
    worker.start();
    await firstDone;
    await stopping;
    expect(done).toEqual(['WS-1']);
    const rows = await sql<{ vehicle_id: string; locked_by: string | null; attempts: number }>`
      select vehicle_id, locked_by, attempts from analysis_queue where vehicle_id like 'WS-%' order by vehicle_id`.execute(
      t.tdb.handle.db,
    );
    expect(rows.rows).toEqual([
      { vehicle_id: 'WS-2', locked_by: null, attempts: 0 },
      { vehicle_id: 'WS-3', locked_by: null, attempts: 0 },
    ]);
  });
});
