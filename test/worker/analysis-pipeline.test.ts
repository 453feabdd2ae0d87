import { beforeAll, describe, expect, it } from 'vitest';
import type { SampleArrays } from '../../services/analysis/sample-arrays.js';
import { planFleet, type SimVehicle } from '../../services/simulator/index.js';
import { createQueueRepository } from '../../services/db/analysis-queue-repository.js';
import { simulateToArrays } from '../analysis/evaluation-fleet.js';
import { useTestApp } from '../helpers/test-app.js';
import { analyseNow, derivedState, postReadings, putProfile, readingItems } from '../helpers/worker-fleet.js';
import { DAY_MS } from '../../services/time/durations.js';

const OPTS = { vehicles: 13, days: 30, seed: 5, startMs: Date.UTC(2026, 8, 7) };
const t = useTestApp();
let key: string;
let vehicle: SimVehicle;
let arrays: SampleArrays;

/** Registers a copy of the simulated vehicle under another id. */
const register = (id: string) => putProfile(t, key, { ...vehicle, vehicleId: id });
const dayRange = (d: number): [number, number] => [OPTS.startMs + d * DAY_MS, OPTS.startMs + (d + 1) * DAY_MS];
/** What must not depend on how the readings arrived: runs, days, sensor events, findings, risk. */
async function comparable(id: string) {
  const s = await derivedState(t, [id]);
  const strip = <T extends { vehicle_id: string }>(rows: T[]) => rows.map(({ vehicle_id: _v, ...rest }) => rest);
  return {
    runs: strip(s.runs),
    days: strip(s.days),
    sensorEvents: strip(s.sensorEvents),
    risk: strip(s.risk),
    findings: s.findings.map((f) => [
      f.finding_key,
      f.kind,
      f.severity,
      f.confidence,
      f.first_seen,
      f.last_seen,
      f.status,
      f.metrics,
      f.evidence,
    ]),
  };
}

beforeAll(async () => {
  key = await t.createKey('pipeline', ['ingest', 'read']);
  vehicle = planFleet({ ...OPTS, scenario: 'evaluation' }).find((v) => v.faults[0]?.kind === 'thermostat-stuck-open')!;
  arrays = simulateToArrays(vehicle, OPTS);
  await register('BATCH');
  await postReadings(t, key, readingItems('BATCH', arrays));
  await analyseNow(t, key);
});

describe('the analysis pipeline', () => {
  it('derives runs, days and a slow warm-up finding for a thermostat stuck open', async () => {
    const s = await derivedState(t, ['BATCH']);
    expect(s.runs.length).toBeGreaterThan(OPTS.days);
    expect(s.days.length).toBe(new Set(Array.from(arrays.ts, (ts) => Math.floor(ts / DAY_MS))).size);
    expect(s.findings.map((f) => f.kind)).toContain('slow-warmup');
    expect(s.risk[0]!.last_reading_at?.getTime()).toBe(arrays.ts[arrays.ts.length - 1]);
    const runs = await t.app.inject({ method: 'GET', url: '/v1/vehicles/BATCH/runs?limit=5', headers: t.auth(key) });
    expect(runs.json().runs).toHaveLength(5);
    expect(runs.json().runs[0].metrics).toHaveProperty('timeToTargetS');
  });

  it('changes nothing when the same data is analysed again', async () => {
    const before = await derivedState(t, ['BATCH']);
    await createQueueRepository(t.tdb.handle.db).enqueue('BATCH', 'pipeline', arrays.ts[0]!);
    const run = await analyseNow(t, key);
    expect(run.vehiclesAnalysed).toBe(1);
    expect(await derivedState(t, ['BATCH'])).toEqual(before);
    expect((await analyseNow(t, key)).vehiclesAnalysed).toBe(0);
  });

  it('gives the same results when the readings arrive day by day, each day analysed on arrival', async () => {
    await register('DAILY');
    for (let d = 0; d < OPTS.days; d++) {
      await postReadings(t, key, readingItems('DAILY', arrays, ...dayRange(d)));
      await analyseNow(t, key);
    }
    expect(await comparable('DAILY')).toEqual(await comparable('BATCH'));
  });

  it('re-analyses the affected window when a missing day is back-filled late', async () => {
    await register('LATE');
    const [gapFrom, gapTo] = dayRange(12);
    const items = readingItems('LATE', arrays);
    await postReadings(
      t,
      key,
      readingItems('LATE', arrays, -Infinity, gapFrom).concat(readingItems('LATE', arrays, gapTo)),
    );
    await analyseNow(t, key);
    const withGap = await comparable('LATE');
    expect(withGap).not.toEqual(await comparable('BATCH'));
    expect(await postReadings(t, key, readingItems('LATE', arrays, gapFrom, gapTo))).toBeGreaterThan(0);
    await analyseNow(t, key);
    expect(await comparable('LATE')).toEqual(await comparable('BATCH'));
    expect(items.length).toBe(arrays.ts.length);
  });

  it('resolves the related findings when the thermostat is replaced, and starts a new baseline from that date', async () => {
    const open = (await t.app.inject({ method: 'GET', url: '/v1/vehicles/BATCH/findings', headers: t.auth(key) }))
      .json()
      .findings.filter((f: { status: string }) => f.status === 'open') as Array<{ id: string; kind: string }>;
    const slow = open.find((f) => f.kind === 'slow-warmup')!;
    const at = new Date(arrays.ts[arrays.ts.length - 1]! - DAY_MS).toISOString();
    const res = await t.app.inject({
      method: 'POST',
      url: '/v1/vehicles/BATCH/service-events',
      headers: t.auth(key),
      payload: { kind: 'thermostat-replaced', at, notes: 'new 88 °C thermostat' },
    });
    expect(res.statusCode).toBe(201);
    expect(res.json().event).toMatchObject({
      vehicleId: 'BATCH',
      kind: 'thermostat-replaced',
      at,
      notes: 'new 88 °C thermostat',
    });
    expect(res.json().resolvedFindings).toContain(slow.id);
    await analyseNow(t, key);
    const after = (
      await t.app.inject({ method: 'GET', url: '/v1/vehicles/BATCH/findings', headers: t.auth(key) })
    ).json().findings as Array<{
      id: string;
      kind: string;
      status: string;
      resolvedReason: string | null;
      key: string;
    }>;
    expect(after.find((f) => f.id === slow.id)).toMatchObject({
      status: 'resolved',
      resolvedReason: 'service-event:thermostat-replaced',
    });
    // The baseline restarts at the repair: any slow-warmup finding now is a new one keyed by that date.
    for (const f of after.filter((x) => x.kind === 'slow-warmup' && x.status === 'open'))
      expect(f.key).toBe(`slow-warmup@${at}`);
    const risk = (await t.app.inject({ method: 'GET', url: '/v1/fleet/at-risk', headers: t.auth(key) })).json()
      .vehicles as Array<{ vehicleId: string; findings: Array<{ id: string }> }>;
    expect(risk.find((v) => v.vehicleId === 'BATCH')?.findings.map((f) => f.id) ?? []).not.toContain(slow.id);
    const bad = await t.app.inject({
      method: 'POST',
      url: '/v1/vehicles/BATCH/service-events',
      headers: t.auth(key),
      payload: { kind: 'wheel-aligned' },
    });
    expect(bad.statusCode).toBe(400);
  });
});
