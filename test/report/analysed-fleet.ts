import { sql } from 'kysely';
import type { SampleArrays } from '../../services/analysis/sample-arrays.js';
import { DEMO_FLEET_ID, planFleet, type SimVehicle } from '../../services/simulator/index.js';
import { simulateToArrays } from '../analysis/evaluation-fleet.js';
import type { TestApp } from '../helpers/test-app.js';
import { analyseNow, postReadings, putProfile, readingItems } from '../helpers/worker-fleet.js';

/**
 * A simulated demo fleet sent through the real pipeline: profiles and readings through the
 * HTTP API, then the worker (POST /v1/analysis/runs?wait=true). Seven weeks ending with
 * 2026-W48 in Europe/Berlin; one healthy vehicle's gateway goes quiet three days before the end.
 */
export const SEED_WEEK = '2026-W48';
export const SEED_TIME_ZONE = 'Europe/Berlin';
/** Monday 2026-10-12 00:00 UTC: seven weeks before the end of 2026-W48. */
export const SEED_START_MS = Date.UTC(2026, 9, 12);
export const SEED_DAYS = 49;
/** End of 2026-W48 in Europe/Berlin (UTC+1 in November): Monday 2026-11-30 00:00 local. */
export const SEED_WEEK_END_MS = Date.UTC(2026, 10, 29, 23);
/** The quiet gateway's last reading is this long before the end of the week, h. */
export const SILENT_VEHICLE_H = 72;
const SEED = 7;

export interface SeededFleet {
  fleetId: string;
  /** A key of the fleet with ingest and read scopes. */
  key: string;
  vehicles: SimVehicle[];
  silentVehicleId: string;
}

function upTo(a: SampleArrays, endMs: number): SampleArrays {
  let n = a.ts.findIndex((t) => t >= endMs);
  if (n < 0) n = a.ts.length;
  return {
    ts: a.ts.subarray(0, n),
    coolant: a.coolant.subarray(0, n),
    ambient: a.ambient.subarray(0, n),
    speedKph: a.speedKph.subarray(0, n),
    rpm: a.rpm.subarray(0, n),
  };
}

/** Seeds the fleet into the test app's empty database and analyses it. */
export async function seedFleetThroughApi(t: TestApp, vehicleCount = 12): Promise<SeededFleet> {
  const fleetId = DEMO_FLEET_ID;
  const key = await t.createKey(fleetId, ['ingest', 'read']);
  await sql`update fleets set name = 'Quillmoor Provisions', time_zone = ${SEED_TIME_ZONE} where fleet_id = ${fleetId}`.execute(
    t.tdb.handle.db,
  );
  const vehicles = planFleet({ startMs: SEED_START_MS, days: SEED_DAYS, seed: SEED, vehicles: vehicleCount });
  const silent = vehicles.find((v) => v.faults.length === 0)!;
  for (const v of vehicles) {
    await putProfile(t, key, v);
    let arrays: SampleArrays = simulateToArrays(v, { startMs: SEED_START_MS, days: SEED_DAYS, seed: SEED });
    if (v === silent) arrays = upTo(arrays, SEED_WEEK_END_MS - SILENT_VEHICLE_H * 3_600_000);
    await postReadings(t, key, readingItems(v.vehicleId, arrays));
  }
  await analyseNow(t, key);
  return { fleetId, key, vehicles, silentVehicleId: silent.vehicleId };
}
