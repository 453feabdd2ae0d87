import { Agent, request } from 'node:http';
import { sql } from 'kysely';
import { alignReadings, emptyDerivedReadings } from '../services/bus-decoding/align-readings.js';
import { j1939Frames } from '../services/bus-decoding/bus-encoding.js';
import { rollUp } from '../services/bus-decoding/vehicle-slots.js';
import { FrameRecords } from '../services/api/ingest/frames/frame-records.js';
import { createApiKeysRepository } from '../services/db/api-keys-repository.js';
import { openDatabase } from '../services/db/database.js';
import { createFleetsRepository } from '../services/db/fleets-repository.js';
import { toNumber } from '../services/db/schema.js';
import { scratchDatabase, startServer } from './bench-server.js';
import { ndjsonLine, syntheticRow } from './synthetic-readings.js';

export interface FramesBenchResult {
  decode: { frames: number; vehicles: number; readings: number; framesPerS: number; firstPassPerS: number };
  http: { readings: number; readingsPerS: number; frames: number; framesPerS: number; framesReadingsPerS: number };
}

const DECODE_FRAMES = 1_000_000;
const DECODE_VEHICLES = 40;
const HTTP_READINGS = 200_000;
const HTTP_VEHICLES = 100;
/** Readings per HTTP body (NDJSON), grouped by vehicle as a gateway's upload would be. */
const READINGS_PER_BODY = 20_000;
const CLIENTS = 2;
const SAMPLE_PERIOD_MS = 10_000;

function log(msg: string): void {
  process.stderr.write(`[frames] ${msg}\n`);
}

interface RawFrame {
  vehicleId: string;
  ts: number;
  canId: string;
  data: string;
}

/**
 * A bus dump as a gateway forwards it, already parsed from JSON: per vehicle and second 10 EEC1
 * (engine speed, 100 ms), 10 CCVS1 (road speed), 1 ET1 (coolant), 1 AMB, and an EFL/P1 every 10 s.
 * Data fields come from a pool of varied values; ts as epoch ms.
 */
export function busDump(frames: number, vehicles: number): RawFrame[] {
  const pool = (make: (k: number) => string) => Array.from({ length: 256 }, (_, k) => make(k));
  const hex = (b: number) => (b & 0xff).toString(16).toUpperCase().padStart(2, '0');
  const eec1 = pool((k) => `FFFFFF${hex(k * 37)}${hex(0x10 + (k % 32))}FFFFFF`);
  const ccvs1 = pool((k) => `FF${hex(k * 11)}${hex(k % 64)}FFFFFFFFFF`);
  const et1 = pool((k) => `${hex(100 + (k % 40))}FFFFFFFFFFFFFF`);
  const amb = pool((k) => `C8FFFF${hex(k * 3)}24FFFFFF`);
  const fluid = pool((k) => `FFFFFFFFFFFF${hex(50 + (k % 10))}${hex(240 + (k % 10))}`);
  const out: RawFrame[] = [];
  const start = Date.UTC(2026, 9, 1);
  for (let s = 0; out.length < frames; s++) {
    for (let v = 0; v < vehicles && out.length < frames; v++) {
      const vehicleId = `BUS-${String(v).padStart(4, '0')}`;
      const t = start + s * 1000;
      for (let j = 0; j < 10; j++) {
        out.push({ vehicleId, ts: t + j * 100 + 3, canId: '0CF00400', data: eec1[(s * 10 + j + v) & 255]! });
        out.push({ vehicleId, ts: t + j * 100 + 7, canId: '18FEF100', data: ccvs1[(s * 10 + j) & 255]! });
      }
      out.push({ vehicleId, ts: t + 20, canId: '18FEEE00', data: et1[(s + v) & 255]! });
      out.push({ vehicleId, ts: t + 40, canId: '18FEF500', data: amb[s & 255]! });
      if (s % 10 === 0) out.push({ vehicleId, ts: t + 60, canId: '18FEEF00', data: fluid[(s / 10) & 255]! });
    }
  }
  return out;
}

/** One pass of what the frame routes do before the database: check and decode each row, merge, align. */
export function decodeAndAlign(rows: readonly RawFrame[]): { seconds: number; readings: number } {
  const t0 = performance.now();
  const records = new FrameRecords('j1939', Date.UTC(2026, 11, 1), Infinity);
  for (let i = 0; i < rows.length; i++) {
    if (records.add(rows[i]) !== null) throw new Error(`bench frame ${i} rejected`);
  }
  let readings = 0;
  for (const pre of records.collector.vehicles.values())
    readings += alignReadings(rollUp(pre, SAMPLE_PERIOD_MS), -Infinity, Infinity, emptyDerivedReadings()).length;
  return { seconds: (performance.now() - t0) / 1000, readings };
}

