import { execFileSync } from 'node:child_process';
import { mkdirSync, writeFileSync } from 'node:fs';
import { Agent, request } from 'node:http';
import { join } from 'node:path';
import { sql } from 'kysely';
import { createApiKeysRepository } from '../services/db/api-keys-repository.js';
import { openDatabase, type DatabaseHandle } from '../services/db/database.js';
import { createFleetsRepository } from '../services/db/fleets-repository.js';
import { toNumber } from '../services/db/schema.js';
import { ROOT, scratchDatabase, startServer } from './bench-server.js';
import { csvLine, ndjsonLine, syntheticRow } from './synthetic-readings.js';

export interface IngestBenchResult {
  rows: number;
  copyRowsPerS: number;
  jsonRowsPerS: number;
  ndjsonRowsPerS: number;
  load: { gateways: number; seconds: number; requests: number; accepted: number; errors: number; stored: number };
}

const ROWS = 1_000_000;
const VEHICLES = 100;

function log(msg: string): void {
  process.stderr.write(`[ingest] ${msg}\n`);
}

async function count(h: DatabaseHandle, table: string): Promise<number> {
  const r = await sql<{ n: string | number }>`select count(*) as n from ${sql.table(table)}`.execute(h.db);
  return toNumber(r.rows[0]?.n);
}

/**
 * The benchmark's HTTP client: node:http with keep-alive connections. The gateways are other
 * machines; here they share the server's 2 cores, and fetch() cost the client about 4 ms of CPU
 * per 1,000-reading batch against about 2 ms for this.
 */
function httpClient(baseUrl: string, key: string, sockets: number) {
  const agent = new Agent({ keepAlive: true, maxSockets: sockets });
  const url = new URL(baseUrl);
  return {
    post(contentType: string, body: string): Promise<{ status: number; json: { accepted?: number } }> {
      return new Promise((resolve, reject) => {
        const req = request(
          {
            host: url.hostname,
            port: url.port,
            path: '/v1/readings',
            method: 'POST',
            agent,
            headers: {
              authorization: `Bearer ${key}`,
              'content-type': contentType,
              'content-length': Buffer.byteLength(body),
            },
          },
          (res) => {
            const parts: Buffer[] = [];
            res.on('data', (d: Buffer) => parts.push(d));
            res.on('error', reject);
            res.on('end', () => {
              try {
                resolve({
                  status: res.statusCode ?? 0,
                  json: JSON.parse(Buffer.concat(parts).toString('utf8')) as { accepted?: number },
                });
              } catch (err) {
                reject(err instanceof Error ? err : new Error(String(err)));
              }
            });
          },
        );
        req.on('error', reject);
        req.end(body);
      });
    },
    close: () => agent.destroy(),
  };
}

/** Sends `bodies` with `concurrency` parallel clients; returns elapsed seconds and accepted rows. */
async function postAll(
  baseUrl: string,
  key: string,
  contentType: string,
  bodies: string[],
  concurrency: number,
): Promise<{ seconds: number; accepted: number }> {
  const client = httpClient(baseUrl, key, concurrency);
  let next = 0;
  let accepted = 0;
  const started = performance.now();
  try {
    await Promise.all(
      Array.from({ length: concurrency }, async () => {
        while (next < bodies.length) {
          const { status, json } = await client.post(contentType, bodies[next++]!);
          if (status !== 200) throw new Error(`ingest answered ${status}: ${JSON.stringify(json)}`);
          accepted += json.accepted ?? 0;
        }
      }),
    );
  } finally {
    client.close();
  }
  return { seconds: (performance.now() - started) / 1000, accepted };
}

