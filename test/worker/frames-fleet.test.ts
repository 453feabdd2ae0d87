import { beforeAll, describe, expect, it } from 'vitest';
import { planFleet, type SimVehicle } from '../../services/simulator/index.js';
import { busLines } from '../../services/simulator/bus-lines.js';
import { simulateToArrays } from '../analysis/evaluation-fleet.js';
import { useTestApp } from '../helpers/test-app.js';
import { analyseNow, derivedState, postReadings, putProfile, readingItems } from '../helpers/worker-fleet.js';

const OPTS = { vehicles: 13, days: 14, seed: 5, startMs: Date.UTC(2026, 9, 5) };
const FRAMES_PER_REQUEST = 40_000;
const t = useTestApp({ maxReadingsPerRequest: 100_000 });
let key: string;
let vehicle: SimVehicle;

/** Runs, days, sensor events, findings and risk without the vehicle id: what must not depend on the way the data came. */
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

async function readings(id: string) {
  const rows = await t.tdb.handle.db
    .selectFrom('readings')
    .selectAll()
    .where('vehicle_id', '=', id)
    .orderBy('ts')
    .execute();
  return rows.map(({ vehicle_id: _v, ...rest }) => rest);
}

async function postLines(protocol: 'j1939' | 'obd', text: string): Promise<void> {
  const lines = text.trimEnd().split('\n');
  for (let i = 0; i < lines.length; i += FRAMES_PER_REQUEST) {
    const res = await t.app.inject({
      method: 'POST',
      url: `/v1/frames/${protocol}`,
      headers: { ...t.auth(key), 'content-type': 'application/x-ndjson' },
      payload: lines.slice(i, i + FRAMES_PER_REQUEST).join('\n'),
    });
    expect(res.statusCode, res.body).toBe(200);
    expect(res.json().rejected).toEqual([]);
  }
}

beforeAll(async () => {
  key = await t.createKey('bus-fleet', ['ingest', 'read']);
  vehicle = planFleet({ ...OPTS, scenario: 'evaluation' }).find((v) => v.faults[0]?.kind === 'thermostat-stuck-open')!;
  const arrays = simulateToArrays(vehicle, OPTS);
  const chunk = { length: arrays.ts.length, ...arrays };
  const roundedAmbient = { ...arrays, ambient: arrays.ambient.map((a) => Math.round(a) + 0) };
  for (const id of ['AS-READINGS', 'AS-J1939', 'AS-READINGS-1C', 'AS-OBD'])
    await putProfile(t, key, { ...vehicle, vehicleId: id });
  await postReadings(t, key, readingItems('AS-READINGS', arrays));
  await postReadings(t, key, readingItems('AS-READINGS-1C', roundedAmbient));
  await postLines('j1939', busLines('AS-J1939', chunk, 'j1939'));
  await postLines('obd', busLines('AS-OBD', chunk, 'obd'));
  await analyseNow(t, key);
}, 600_000);

describe('a simulated fleet posted as vehicle-bus data', () => {
  it('gives the same readings and findings as J1939 frames as it does as readings', async () => {
    const expected = await comparable('AS-READINGS');
    expect(expected.findings.map((f) => f[1])).toContain('slow-warmup');
    expect(await readings('AS-J1939')).toEqual(await readings('AS-READINGS'));
    expect(await comparable('AS-J1939')).toEqual(expected);
  });

  it('gives the same readings and findings as OBD-II responses as it does as readings with ambient in whole degrees', async () => {
    expect(await readings('AS-OBD')).toEqual(await readings('AS-READINGS-1C'));
    expect(await comparable('AS-OBD')).toEqual(await comparable('AS-READINGS-1C'));
  });
});