function post(
  agent: Agent,
  baseUrl: string,
  path: string,
  key: string,
  body: string,
): Promise<{ status: number; json: { accepted?: number } }> {
  const url = new URL(baseUrl);
  return new Promise((resolve, reject) => {
    const req = request(
      {
        host: url.hostname,
        port: url.port,
        path,
        method: 'POST',
        agent,
        headers: {
          authorization: `Bearer ${key}`,
          'content-type': 'application/x-ndjson',
          'content-length': Buffer.byteLength(body),
        },
      },
      (res) => {
        const parts: Buffer[] = [];
        res.on('data', (d: Buffer) => parts.push(d));
        res.on('error', reject);
        res.on('end', () =>
          resolve({
            status: res.statusCode ?? 0,
            json: JSON.parse(Buffer.concat(parts).toString('utf8')) as { accepted?: number },
          }),
        );
      },
    );
    req.on('error', reject);
    req.end(body);
  });
}

async function postAll(
  baseUrl: string,
  path: string,
  key: string,
  bodies: string[],
): Promise<{ seconds: number; accepted: number }> {
  const agent = new Agent({ keepAlive: true, maxSockets: CLIENTS });
  let next = 0;
  let accepted = 0;
  const started = performance.now();
  try {
    await Promise.all(
      Array.from({ length: CLIENTS }, async () => {
        while (next < bodies.length) {
          const { status, json } = await post(agent, baseUrl, path, key, bodies[next++]!);
          if (status !== 200) throw new Error(`${path} answered ${status}: ${JSON.stringify(json)}`);
          accepted += json.accepted ?? 0;
        }
      }),
    );
  } finally {
    agent.destroy();
  }
  return { seconds: (performance.now() - started) / 1000, accepted };
}

/**
 * Decoding + alignment on one core (this process), then HTTP ingest of the same readings as
 * NDJSON readings and as J1939 frames (one frame per parameter group per reading, as a gateway
 * that forwards each group once per sample period sends them) into a scratch database.
 */
export async function benchFrames(serverUrl: string): Promise<FramesBenchResult> {
  log(`generating a bus dump of ${DECODE_FRAMES.toLocaleString()} frames`);
  const dump = busDump(DECODE_FRAMES, DECODE_VEHICLES);
  log('decoding + alignment, 4 passes, one core');
  const passes = Array.from({ length: 4 }, () => decodeAndAlign(dump));
  const best = Math.min(...passes.map((p) => p.seconds));

  const scratch = await scratchDatabase(serverUrl, 'thermocline_bench_frames');
  const server = await startServer({ DATABASE_URL: scratch.url, MAX_READINGS_PER_REQUEST: '10000000' });
  const h = await openDatabase({ databaseUrl: scratch.url, pgliteDir: '' });
  try {
    await createFleetsRepository(h.db).ensure('bench');
    const { key } = await createApiKeysRepository(h.db).create({ fleetId: 'bench', scopes: ['ingest'] });
    const rows = Array.from({ length: HTTP_READINGS }, (_, i) => syntheticRow(i, HTTP_VEHICLES)).sort(
      (a, b) => a.vehicleId.localeCompare(b.vehicleId) || a.tsMs - b.tsMs,
    );
    const readingBodies: string[] = [];
    const frameBodies: string[] = [];
    let frames = 0;
    for (let i = 0; i < rows.length; i += READINGS_PER_BODY) {
      const part = rows.slice(i, i + READINGS_PER_BODY);
      readingBodies.push(part.map(ndjsonLine).join('\n'));
      const lines: string[] = [];
      for (const r of part) {
        const head = `{"vehicleId":"F${r.vehicleId}","ts":${r.tsMs},"canId":"`;
        for (const f of j1939Frames({
          coolantC: r.coolant,
          ambientC: r.ambient,
          speedKph: r.speedKph,
          rpm: r.rpm,
          barometricKpa: NaN,
          coolantLevelPct: NaN,
          coolantPressureKpa: NaN,
        }))
          lines.push(`${head}${f.canId}","data":"${f.data}"}`);
      }
      frames += lines.length;
      frameBodies.push(lines.join('\n'));
    }
    log(`HTTP: ${HTTP_READINGS.toLocaleString()} readings as NDJSON readings, ${CLIENTS} clients`);
    const asReadings = await postAll(server.baseUrl, '/v1/readings', key, readingBodies);
    log(`HTTP: the same as ${frames.toLocaleString()} J1939 frames, ${CLIENTS} clients`);
    const asFrames = await postAll(server.baseUrl, '/v1/frames/j1939', key, frameBodies);
    const stored = toNumber(
      (await sql<{ n: string | number }>`select count(*) as n from readings`.execute(h.db)).rows[0]?.n,
    );
    if (asReadings.accepted !== HTTP_READINGS || asFrames.accepted !== HTTP_READINGS || stored !== 2 * HTTP_READINGS) {
      throw new Error(
        `frames bench: accepted ${asReadings.accepted} readings and ${asFrames.accepted} from frames, ${stored} stored`,
      );
    }
    return {
      decode: {
        frames: dump.length,
        vehicles: DECODE_VEHICLES,
        readings: passes[0]!.readings,
        framesPerS: dump.length / best,
        firstPassPerS: dump.length / passes[0]!.seconds,
      },
      http: {
        readings: HTTP_READINGS,
        readingsPerS: HTTP_READINGS / asReadings.seconds,
        frames,
        framesPerS: frames / asFrames.seconds,
        framesReadingsPerS: HTTP_READINGS / asFrames.seconds,
      },
    };
  } finally {
    await h.close();
    await server.stop();
    await scratch.drop();
  }
}