export async function benchIngest(serverUrl: string): Promise<IngestBenchResult> {
  const scratch = await scratchDatabase(serverUrl, 'thermocline_bench_ingest');
  const server = await startServer({ DATABASE_URL: scratch.url });
  const h = await openDatabase({ databaseUrl: scratch.url, pgliteDir: '' });
  try {
    await createFleetsRepository(h.db).ensure('bench');
    const { key } = await createApiKeysRepository(h.db).create({ fleetId: 'bench', scopes: ['ingest'] });

    log(`generating ${ROWS.toLocaleString()} readings`);
    const rows = Array.from({ length: ROWS }, (_, i) => syntheticRow(i, VEHICLES));

    // Baseline: psql \copy of the same rows into a table of the same shape and partitions.
    const dir = join(ROOT, '.bench');
    mkdirSync(dir, { recursive: true });
    const csvPath = join(dir, 'readings.csv');
    writeFileSync(csvPath, rows.map(csvLine).join('\n') + '\n');
    await sql`create table readings_copy (like readings including defaults including constraints) partition by range (ts)`.execute(
      h.db,
    );
    await sql`alter table readings_copy add primary key (vehicle_id, ts)`.execute(h.db);
    await sql`create table readings_copy_2026_10 partition of readings_copy for values from ('2026-10-01') to ('2026-11-01')`.execute(
      h.db,
    );
    log('psql \\copy of the same rows');
    const t0 = performance.now();
    execFileSync(
      'psql',
      [
        scratch.url,
        '-q',
        '-c',
        `\\copy readings_copy (vehicle_id, ts, coolant_c, ambient_c, speed_kph, rpm) from '${csvPath}' with (format csv)`,
      ],
      { stdio: 'inherit' },
    );
    const copySeconds = (performance.now() - t0) / 1000;
    if ((await count(h, 'readings_copy')) !== ROWS) throw new Error('\\copy did not load every row');

    // A gateway sits in one vehicle: each JSON batch is 1,000 consecutive readings of one vehicle,
    // posted by 4 gateways at once (the same rows as \copy, regrouped).
    log('HTTP: JSON batches of 1,000 readings of one vehicle each, 4 concurrent gateways');
    const byVehicle = new Map<string, string[]>();
    for (const r of rows) {
      let list = byVehicle.get(r.vehicleId);
      if (!list) byVehicle.set(r.vehicleId, (list = []));
      list.push(ndjsonLine(r));
    }
    const jsonBodies: string[] = [];
    for (const list of byVehicle.values())
      for (let i = 0; i < list.length; i += 1000)
        jsonBodies.push(`{"unit":"C","readings":[${list.slice(i, i + 1000).join(',')}]}`);
    const json = await postAll(server.baseUrl, key, 'application/json', jsonBodies, 4);
    if (json.accepted !== ROWS || (await count(h, 'readings')) !== ROWS)
      throw new Error('JSON ingest did not store every row');
    await sql`truncate readings, analysis_queue`.execute(h.db);

    log('HTTP: NDJSON bodies of 100,000, 2 concurrent clients');
    const ndjsonBodies: string[] = [];
    for (let i = 0; i < ROWS; i += 100_000)
      ndjsonBodies.push(
        rows
          .slice(i, i + 100_000)
          .map(ndjsonLine)
          .join('\n') + '\n',
      );
    const ndjson = await postAll(server.baseUrl, key, 'application/x-ndjson', ndjsonBodies, 2);
    if (ndjson.accepted !== ROWS || (await count(h, 'readings')) !== ROWS)
      throw new Error('NDJSON ingest did not store every row');
    await sql`truncate readings, analysis_queue`.execute(h.db);

    const load = await loadRun(server.baseUrl, key, h);
    return {
      rows: ROWS,
      copyRowsPerS: ROWS / copySeconds,
      jsonRowsPerS: ROWS / json.seconds,
      ndjsonRowsPerS: ROWS / ndjson.seconds,
      load,
    };
  } finally {
    await h.close();
    await server.stop();
    await scratch.drop();
  }
}

/**
 * Several gateways post small batches concurrently for a fixed time, each resending every
 * tenth batch (a retry); afterwards the database must hold exactly the accepted rows.
 */
async function loadRun(baseUrl: string, key: string, h: DatabaseHandle): Promise<IngestBenchResult['load']> {
  const gateways = 8;
  const seconds = 10;
  log(`load: ${gateways} gateways for ${seconds} s`);
  const deadline = performance.now() + seconds * 1000;
  let requests = 0;
  let accepted = 0;
  let errors = 0;
  await Promise.all(
    Array.from({ length: gateways }, async (_, g) => {
      let batch = 0;
      while (performance.now() < deadline) {
        const lines: string[] = [];
        for (let j = 0; j < 200; j++) {
          const r = syntheticRow(batch * 200 + j, 20);
          lines.push(ndjsonLine({ ...r, vehicleId: `GW${g}-${r.vehicleId}` }));
        }
        const body = lines.join('\n');
        const sends = batch % 10 === 9 ? 2 : 1;
        for (let s = 0; s < sends; s++) {
          requests++;
          try {
            const res = await fetch(`${baseUrl}/v1/readings`, {
              method: 'POST',
              headers: { authorization: `Bearer ${key}`, 'content-type': 'application/x-ndjson' },
              body,
            });
            const json = (await res.json()) as { accepted?: number };
            if (res.ok) accepted += json.accepted ?? 0;
            else errors++;
          } catch {
            errors++;
          }
        }
        batch++;
      }
    }),
  );
  const stored = await count(h, 'readings');
  return { gateways, seconds, requests, accepted, errors, stored };
}
