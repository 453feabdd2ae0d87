import { expect } from 'vitest';
import type { SampleArrays } from '../../services/analysis/sample-arrays.js';
import type { SimVehicle } from '../../services/simulator/index.js';
import type { TestApp } from './test-app.js';

/** JSON for the readings of `arrays` with ts in [fromMs, toMs), in the POST /v1/readings item format. */
export function readingItems(vehicleId: string, arrays: SampleArrays, fromMs = -Infinity, toMs = Infinity): string[] {
  const out: string[] = [];
  const opt = (name: string, v: number) => (Number.isNaN(v) ? '' : `,"${name}":${v}`);
  for (let i = 0; i < arrays.ts.length; i++) {
    const ts = arrays.ts[i]!;
    if (ts < fromMs || ts >= toMs) continue;
    out.push(
      `{"vehicleId":"${vehicleId}","ts":${ts},"coolant":${arrays.coolant[i]}${opt('ambient', arrays.ambient[i]!)}${opt('speedKph', arrays.speedKph[i]!)}${opt('rpm', arrays.rpm[i]!)}}`,
    );
  }
  return out;
}

/** Posts readings (JSON items) through the API, in requests of at most `perRequest`; returns the accepted count. */
export async function postReadings(
  t: TestApp,
  key: string,
  items: readonly string[],
  perRequest = 100_000,
): Promise<number> {
  let accepted = 0;
  for (let i = 0; i < items.length; i += perRequest) {
    const res = await t.app.inject({
      method: 'POST',
      url: '/v1/readings',
      headers: { ...t.auth(key), 'content-type': 'application/json' },
      payload: `{"readings":[${items.slice(i, i + perRequest).join(',')}]}`,
    });
    expect(res.statusCode, res.body).toBe(200);
    accepted += (res.json() as { accepted: number }).accepted;
  }
  return accepted;
}

/** Registers a simulated vehicle's cooling-system profile through the API. */
export async function putProfile(t: TestApp, key: string, v: SimVehicle): Promise<void> {
  const res = await t.app.inject({
    method: 'PUT',
    url: `/v1/vehicles/${v.vehicleId}`,
    headers: t.auth(key),
    payload: {
      engineFamily: v.engineFamily,
      thermostatOpenC: v.thermostatOpenC,
      capPressureKpa: v.capPressureKpa,
      glycolPercent: v.glycolPercent,
    },
  });
  expect([200, 201], res.body).toContain(res.statusCode);
}

/** Runs the analysis of the key's fleet through the API and waits for it. */
export async function analyseNow(
  t: TestApp,
  key: string,
): Promise<{ vehiclesAnalysed: number; readingsAnalysed: number; vehiclesFailed: number; failures: unknown[] }> {
  const res = await t.app.inject({ method: 'POST', url: '/v1/analysis/runs?wait=true', headers: t.auth(key) });
  expect(res.statusCode, res.body).toBe(200);
  const run = res.json();
  expect(run.failures).toEqual([]);
  return run;
}

/** Everything the analysis derived for some vehicles, in a stable order (for comparing passes). */
export async function derivedState(t: TestApp, vehicleIds: readonly string[]) {
  const db = t.tdb.handle.db;
  const ids = [...vehicleIds];
  return {
    runs: await db
      .selectFrom('engine_runs')
      .select(['vehicle_id', 'start_ts', 'end_ts', 'start_kind', 'open', 'metrics'])
      .where('vehicle_id', 'in', ids)
      .orderBy('vehicle_id')
      .orderBy('start_ts')
      .execute(),
    days: await db
      .selectFrom('vehicle_days')
      .select(['vehicle_id', 'metrics'])
      .where('vehicle_id', 'in', ids)
      .orderBy('vehicle_id')
      .orderBy('day')
      .execute(),
    sensorEvents: await db
      .selectFrom('sensor_events')
      .selectAll()
      .where('vehicle_id', 'in', ids)
      .orderBy('vehicle_id')
      .orderBy('run_start')
      .orderBy('kind')
      .execute(),
    findings: await db
      .selectFrom('findings')
      .select([
        'vehicle_id',
        'finding_id',
        'finding_key',
        'kind',
        'severity',
        'confidence',
        'first_seen',
        'last_seen',
        'status',
        'summary',
        'metrics',
        'evidence',
        'updated_at',
      ])
      .where('vehicle_id', 'in', ids)
      .orderBy('vehicle_id')
      .orderBy('finding_key')
      .execute(),
    risk: await db
      .selectFrom('vehicle_analysis')
      .select(['vehicle_id', 'risk_score', 'open_findings', 'max_severity', 'resume_from', 'last_reading_at'])
      .where('vehicle_id', 'in', ids)
      .orderBy('vehicle_id')
      .execute(),
  };
}
