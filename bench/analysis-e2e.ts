import { spawn } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { loadavg } from 'node:os';
import { join } from 'node:path';
import { sql } from 'kysely';
import { analyseSamples } from '../services/analysis/analyse-samples.js';
import { resolveConfig } from '../services/analysis/config.js';
import { DEFAULT_VEHICLE_PROFILE } from '../services/analysis/vehicle-profile.js';
import { createApiKeysRepository } from '../services/db/api-keys-repository.js';
import { openDatabase, type DatabaseHandle } from '../services/db/database.js';
import { migrateToLatest } from '../services/db/migrator.js';
import { AnalysisRuns } from '../services/worker/analysis-runs.js';
import { readWindows } from '../services/db/reading-windows.js';
import { BENCH_START_MS, seedFindings, seedReadings } from './analysis-seed.js';
import { DEFAULT_SERVER_URL, ROOT, scratchDatabase, startServer } from './bench-server.js';
import { DAY_MS } from '../services/time/durations.js';

export interface AnalysisBenchResult {
  /** 1, 5 and 15 minute load averages before and after (the machine may be shared). */
  loadAverage: { before: number[]; after: number[] };
  throughput: {
    vehicles: number;
    /** Days of readings per vehicle, all analysed in one first pass. */
    days: number;
    readings: number;
    seconds: number;
    /**
     * Wall-clock readings/s of one in-process worker (its JavaScript runs on one thread, i.e. one
     * core), database to findings, with its Postgres backends running beside it.
     */
    readingsPerS: number;
    /** CPU seconds of this process (all its threads) and of this database's Postgres client backends during the run. */
    workerCpuS: number;
    postgresCpuS: number;
    /**
     * CPU seconds of PostgreSQL processes that exited during the run (reaped by the postmaster):
     * parallel workers, which `postgresCpuS` cannot sample, but also autovacuum workers and other
     * databases' sessions. Not in `readingsPerCoreS`; shown so that work PostgreSQL did for the
     * worker outside its client backends cannot go unseen.
     */
    exitedPostgresCpuS: number;
    /** readings / (worker + Postgres CPU seconds): readings per CPU-second, i.e. per core fully used. */
    readingsPerCoreS: number;
    /**
     * The figures above are the first analysis in this process (JIT cold); these are the same run
     * over a second fleet of as many fresh readings right after, as a long-running worker sees it.
     */
    warm: {
      seconds: number;
      readingsPerS: number;
      workerCpuS: number;
      postgresCpuS: number;
      exitedPostgresCpuS: number;
      readingsPerCoreS: number;
    };
    /** The phases alone, for diagnosis: reading windows (20 vehicles a statement, as the worker does), and analyseSamples on them. */
    readOnlyReadingsPerS: number;
    analyseOnlyReadingsPerS: number;
  };
  memory: {
    small: { vehicles: number; readings: number; seconds: number; peakRssMb: number };
    large: { vehicles: number; readings: number; seconds: number; peakRssMb: number };
    /** large.peakRssMb / small.peakRssMb: 1 means flat. */
    ratio: number;
  };
  atRisk: {
    vehicles: number;
    findings: number;
    requests: number;
    p50Ms: number;
    p99Ms: number;
    /** GET /healthz (no database) measured in between, the same number of times: this machine's floor. */
    healthzP50Ms: number;
    healthzP99Ms: number;
  };
}

const THROUGHPUT = { vehicles: 40, days: 21 };
const MEMORY = { vehicles: 10, days: 14 };
const AT_RISK_VEHICLES = 10_000;
const AT_RISK_REQUESTS = 1000;
const AT_RISK_WARMUP_REQUESTS = 300;
/** Linux clock ticks per second of /proc/<pid>/stat (USER_HZ, 100 on every mainstream kernel). */
const CLOCK_TICKS_PER_S = 100;
const MB = 1024 * 1024;

function log(msg: string): void {
  process.stderr.write(`[analysis] ${msg}\n`);
}

