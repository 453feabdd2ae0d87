import { readdirSync, readFileSync } from 'node:fs';
import { sql } from 'kysely';
import { openDatabase, type DatabaseHandle } from '../services/db/database.js';
import { migrateToLatest } from '../services/db/migrator.js';
import { AnalysisRuns } from '../services/worker/analysis-runs.js';
import { procStat } from './analysis-e2e.js';
import { BENCH_START_MS, seedReadings } from './analysis-seed.js';
import { DEFAULT_SERVER_URL, scratchDatabase } from './bench-server.js';

/*
 * A probe for comparing worker changes (not part of `npm run bench`): one process analyses the
 * same fleets one after another, the first with its JIT cold, and prints for each the worker's
 * CPU (user + system of this process, all threads) and that of the database's PostgreSQL
 * backends, split into user and system time. The fleets (4 × 40 vehicles × 21 days, 9.7M
 * readings, as the bench seeds them) are seeded once into a database that is kept; each run
 * queues every vehicle again from the first day, so it re-reads and re-writes the same rows and
 * stores the same results. Alternate two versions of the code run by run, on a quiet machine:
 *
 *   npx tsx bench/worker-probe.ts          # seeds thermocline_worker_probe on first use
 *   npx tsx bench/worker-probe.ts --reseed # drops and seeds it again
 */

const NAME = 'thermocline_worker_probe';
const FLEETS = 4;
const VEHICLES = 40;
const DAYS = 21;
const CLOCK_TICKS_PER_S = 100;

/** User and system CPU seconds of the live PostgreSQL processes serving database `name`. */
function postgresCpu(name: string): { user: number; system: number } {
  let user = 0;
  let system = 0;
  for (const pid of readdirSync('/proc')) {
    if (!/^\d+$/.test(pid)) continue;
    let cmd: string;
    try {
      cmd = readFileSync(`/proc/${pid}/cmdline`, 'utf8');
    } catch {
      continue; // exited meanwhile
    }
    if (!cmd.startsWith('postgres: ') || !cmd.split(' ').includes(name)) continue;
    const fields = procStat(Number(pid));
    if (!fields) continue;
    user += Number(fields[11]) / CLOCK_TICKS_PER_S;
    system += Number(fields[12]) / CLOCK_TICKS_PER_S;
  }
  return { user, system };
}

async function probeDatabase(reseed: boolean): Promise<{ h: DatabaseHandle; fleets: string[] }> {
  const url = new URL(DEFAULT_SERVER_URL);
  url.pathname = `/${NAME}`;
  if (!reseed) {
    try {
      const h = await openDatabase({ databaseUrl: url.toString(), pgliteDir: '', poolSize: 4 });
      const rows = await sql<{ fleet_id: string }>`select distinct fleet_id from vehicles order by 1`.execute(h.db);
      if (rows.rows.length === FLEETS) return { h, fleets: rows.rows.map((r) => r.fleet_id) };
      await h.close();
    } catch {
      // not there yet
    }
  }
  process.stderr.write(`seeding ${NAME}: ${FLEETS} fleets of ${VEHICLES} vehicles × ${DAYS} days\n`);
  const scratch = await scratchDatabase(DEFAULT_SERVER_URL, NAME);
  const h = await openDatabase({ databaseUrl: scratch.url, pgliteDir: '', poolSize: 4 });
  await migrateToLatest(h.db);
  const fleets = Array.from({ length: FLEETS }, (_, f) => `probe${f}`);
  for (const fleet of fleets) await seedReadings(h, fleet, VEHICLES, DAYS);
  return { h, fleets };
}

const { h, fleets } = await probeDatabase(process.argv.includes('--reseed'));
try {
  for (const [n, fleet] of fleets.entries()) {
    await sql`
      insert into analysis_queue (vehicle_id, fleet_id, dirty_from)
      select vehicle_id, fleet_id, to_timestamp(${BENCH_START_MS / 1000}) from vehicles where fleet_id = ${fleet}
      on conflict (vehicle_id) do update set dirty_from = excluded.dirty_from`.execute(h.db);
    const pg0 = postgresCpu(NAME);
    const cpu0 = process.cpuUsage();
    const t0 = performance.now();
    const run = await new AnalysisRuns(h, { leaseMs: 600_000, batchSize: 20 }).start(fleet).done;
    const seconds = (performance.now() - t0) / 1000;
    const cpu = process.cpuUsage(cpu0);
    const pg1 = postgresCpu(NAME);
    if (run.status !== 'succeeded' || run.vehiclesFailed > 0)
      throw new Error(`analysis run failed: ${run.error ?? JSON.stringify(run.failures)}`);
    const worker = (cpu.user + cpu.system) / 1e6;
    const pgUser = pg1.user - pg0.user;
    const pgSystem = pg1.system - pg0.system;
    process.stdout.write(
      `${n === 0 ? 'first (JIT cold)' : 'next (JIT warm) '} ${run.readingsAnalysed} readings, wall ${seconds.toFixed(2)} s, ` +
        `worker ${worker.toFixed(2)} s (system ${(cpu.system / 1e6).toFixed(2)}), PostgreSQL ${(pgUser + pgSystem).toFixed(2)} s ` +
        `(system ${pgSystem.toFixed(2)}): ${Math.round(run.readingsAnalysed / (worker + pgUser + pgSystem)).toLocaleString('en-US')} readings per CPU-second\n`,
    );
  }
} finally {
  await h.close();
}
