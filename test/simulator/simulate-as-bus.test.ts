import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { alignReadings, emptyDerivedReadings } from '../../services/bus-decoding/align-readings.js';
import { FrameCollector } from '../../services/bus-decoding/frame-collector.js';
import { parseHexBytes, parseHexNumber } from '../../services/bus-decoding/hex-bytes.js';
import { rollUp } from '../../services/bus-decoding/vehicle-slots.js';
import { run } from '../../services/simulator/simulate-command.js';

const dirs: string[] = [];
afterAll(async () => {
  for (const d of dirs) await rm(d, { recursive: true, force: true });
});

const ARGS = ['--vehicles', '3', '--days', '2', '--seed', '4', '--scenario', 'evaluation'];

async function simulate(as: string): Promise<string> {
  const dir = await mkdtemp(join(tmpdir(), 'sim-bus-'));
  dirs.push(dir);
  expect(await run([...ARGS, '--as', as, '--out', dir])).toBe(0);
  return dir;
}

type Row = [string, number, number, number, number, number];

/** The readings the frame ingest forms from a file of frames or responses (10 s slots). */
function decodedRows(text: string, protocol: 'j1939' | 'obd'): Row[] {
  const c = new FrameCollector({ ambientMinC: -90, ambientMaxC: 90 });
  const bytes = new Uint8Array(32);
  for (const line of text.trimEnd().split('\n')) {
    const f = JSON.parse(line) as { vehicleId: string; ts: number; canId?: string; data: string };
    const n = parseHexBytes(f.data, bytes);
    const reason =
      protocol === 'j1939'
        ? c.j1939(f.vehicleId, f.ts, parseHexNumber(f.canId!), bytes, n)
        : c.obdResponse(f.vehicleId, f.ts, bytes, n);
    expect(reason).toBeNull();
  }
  const rows: Row[] = [];
  for (const [id, pre] of c.vehicles) {
    const r = alignReadings(rollUp(pre, 10_000), -Infinity, Infinity, emptyDerivedReadings());
    for (let i = 0; i < r.length; i++)
      rows.push([id, r.tsMs[i]!, r.coolantC[i]!, r.ambientC[i]!, r.speedKph[i]!, r.rpm[i]!]);
  }
  return rows;
}

function readingRows(text: string, roundAmbient: boolean): Row[] {
  return text
    .trimEnd()
    .split('\n')
    .map((line) => {
      const r = JSON.parse(line) as {
        vehicleId: string;
        ts: string;
        coolant: number;
        ambient: number | null;
        speedKph: number | null;
        rpm: number | null;
      };
      const ambient = r.ambient ?? NaN;
      return [
        r.vehicleId,
        Date.parse(r.ts),
        r.coolant,
        roundAmbient ? Math.round(ambient) + 0 : ambient,
        r.speedKph ?? NaN,
        r.rpm ?? NaN,
      ];
    });
}

describe('thermocline simulate --as', () => {
  it('writes J1939 frames that decode and align to exactly the readings it writes otherwise', async () => {
    const readings = await readFile(join(await simulate('readings'), 'readings.ndjson'), 'utf8');
    const frames = await readFile(join(await simulate('j1939'), 'frames.ndjson'), 'utf8');
    expect(JSON.parse(frames.slice(0, frames.indexOf('\n')))).toEqual({
      vehicleId: expect.any(String),
      ts: expect.any(Number),
      canId: '18FEEE00',
      data: expect.stringMatching(/^[0-9A-F]{16}$/),
    });
    expect(decodedRows(frames, 'j1939')).toEqual(readingRows(readings, false));
  });

  it('writes OBD-II responses that give the readings with ambient in whole degrees (PID 0x46 resolution)', async () => {
    const readings = await readFile(join(await simulate('readings'), 'readings.ndjson'), 'utf8');
    const responses = await readFile(join(await simulate('obd'), 'responses.ndjson'), 'utf8');
    expect(decodedRows(responses, 'obd')).toEqual(readingRows(readings, true));
  });

  it('refuses an unknown --as with exit code 2', async () => {
    expect(await run(['--as', 'can', '--out', await mkdtemp(join(tmpdir(), 'sim-bus-'))])).toBe(2);
  });
});
