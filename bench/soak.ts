import { Agent, request } from 'node:http';
import { parseArgs } from 'node:util';
import { sql } from 'kysely';
import { createApiKeysRepository } from '../services/db/api-keys-repository.js';
import { openDatabase } from '../services/db/database.js';
import { createFleetsRepository } from '../services/db/fleets-repository.js';
import { migrateToLatest } from '../services/db/migrator.js';
import { toNumber } from '../services/db/schema.js';
import { DEFAULT_SERVER_URL, scratchDatabase, startServer } from './bench-server.js';

/**
 * The reliability soak: `thermocline serve` with its in-process worker on a scratch database of
 * the PostgreSQL server, and four gateways posting multi-vehicle NDJSON bodies in time order for
 * `--minutes` (default 10): mostly small batches, every tenth a long streamed body, some bodies
 * posted twice (a retry after a lost reply) and some twice at once. 429 and 503 are retried after
 * their Retry-After. At the end: no 5xx at all, and exactly the acknowledged readings stored.
 *
 *   npx tsx bench/soak.ts --minutes 10
 */
const { values } = parseArgs({
  options: { minutes: { type: 'string', default: '10' }, gateways: { type: 'string', default: '4' } },
});
const MINUTES = Number(values.minutes);
const GATEWAYS = Number(values.gateways);
const VEHICLES_PER_GATEWAY = 25;
const SAMPLE_S = 10;
const PAUSE_MS = 250;
const serverUrl = process.env.DATABASE_URL || DEFAULT_SERVER_URL;
const log = (msg: string) => process.stderr.write(`[soak] ${msg}\n`);

const scratch = await scratchDatabase(serverUrl, 'thermocline_soak');
const handle = await openDatabase({ databaseUrl: scratch.url, pgliteDir: '' });
await migrateToLatest(handle.db);
await createFleetsRepository(handle.db).ensure('soak-fleet');
const { key } = await createApiKeysRepository(handle.db).create({ fleetId: 'soak-fleet', scopes: ['ingest'] });
const server = await startServer({
  DATABASE_URL: scratch.url,
  IN_PROCESS_WORKER: 'true',
  WORKER_POLL_MS: '1000',
  LOG_LEVEL: 'warn',
  REPORT_SCHEDULE: 'false',
});
const url = new URL(server.baseUrl);
const agent = new Agent({ keepAlive: true, maxSockets: GATEWAYS * 2 });

interface Tally {
  bodies: number;
  accepted: number;
  duplicates: number;
  statuses: Map<number, number>;
  uniqueSent: number;
}
const tally: Tally = { bodies: 0, accepted: 0, duplicates: 0, statuses: new Map(), uniqueSent: 0 };

function post(body: string): Promise<{ status: number; retryAfterS: number; accepted: number; duplicates: number }> {
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
          'content-type': 'application/x-ndjson',
          'content-length': Buffer.byteLength(body),
        },
      },
      (res) => {
        const parts: Buffer[] = [];
        res.on('data', (d: Buffer) => parts.push(d));
        res.on('error', reject);
        res.on('end', () => {
          const json = JSON.parse(Buffer.concat(parts).toString('utf8')) as { accepted?: number; duplicates?: number };
          resolve({
            status: res.statusCode ?? 0,
            retryAfterS: Number(res.headers['retry-after'] ?? 1),
            accepted: json.accepted ?? 0,
            duplicates: json.duplicates ?? 0,
          });
        });
      },
    );
    req.on('error', reject);
    req.end(body);
  });
}

/** Posts until 2xx, as a gateway does; counts every status seen. */
async function deliver(body: string): Promise<void> {
  for (;;) {
    const r = await post(body);
    tally.statuses.set(r.status, (tally.statuses.get(r.status) ?? 0) + 1);
    if (r.status === 200) {
      tally.bodies++;
      tally.accepted += r.accepted;
      tally.duplicates += r.duplicates;
      return;
    }
    if (r.status !== 429 && r.status !== 503) throw new Error(`unexpected ${r.status}`);
    await new Promise((resolve) => setTimeout(resolve, r.retryAfterS * 1000));
  }
}

