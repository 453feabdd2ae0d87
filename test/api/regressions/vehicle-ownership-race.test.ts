import http from 'node:http';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { useTestApp } from '../../helpers/test-app.js';
import { listenOnLoopback, postReadings, request } from '../../helpers/raw-http.js';

// Regression: two fleets racing for one new vehicle id. (a) Both posting readings: both got 200
// in 103 of 150 trials and both fleets' readings ended up under one owner (the other-fleet check
// read the statement's snapshot, then ON CONFLICT DO NOTHING registered). (b) A's PUT while B's
// gateway registers the id: 37 of 150 wrote A's label into B's vehicle. Real server, real pool,
// many trials: a vehicle belongs to one fleet, and only that fleet's data is ever stored for it.

const TRIALS = 150;
const t = useTestApp();
let base: string;
let keyA: string;
let keyB: string;
const agent = new http.Agent({ keepAlive: true, maxSockets: 8 });
beforeAll(async () => {
  keyA = await t.createKey('fleet-ra', ['ingest']);
  keyB = await t.createKey('fleet-rb', ['ingest']);
  base = await listenOnLoopback(t.app);
});
afterAll(() => agent.destroy());

const ndjson = (vehicleId: string, coolant: number) =>
  `{"vehicleId":"${vehicleId}","ts":${Date.now() - 60_000},"coolant":${coolant}}\n{"vehicleId":"${vehicleId}","ts":${Date.now() - 50_000},"coolant":${coolant}}\n`;

async function ownerAndReadings(vehicleId: string): Promise<{ fleet: string | undefined; coolants: number[] }> {
  const db = t.tdb.handle.db;
  const v = await db.selectFrom('vehicles').select('fleet_id').where('vehicle_id', '=', vehicleId).executeTakeFirst();
  const rows = await db.selectFrom('readings').select('coolant_c').where('vehicle_id', '=', vehicleId).execute();
  return { fleet: v?.fleet_id, coolants: rows.map((r) => r.coolant_c) };
}

describe('two fleets racing for a new vehicle id', () => {
  it('posting readings at once: exactly one fleet wins, the other gets 403, and only the winner’s readings are stored', async () => {
    for (let trial = 0; trial < TRIALS; trial++) {
      const id = `RACE-${trial}`;
      // Fleet A posts coolant 61, fleet B coolant 62: the stored values tell whose readings they are.
      const [a, b] = await Promise.all([
        postReadings(base, keyA, 'application/x-ndjson', ndjson(id, 61), {}, agent),
        postReadings(base, keyB, 'application/x-ndjson', ndjson(id, 62), {}, agent),
      ]);
      expect([a.status, b.status].sort(), `${a.text} ${b.text}`).toEqual([200, 403]);
      const winner = a.status === 200 ? 'fleet-ra' : 'fleet-rb';
      const { fleet, coolants } = await ownerAndReadings(id);
      expect(fleet).toBe(winner);
      expect(coolants).toEqual([winner === 'fleet-ra' ? 61 : 62, winner === 'fleet-ra' ? 61 : 62]);
    }
  });

  it('a profile PUT racing another fleet’s first readings never writes into the other fleet’s vehicle', async () => {
    for (let trial = 0; trial < TRIALS; trial++) {
      const id = `PUTRACE-${trial}`;
      const [put, post] = await Promise.all([
        request(
          base,
          'PUT',
          `/v1/vehicles/${id}`,
          { authorization: `Bearer ${keyA}`, 'content-type': 'application/json' },
          JSON.stringify({ label: 'A label', thermostatOpenC: 82 }),
          agent,
        ),
        postReadings(base, keyB, 'application/x-ndjson', ndjson(id, 62), {}, agent),
      ]);
      const v = await t.tdb.handle.db
        .selectFrom('vehicles')
        .selectAll()
        .where('vehicle_id', '=', id)
        .executeTakeFirstOrThrow();
      if (v.fleet_id === 'fleet-ra') {
        expect(put.status, put.text).toBe(201);
        expect(post.status, post.text).toBe(403);
        expect(v.label).toBe('A label');
      } else {
        expect(post.status, post.text).toBe(200);
        expect(put.status, put.text).toBe(403);
        expect(v.label).toBeNull();
        expect(v.thermostat_open_c).not.toBe(82);
      }
    }
  });
});
