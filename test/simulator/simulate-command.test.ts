import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { NdjsonEncoder, planFleet, simulateVehicle, type SampleChunk } from '../../services/simulator/index.js';
import { run } from '../../services/simulator/simulate-command.js';

const dirs: string[] = [];
async function tempDir(): Promise<string> {
  const d = await mkdtemp(join(tmpdir(), 'sim-cmd-'));
  dirs.push(d);
  return d;
}
afterAll(async () => {
  for (const d of dirs) await rm(d, { recursive: true, force: true });
});

describe('NdjsonEncoder', () => {
  it('writes exactly what JSON.stringify writes for each reading', () => {
    const chunk: SampleChunk = {
      length: 4,
      ts: Float64Array.from([
        Date.UTC(2026, 9, 5, 6, 12, 30),
        Date.UTC(2026, 9, 5, 6, 59, 59),
        Date.UTC(2026, 9, 5, 7, 0, 0, 250),
        Date.UTC(2027, 0, 1),
      ]),
      coolant: Float64Array.from([23, -40, 210, 0]),
      ambient: Float64Array.from([7.5, -12.03125, 0.1, -0.5]),
      speedKph: Float64Array.from([0, 87, 12.5, 100]),
      rpm: Float64Array.from([700, 1450, 2210, 1e21]),
      coolantTrue: new Float64Array(4),
    };
    const expected = Array.from(
      { length: 4 },
      (_, i) =>
        JSON.stringify({
          vehicleId: 'RV-101',
          ts: new Date(chunk.ts[i]!).toISOString(),
          coolant: chunk.coolant[i],
          ambient: chunk.ambient[i],
          speedKph: chunk.speedKph[i],
          rpm: chunk.rpm[i],
        }) + '\n',
    ).join('');
    expect(new NdjsonEncoder('RV-101').lines(chunk)).toBe(expected);
  });
});

describe('thermocline simulate', () => {
  it('writes readings, vehicle profiles without faults, and ground truth, identically for the same seed', async () => {
    const [a, b] = [await tempDir(), await tempDir()];
    const args = ['--vehicles', '3', '--days', '2', '--seed', '4', '--scenario', 'evaluation'];
    expect(await run([...args, '--out', a])).toBe(0);
    expect(await run([...args, '--out', b])).toBe(0);
    const readings = await readFile(join(a, 'readings.ndjson'), 'utf8');
    expect(await readFile(join(b, 'readings.ndjson'), 'utf8')).toBe(readings);
    const lines = readings.trimEnd().split('\n');
    const fleet = planFleet({ startMs: Date.UTC(2026, 9, 5), days: 2, seed: 4, vehicles: 3, scenario: 'evaluation' });
    const expectedCount = fleet.reduce(
      (n, v) =>
        n +
        [...simulateVehicle(v, { startMs: Date.UTC(2026, 9, 5), days: 2, seed: 4 })].reduce((m, c) => m + c.length, 0),
      0,
    );
    expect(lines).toHaveLength(expectedCount);
    const first = JSON.parse(lines[0]!);
    expect(Object.keys(first)).toEqual(['vehicleId', 'ts', 'coolant', 'ambient', 'speedKph', 'rpm']);
    const vehicles = JSON.parse(await readFile(join(a, 'vehicles.json'), 'utf8'));
    expect(vehicles).toHaveLength(3);
    expect(vehicles[0]).not.toHaveProperty('faults');
    expect(vehicles[0]).toMatchObject({ engineFamily: expect.any(String), thermostatOpenC: expect.any(Number) });
    const truth = JSON.parse(await readFile(join(a, 'truth.json'), 'utf8'));
    expect(truth.map((t: { vehicleId: string }) => t.vehicleId)).toEqual(
      vehicles.map((v: { vehicleId: string }) => v.vehicleId),
    );
  });

  it('refuses bad options with exit code 2', async () => {
    expect(await run(['--vehicles', '0', '--out', await tempDir()])).toBe(2);
    expect(await run(['--vehicles', '2'])).toBe(2);
    expect(await run(['--scenario', 'party', '--out', await tempDir()])).toBe(2);
    expect(await run(['--start', '5 Oct', '--out', await tempDir()])).toBe(2);
  });
});