const startMs = Date.now();
const endMs = startMs + MINUTES * 60_000;
const firstTs = Math.floor((startMs - 12 * 86_400_000) / 1000) * 1000;

async function gateway(g: number): Promise<void> {
  let t = firstTs;
  for (let n = 0; Date.now() < endMs; n++) {
    const samples = n % 10 === 9 ? 240 : 20; // 6,000 or 500 lines
    let body = '';
    for (let s = 0; s < samples; s++, t += SAMPLE_S * 1000) {
      for (let v = 0; v < VEHICLES_PER_GATEWAY; v++) {
        const phase = (t / 1000) % 3600;
        const coolant = 20 + 68 * (1 - Math.exp(-phase / 400)) + ((v * 7 + s) % 5) * 0.2;
        body += `{"vehicleId":"SK-${g}-${v}","ts":${t},"coolant":${coolant.toFixed(1)},"ambient":8.5,"speedKph":${(phase / 60) % 90},"rpm":1400}\n`;
      }
    }
    tally.uniqueSent += samples * VEHICLES_PER_GATEWAY;
    if (n % 50 === 7)
      await Promise.all([deliver(body), deliver(body)]); // the same body twice at once
    else {
      await deliver(body);
      if (n % 20 === 3) await deliver(body); // a retry after a reply the gateway did not get
    }
    await new Promise((resolve) => setTimeout(resolve, PAUSE_MS));
  }
}

log(
  `${GATEWAYS} gateways × ${VEHICLES_PER_GATEWAY} vehicles for ${MINUTES} min against ${server.baseUrl} (worker in process)`,
);
const progress = setInterval(
  () =>
    log(
      `${((Date.now() - startMs) / 60_000).toFixed(1)} min: ${tally.bodies} bodies, ${tally.accepted.toLocaleString('en-US')} accepted, statuses ${JSON.stringify(Object.fromEntries(tally.statuses))}`,
    ),
  30_000,
);
try {
  await Promise.all(Array.from({ length: GATEWAYS }, (_, g) => gateway(g)));
} finally {
  clearInterval(progress);
}
const stored = toNumber((await sql<{ n: string }>`select count(*) as n from readings`.execute(handle.db)).rows[0]?.n);
const queue = await sql<{
  n: string;
  failed: string;
}>`select count(*) as n, count(*) filter (where last_error is not null) as failed from analysis_queue`.execute(
  handle.db,
);
const analysed = toNumber(
  (await sql<{ n: string }>`select count(distinct vehicle_id) as n from engine_runs`.execute(handle.db)).rows[0]?.n,
);
await server.stop();
await handle.close();
await scratch.drop();
const fiveXx = [...tally.statuses].filter(([s]) => s >= 500).reduce((a, [, n]) => a + n, 0);
const ok = fiveXx === 0 && stored === tally.accepted && stored === tally.uniqueSent;
process.stdout.write(
  `soak: ${MINUTES} min, ${GATEWAYS} gateways, ${tally.bodies} bodies acknowledged; statuses ${JSON.stringify(Object.fromEntries(tally.statuses))}\n` +
    `  readings: ${tally.uniqueSent.toLocaleString('en-US')} distinct sent, ${tally.accepted.toLocaleString('en-US')} accepted, ${tally.duplicates.toLocaleString('en-US')} duplicates, ${stored.toLocaleString('en-US')} stored\n` +
    `  worker: ${analysed} vehicles with engine runs; queue at the end ${queue.rows[0]?.n} rows (${queue.rows[0]?.failed} with an error)\n` +
    `  ${ok ? 'OK: no 5xx, exactly the acknowledged readings stored' : 'FAILED'}\n`,
);
if (!ok) process.exitCode = 1;
