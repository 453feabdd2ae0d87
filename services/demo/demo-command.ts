import { mkdir, rm, writeFile } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import { parseArgs } from 'node:util';
import pino from 'pino';
import { buildApp } from '../api/app.js';
import { loadConfig } from '../config.js';
import { createApiKeysRepository } from '../db/api-keys-repository.js';
import { openDatabase } from '../db/database.js';
import { createFleetsRepository } from '../db/fleets-repository.js';
import { migrateToLatest } from '../db/migrator.js';
import { SAFETY_CAUTION } from '../analysis/findings/finding.js';
import { utcDayStartMs } from '../analysis/sample-arrays.js';
import { formatIsoWeek, lastCompleteIsoWeek } from '../time/iso-week.js';
import { DEMO_FLEET_ID, planFleet, type SimVehicle } from '../simulator/index.js';
import { formatAtRiskTable, type AtRiskVehicle } from './at-risk-table.js';
import { feedVehicle, type FeedTotals } from './gateway-feed.js';
import { DAY_MS } from '../time/durations.js';

const HELP = `usage: npm run demo [-- options]

Simulates the made-up Quillmoor Provisions delivery fleet (four depots in different climates,
a few vehicles with cooling-system faults), posts its telemetry through the HTTP API as the
gateways would, analyses it, prints the at-risk vehicles, writes the weekly report, then keeps
serving the API and the planner web view (/app/, sign in with the printed planner key) until
Ctrl-C. Without DATABASE_URL it runs on a fresh embedded database in
./data/demo (wiped at start).

options:
  --vehicles N   vehicles to simulate (default 32)
  --days D       days of history (default 42)
  --end DATE     last midnight of the history, YYYY-MM-DD UTC (default: last midnight; the
                 weekly report is for the last complete ISO week before it)
  --seed S       simulation seed (default 7)
  --out DIR      where the weekly report is written (default ./demo-out)
  --no-serve     exit when done instead of serving
  --help
`;

function say(line: string): void {
  process.stderr.write(`${line}\n`);
}

async function api<T>(
  baseUrl: string,
  key: string,
  method: string,
  path: string,
  body?: unknown,
): Promise<{ status: number; json: T }> {
  const res = await fetch(`${baseUrl}${path}`, {
    method,
    headers: { authorization: `Bearer ${key}`, ...(body !== undefined ? { 'content-type': 'application/json' } : {}) },
    ...(body !== undefined ? { body: JSON.stringify(body) } : {}),
  });
  const text = await res.text();
  return {
    status: res.status,
    json: (text && res.headers.get('content-type')?.includes('json') ? JSON.parse(text) : text) as T,
  };
}