/** Fields of /proc/<pid>/stat after the parenthesised command (state, field 3, is index 0); undefined once the process is gone. */
export function procStat(pid: number): string[] | undefined {
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
    return stat.slice(stat.lastIndexOf(')') + 2).split(' ');
  } catch {
    return undefined;
  }
}

/** utime + stime (fields 14, 15). */
function cpuTicksOf(pid: number): number | undefined {
  const fields = procStat(pid);
  return fields && Number(fields[11]) + Number(fields[12]);
}

/** cutime + cstime (fields 16, 17): CPU of the children the process has reaped. */
function reapedTicksOf(pid: number): number {
  const fields = procStat(pid);
  return fields ? Number(fields[13]) + Number(fields[14]) : 0;
}

export function percentile(sorted: number[], q: number): number {
  return sorted[Math.min(sorted.length - 1, Math.ceil(q * sorted.length) - 1)]!;
}

export async function migrated(
  serverUrl: string,
  name: string,
): Promise<{ h: DatabaseHandle; url: string; drop: () => Promise<void> }> {
  const scratch = await scratchDatabase(serverUrl, name);
  const h = await openDatabase({ databaseUrl: scratch.url, pgliteDir: '', poolSize: 4 });
  await migrateToLatest(h.db);
  return {
    h,
    url: scratch.url,
    drop: async () => {
      await h.close();
      await scratch.drop();
    },
  };
}

/** One analysis run over a seeded fleet, with this process's CPU and its Postgres backends' CPU. */
async function measuredRun(
  h: DatabaseHandle,
  fleetId: string,
): Promise<{
  readings: number;
  seconds: number;
  workerCpuS: number;
  postgresCpuS: number;
  exitedPostgresCpuS: number;
}> {
  // The client backends of this database (the pool's connections, which open lazily), sampled while
  // the run goes on; autovacuum workers cleaning up after the seeding's inserts are not the worker's.
  const first = new Map<number, number>();
  const last = new Map<number, number>();
  const sample = async () => {
    const pids = await sql<{ pid: number }>`
      select pid from pg_stat_activity where datname = current_database() and backend_type = 'client backend'`.execute(
      h.db,
    );
    for (const { pid } of pids.rows) {
      const ticks = cpuTicksOf(pid);
      if (ticks === undefined) continue;
      if (!first.has(pid)) first.set(pid, ticks);
      last.set(pid, ticks);
    }
  };
  await sample();
  // The postmaster (a backend's parent) accumulates the CPU of the processes it reaps.
  const postmaster = Number(procStat(first.keys().next().value!)?.[1]);
  const reaped0 = reapedTicksOf(postmaster);
  const cpu0 = process.cpuUsage();
  const t0 = performance.now();
  const runs = new AnalysisRuns(h, { leaseMs: 600_000, batchSize: 20 });
  const { done } = runs.start(fleetId);
  let finished = false;
  const sampler = (async () => {
    while (!finished) {
      await sample();
      await new Promise((r) => setTimeout(r, 250));
    }
  })();
  const run = await done;
  const seconds = (performance.now() - t0) / 1000;
  finished = true;
  await sampler;
  await sample();
  const cpu = process.cpuUsage(cpu0);
  let pgTicks = 0;
  for (const [pid, start] of first) pgTicks += (last.get(pid) ?? start) - start;
  if (run.status !== 'succeeded' || run.vehiclesFailed > 0)
    throw new Error(`analysis run failed: ${run.error ?? JSON.stringify(run.failures)}`);
  return {
    readings: run.readingsAnalysed,
    seconds,
    workerCpuS: (cpu.user + cpu.system) / 1e6,
    postgresCpuS: pgTicks / CLOCK_TICKS_PER_S,
    exitedPostgresCpuS: (reapedTicksOf(postmaster) - reaped0) / CLOCK_TICKS_PER_S,
  };
}

