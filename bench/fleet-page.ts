import { sql } from 'kysely';
import { createApiKeysRepository } from '../services/db/api-keys-repository.js';
import { seedFindings } from './analysis-seed.js';
import { migrated, percentile } from './analysis-e2e.js';
import { startServer } from './bench-server.js';

/** The fleet page's target: server time p99 < 50 ms with 10,000 vehicles (issue 17). */
export const FLEET_PAGE_VEHICLES = 10_000;
/** Rows before the deep page the bench asks for (by walking the cursors there first). */
const DEEP_ROW = 3_000;
export const REQUESTS_PER_QUERY = 200;
const WARMUP_REQUESTS = 100;
const DEPOTS = ['harbour', 'hill', 'ridge', 'plain', 'river'];

/**
 * The page's usual requests: the first page, a filter, a search, a sort, and pages deep in the
 * list (`{deep}` is the cursor after row DEEP_ROW of that sort, or the last page's if fewer rows).
 */
const QUERIES = [
  '/v1/fleet/vehicles?limit=50',
  '/v1/fleet/vehicles?limit=50&kind=overshoot&severity=warning',
  '/v1/fleet/vehicles?limit=50&q=042',
  '/v1/fleet/vehicles?limit=50&sort=since&order=asc&depot=hill',
  '/v1/fleet/vehicles?limit=50&cursor={deep}',
  '/v1/fleet/vehicles?limit=50&sort=priority&order=asc&cursor={deep}',
  '/v1/fleet/vehicles?limit=50&sort=depot&cursor={deep}',
];

export interface FleetPageBenchResult {
  vehicles: number;
  atRisk: number;
  queries: Array<{ path: string; p50Ms: number; p99Ms: number; rows: number; total: number }>;
  allP99Ms: number;
}

function log(msg: string): void {
  process.stderr.write(`[fleet-page] ${msg}\n`);
}

/**
 * GET /v1/fleet/vehicles as the web view calls it (session cookie, not a bearer key) against a
 * `thermocline serve` child on PostgreSQL with 10,000 vehicles, a third of them at risk with
 * 1–3 findings, depots and labels. Times are loopback round trips measured by the client: an
 * upper bound of the server time.
 */
export async function benchFleetPage(serverUrl: string, vehicles = FLEET_PAGE_VEHICLES): Promise<FleetPageBenchResult> {
  const { h, url, drop } = await migrated(serverUrl, 'thermocline_bench_fleet_page');
  try {
    const findings = await seedFindings(h, 'board', vehicles);
    await sql`update vehicles set depot = (${DEPOTS}::text[])[1 + (substr(vehicle_id, 7)::int % 5)], label = 'truck ' || substr(vehicle_id, 7) where fleet_id = 'board'`.execute(
      h.db,
    );
    await sql`analyze`.execute(h.db);
    const { key } = await createApiKeysRepository(h.db).create({ fleetId: 'board', scopes: ['read'] });
    log(`${vehicles} vehicles with ${findings} findings seeded`);
    const server = await startServer({ DATABASE_URL: url });
    try {
      const signIn = await fetch(`${server.baseUrl}/app/session`, {
        method: 'POST',
        headers: { 'content-type': 'application/json' },
        body: JSON.stringify({ key }),
      });
      if (signIn.status !== 201) throw new Error(`sign-in answered ${signIn.status}`);
      const cookie = signIn.headers.get('set-cookie')!.split(';')[0]!;
      const get = async (path: string) => {
        const a = performance.now();
        const res = await fetch(`${server.baseUrl}${path}`, { headers: { cookie } });
        const body = (await res.json()) as { total: number; vehicles: unknown[]; nextCursor: string | null };
        if (!res.ok) throw new Error(`${path} answered ${res.status}`);
        return { ms: performance.now() - a, body };
      };
      // The cursor after row DEEP_ROW of each deep query's sort, walked there 200 rows a page (not timed).
      const paths: string[] = [];
      for (const template of QUERIES) {
        if (!template.includes('{deep}')) {
          paths.push(template);
          continue;
        }
        const walk = template.replace('limit=50', 'limit=200').replace(/&cursor=\{deep\}/, '');
        let cursor: string | null = null;
        for (let row = 0; row < DEEP_ROW; row += 200) {
          const next: string | null = (await get(`${walk}${cursor ? `&cursor=${cursor}` : ''}`)).body.nextCursor;
          if (next === null) break;
          cursor = next;
        }
        paths.push(template.replace('{deep}', cursor ?? ''));
      }
      for (let i = 0; i < WARMUP_REQUESTS; i++) await get(paths[i % paths.length]!);
      const all: number[] = [];
      const queries = [];
      let atRisk = 0;
      for (const [q, path] of paths.entries()) {
        const times: number[] = [];
        let last = { total: 0, vehicles: [] as unknown[] };
        for (let i = 0; i < REQUESTS_PER_QUERY; i++) {
          const r = await get(path);
          times.push(r.ms);
          last = r.body;
        }
        if (q === 0) atRisk = last.total;
        times.sort((a, b) => a - b);
        all.push(...times);
        queries.push({
          path: QUERIES[q]!,
          p50Ms: percentile(times, 0.5),
          p99Ms: percentile(times, 0.99),
          rows: last.vehicles.length,
          total: last.total,
        });
      }
      all.sort((a, b) => a - b);
      return { vehicles, atRisk, queries, allP99Ms: percentile(all, 0.99) };
    } finally {
      await server.stop();
    }
  } finally {
    await drop();
  }
}