export async function run(argv: string[]): Promise<number> {
  const { values } = parseArgs({
    args: argv,
    options: {
      vehicles: { type: 'string', default: '32' },
      days: { type: 'string', default: '42' },
      end: { type: 'string' },
      seed: { type: 'string', default: '7' },
      out: { type: 'string', default: './demo-out' },
      'no-serve': { type: 'boolean', default: false },
      help: { type: 'boolean', short: 'h' },
    },
  });
  if (values.help) {
    process.stdout.write(HELP);
    return 0;
  }
  const vehicles = Number(values.vehicles);
  const days = Number(values.days);
  const seed = Number(values.seed);
  if (!Number.isInteger(vehicles) || vehicles < 1 || !Number.isInteger(days) || days < 1 || !Number.isInteger(seed)) {
    process.stderr.write('demo: --vehicles, --days and --seed must be whole numbers ≥ 1\n');
    return 2;
  }
  const lastMidnightMs = utcDayStartMs(Date.now());
  const endMs = values.end === undefined ? lastMidnightMs : Date.parse(`${values.end}T00:00:00Z`);
  if (!/^\d{4}-\d{2}-\d{2}$/.test(values.end ?? '2000-01-01') || !Number.isFinite(endMs) || endMs > lastMidnightMs) {
    process.stderr.write('demo: --end must be a date YYYY-MM-DD, not after today\n');
    return 2;
  }
  const started = performance.now();
  const elapsed = () => `${((performance.now() - started) / 1000).toFixed(1)} s`;
  const config = loadConfig();
  const pgliteDir = join(config.pgliteDir, 'demo');
  if (!config.databaseUrl) await rm(pgliteDir, { recursive: true, force: true });
  const database = await openDatabase({ databaseUrl: config.databaseUrl, pgliteDir, poolSize: config.dbPoolSize });
  say(`demo: database: ${database.description}`);
  await migrateToLatest(database.db);
  await createFleetsRepository(database.db).ensure(DEMO_FLEET_ID, 'Quillmoor Provisions (made-up demo fleet)');
  const keys = createApiKeysRepository(database.db);
  const ingestKey = (await keys.create({ fleetId: DEMO_FLEET_ID, scopes: ['ingest'], label: 'demo gateways' })).key;
  const readKey = (await keys.create({ fleetId: DEMO_FLEET_ID, scopes: ['read'], label: 'demo planner' })).key;

  const serve = !values['no-serve'];
  const app = await buildApp({
    config: { ...config, inProcessWorker: false, rateLimitPerMinute: 1_000_000 },
    database,
    closeDatabase: true,
    logger: pino({ level: serve ? 'warn' : 'error' }),
  });
  let address: string;
  try {
    address = await app.listen({ port: config.port, host: config.host });
  } catch {
    address = await app.listen({ port: 0, host: config.host });
    say(`demo: port ${config.port} is busy; listening on ${address} instead`);
  }

  try {
    const startMs = endMs - days * DAY_MS;
    const fleet: SimVehicle[] = planFleet({ vehicles, days, seed, startMs, scenario: 'demo' });
    say(
      `demo: Quillmoor Provisions: ${fleet.length} vehicles, ${days} days from ${new Date(startMs).toISOString().slice(0, 10)}`,
    );

    for (const v of fleet) {
      const { status } = await api(address, ingestKey, 'PUT', `/v1/vehicles/${v.vehicleId}`, {
        engineFamily: v.engineFamily,
        thermostatOpenC: v.thermostatOpenC,
        capPressureKpa: v.capPressureKpa,
        glycolPercent: v.glycolPercent,
        label: v.label,
        depot: v.depot,
      });
      if (status >= 300) throw new Error(`registering ${v.vehicleId} answered ${status}`);
    }
    say(`demo: registered ${fleet.length} vehicle profiles (PUT /v1/vehicles/{id})`);

    // Two gateways upload at a time; each upload is a week of one vehicle's readings.
    const totals: FeedTotals = { requests: 0, accepted: 0, duplicates: 0, rejected: 0, retries: 0 };
    let next = 0;
    let done = 0;
    let readings = 0;
    const ingestStart = performance.now();
    await Promise.all(
      [0, 1].map(async () => {
        while (next < fleet.length) {
          const v = fleet[next++]!;
          const n = await feedVehicle(v, { baseUrl: address, ingestKey, startMs, days, seed, uploadDays: 7 }, totals);
          readings += n;
          done++;
          const rate = readings / ((performance.now() - ingestStart) / 1000);
          say(
            `demo: ingest ${done}/${fleet.length} vehicles, ${readings.toLocaleString('en-US')} readings (${Math.round(rate).toLocaleString('en-US')}/s) [${elapsed()}]`,
          );
        }
      }),
    );
    say(
      `demo: POST /v1/readings: ${totals.requests} uploads, ${totals.accepted.toLocaleString('en-US')} accepted, ${totals.duplicates} duplicates, ${totals.rejected} rejected, ${totals.retries} retries`,
    );

    say('demo: analysing (POST /v1/analysis/runs?wait=true) …');
    const analysis = await api<Record<string, unknown>>(address, readKey, 'POST', '/v1/analysis/runs?wait=true');
    if (analysis.status >= 300)
      throw new Error(`analysis answered ${analysis.status}: ${JSON.stringify(analysis.json)}`);
    say(`demo: analysis done: ${JSON.stringify(analysis.json)} [${elapsed()}]`);
    const atRisk = await api<{ vehicles: AtRiskVehicle[] }>(address, readKey, 'GET', '/v1/fleet/at-risk?limit=15');
    const ranked = atRisk.json.vehicles.filter((v) => v.riskScore > 0);
    const checks = new Map<string, string>();
    for (const v of ranked) {
      const detail = await api<{ findings: Array<{ id: string; recommendedCheck: string }> }>(
        address,
        readKey,
        'GET',
        `/v1/vehicles/${v.vehicleId}/findings`,
      );
      for (const f of detail.json.findings ?? []) checks.set(f.id, f.recommendedCheck);
    }
    process.stdout.write(
      `\nVehicles at risk — Quillmoor Provisions (${ranked.length} of ${fleet.length})\n\n${formatAtRiskTable(ranked, checks)}\n\n`,
    );
    process.stdout.write(`${SAFETY_CAUTION}\n\n`);

    const week = formatIsoWeek(lastCompleteIsoWeek(endMs, 'UTC'));
    const outDir = resolve(values.out);
    await mkdir(outDir, { recursive: true });
    const written: string[] = [];
    for (const format of ['html', 'csv', 'json'] as const) {
      const res = await fetch(`${address}/v1/reports/weekly?week=${week}&format=${format}`, {
        headers: { authorization: `Bearer ${readKey}` },
      });
      if (!res.ok) throw new Error(`weekly report (${format}) answered ${res.status}: ${await res.text()}`);
      const file = join(outDir, `weekly-report-${week}.${format}`);
      await writeFile(file, Buffer.from(await res.arrayBuffer()));
      written.push(file);
    }
    process.stdout.write(`Weekly report ${week}: ${written[0]}\n  (also ${written.slice(1).join(', ')})\n`);
    say(`demo: done in ${elapsed()}`);
  } catch (err) {
    await app.close();
    throw err;
  }

  if (!serve) {
    await app.close();
    return 0;
  }
  process.stdout.write(
    `\nWeb view for planners: ${address}/app/\n  sign in with the planner key below (demo fleet Quillmoor Provisions)\n` +
      `Serving the API at ${address} — docs: ${address}/docs\nplanner key (read):    ${readKey}\ngateway key (ingest):  ${ingestKey}\nCtrl-C to stop.\n`,
  );
  await new Promise<void>((resolveStop) => {
    const stop = () => void app.close().then(() => resolveStop());
    process.once('SIGINT', stop);
    process.once('SIGTERM', stop);
  });
  return 0;
}