async function measureThroughput(serverUrl: string): Promise<AnalysisBenchResult['throughput']> {
  const { h, drop } = await migrated(serverUrl, 'thermocline_bench_analysis');
  try {
    const readings = await seedReadings(h, 'tput', THROUGHPUT.vehicles, THROUGHPUT.days);
    log(`throughput: ${readings.toLocaleString('en-US')} readings of ${THROUGHPUT.vehicles} vehicles seeded`);
    const cold = await measuredRun(h, 'tput');
    // A long-running worker has its JIT warm: the same again over a second fleet of fresh readings.
    await seedReadings(h, 'warm', THROUGHPUT.vehicles, THROUGHPUT.days);
    const warm = await measuredRun(h, 'warm');
    const perCore = (r: typeof cold) => r.readings / (r.workerCpuS + r.postgresCpuS);
    log(
      `throughput, second fleet (JIT warm): ${Math.round(warm.readings / warm.seconds).toLocaleString('en-US')} readings/s wall, CPU worker ${warm.workerCpuS.toFixed(2)} s + PostgreSQL ${warm.postgresCpuS.toFixed(2)} s: ${Math.round(perCore(warm)).toLocaleString('en-US')} readings per CPU-second (exited PostgreSQL processes ${warm.exitedPostgresCpuS.toFixed(2)} s)`,
    );

    // The phases alone, over the same windows, read in batches as the worker reads them.
    const ids = (
      await h.db
        .selectFrom('vehicles')
        .select('vehicle_id')
        .where('fleet_id', '=', 'tput')
        .orderBy('vehicle_id')
        .execute()
    ).map((r) => r.vehicle_id);
    let readS = 0;
    let analyseS = 0;
    const cfg = resolveConfig('bench-13l');
    for (let i = 0; i < ids.length; i += 20) {
      const a = performance.now();
      const windows = ids
        .slice(i, i + 20)
        .map((vehicleId) => ({ vehicleId, fromMs: BENCH_START_MS, toMs: BENCH_START_MS + THROUGHPUT.days * DAY_MS }));
      const arrays = await readWindows(h, windows);
      const b = performance.now();
      for (const w of arrays) analyseSamples({ ...w, nowMs: Date.now() }, DEFAULT_VEHICLE_PROFILE, cfg);
      readS += (b - a) / 1000;
      analyseS += (performance.now() - b) / 1000;
    }
    return {
      vehicles: THROUGHPUT.vehicles,
      days: THROUGHPUT.days,
      readings: cold.readings,
      seconds: cold.seconds,
      readingsPerS: cold.readings / cold.seconds,
      workerCpuS: cold.workerCpuS,
      postgresCpuS: cold.postgresCpuS,
      exitedPostgresCpuS: cold.exitedPostgresCpuS,
      readingsPerCoreS: perCore(cold),
      warm: {
        seconds: warm.seconds,
        readingsPerS: warm.readings / warm.seconds,
        workerCpuS: warm.workerCpuS,
        postgresCpuS: warm.postgresCpuS,
        exitedPostgresCpuS: warm.exitedPostgresCpuS,
        readingsPerCoreS: perCore(warm),
      },
      readOnlyReadingsPerS: readings / readS,
      analyseOnlyReadingsPerS: readings / analyseS,
    };
  } finally {
    await drop();
  }
}

/** Runs `thermocline worker --once` on a database and samples its resident memory every 50 ms. */
async function workerPeakRss(url: string): Promise<{ seconds: number; peakRssMb: number }> {
  const t0 = performance.now();
  const child = spawn(process.execPath, [join(ROOT, 'bin', 'thermocline.js'), 'worker', '--once'], {
    env: { ...process.env, DATABASE_URL: url, LOG_LEVEL: 'warn', WORKER_BATCH_SIZE: '20' },
    stdio: ['ignore', 'ignore', 'inherit'],
  });
  let peak = 0;
  const timer = setInterval(() => {
    try {
      const m = /VmRSS:\s+(\d+) kB/.exec(readFileSync(`/proc/${child.pid}/status`, 'utf8'));
      if (m) peak = Math.max(peak, Number(m[1]) * 1024);
    } catch {
      // exited between samples
    }
  }, 50);
  const code = await new Promise<number | null>((resolve) => child.once('exit', resolve));
  clearInterval(timer);
  if (code !== 0) throw new Error(`worker --once exited with ${code}`);
  return { seconds: (performance.now() - t0) / 1000, peakRssMb: peak / MB };
}

async function measureMemory(serverUrl: string): Promise<AnalysisBenchResult['memory']> {
  const sizes = { small: MEMORY.vehicles, large: 10 * MEMORY.vehicles };
  const out = {} as AnalysisBenchResult['memory'];
  for (const [name, vehicles] of Object.entries(sizes) as Array<['small' | 'large', number]>) {
    const { h, url, drop } = await migrated(serverUrl, `thermocline_bench_memory_${name}`);
    try {
      const readings = await seedReadings(h, `mem${name}`, vehicles, MEMORY.days);
      log(`memory: ${vehicles} vehicles, ${readings.toLocaleString('en-US')} readings seeded; running the worker`);
      out[name] = { vehicles, readings, ...(await workerPeakRss(url)) };
    } finally {
      await drop();
    }
  }
  out.ratio = out.large.peakRssMb / out.small.peakRssMb;
  return out;
}

async function measureAtRisk(serverUrl: string): Promise<AnalysisBenchResult['atRisk']> {
  const { h, url, drop } = await migrated(serverUrl, 'thermocline_bench_atrisk');
  try {
    const findings = await seedFindings(h, 'risk', AT_RISK_VEHICLES);
    const { key } = await createApiKeysRepository(h.db).create({ fleetId: 'risk', scopes: ['read'] });
    log(`at-risk: ${AT_RISK_VEHICLES} vehicles with ${findings} findings seeded`);
    const server = await startServer({ DATABASE_URL: url });
    try {
      const get = async (path: string) => {
        const a = performance.now();
        const res = await fetch(`${server.baseUrl}${path}`, { headers: { authorization: `Bearer ${key}` } });
        await res.arrayBuffer();
        if (!res.ok) throw new Error(`${path} answered ${res.status}`);
        return performance.now() - a;
      };
      for (let i = 0; i < AT_RISK_WARMUP_REQUESTS; i++) await get('/v1/fleet/at-risk');
      const times: number[] = [];
      const floor: number[] = [];
      for (let i = 0; i < AT_RISK_REQUESTS; i++) {
        times.push(await get('/v1/fleet/at-risk'));
        floor.push(await get('/healthz'));
      }
      times.sort((a, b) => a - b);
      floor.sort((a, b) => a - b);
      return {
        vehicles: AT_RISK_VEHICLES,
        findings,
        requests: AT_RISK_REQUESTS,
        p50Ms: percentile(times, 0.5),
        p99Ms: percentile(times, 0.99),
        healthzP50Ms: percentile(floor, 0.5),
        healthzP99Ms: percentile(floor, 0.99),
      };
    } finally {
      await server.stop();
    }
  } finally {
    await drop();
  }
}

/**
 * The analysis targets on a PostgreSQL server: end-to-end analysis throughput (database to
 * findings, one in-process worker), the worker's peak memory on a fleet and on one 10× larger
 * (a child process, RSS sampled), and GET /v1/fleet/at-risk latency with 10,000 vehicles.
 */
export async function benchAnalysisE2e(serverUrl: string): Promise<AnalysisBenchResult> {
  const before = loadavg();
  const throughput = await measureThroughput(serverUrl);
  const memory = await measureMemory(serverUrl);
  const atRisk = await measureAtRisk(serverUrl);
  return { loadAverage: { before, after: loadavg() }, throughput, memory, atRisk };
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const result = await benchAnalysisE2e(process.env.DATABASE_URL || DEFAULT_SERVER_URL);
  process.stdout.write(`${JSON.stringify(result, null, 2)}\n`);
}
