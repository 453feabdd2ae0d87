import { measureSimulatorThroughput } from '../services/simulator/simulate-command.js';
import { cpus, loadavg } from 'node:os';
import { benchAnalysisE2e } from './analysis-e2e.js';
import { benchAnalysisLibrary } from './analysis-library.js';
import { benchFleetPage, REQUESTS_PER_QUERY } from './fleet-page.js';
import { benchFrames } from './frames.js';
import { benchIngest } from './ingest.js';
import { DEFAULT_SERVER_URL } from './bench-server.js';

/**
 * `npm run bench`: the speed and memory targets, measured in one run on this machine and printed
 * as figures and ratios. Not a test: nothing here fails the build, but a broken invariant (rows
 * lost, errors under load) stops the run with a non-zero exit.
 */
const serverUrl = process.env.DATABASE_URL || DEFAULT_SERVER_URL;
const fmt = (n: number) => Math.round(n).toLocaleString('en-US');
const sections = new Set(process.argv.slice(2));
const want = (name: string) => sections.size === 0 || sections.has(name);

const lines: string[] = [];
if (want('ingest')) {
  const r = await benchIngest(serverUrl);
  lines.push(
    `ingest (${fmt(r.rows)} readings into ${serverUrl.replace(/\/\/[^@]*@/, '//')})`,
    `  psql \\copy                                                ${fmt(r.copyRowsPerS).padStart(10)} readings/s`,
    `  HTTP JSON batches of 1,000 (one vehicle each, 4 gateways) ${fmt(r.jsonRowsPerS).padStart(10)} readings/s   ratio to \\copy ${(r.jsonRowsPerS / r.copyRowsPerS).toFixed(2)}`,
    `  HTTP NDJSON bodies of 100,000 (100 vehicles, 2 uploaders) ${fmt(r.ndjsonRowsPerS).padStart(10)} readings/s   ratio to \\copy ${(r.ndjsonRowsPerS / r.copyRowsPerS).toFixed(2)}`,
    `  target: HTTP ≥ 0.5 × \\copy: JSON batches ${r.jsonRowsPerS / r.copyRowsPerS >= 0.5 ? 'met' : 'NOT met'}, NDJSON bodies ${r.ndjsonRowsPerS / r.copyRowsPerS >= 0.5 ? 'met' : 'NOT met'}`,
    `  load: ${r.load.gateways} gateways × ${r.load.seconds} s: ${fmt(r.load.requests)} requests, ${r.load.errors} errors, ${fmt(r.load.accepted)} accepted, ${fmt(r.load.stored)} in the database (${r.load.accepted === r.load.stored && r.load.errors === 0 ? 'equal, no errors' : 'MISMATCH'})`,
  );
  if (r.load.errors > 0 || r.load.accepted !== r.load.stored) process.exitCode = 1;
}
if (want('frames')) {
  const r = await benchFrames(serverUrl);
  lines.push(
    `vehicle-bus frames (SAE J1939; decoding + alignment in this process, HTTP into ${serverUrl.replace(/\/\/[^@]*@/, '//')})`,
    `  decode + align, one core: ${fmt(r.decode.frames)} frames of ${r.decode.vehicles} vehicles → ${fmt(r.decode.readings)} readings: ${fmt(r.decode.framesPerS).padStart(10)} frames/s warm (first pass ${fmt(r.decode.firstPassPerS)}/s)   ratio to the 1,000,000/s target ${(r.decode.framesPerS / 1_000_000).toFixed(2)}`,
    `  HTTP NDJSON, 2 clients: ${fmt(r.http.readings)} readings to /v1/readings ${fmt(r.http.readingsPerS).padStart(10)} readings/s`,
    `  HTTP NDJSON, 2 clients: the same as ${fmt(r.http.frames)} frames to /v1/frames/j1939 ${fmt(r.http.framesReadingsPerS).padStart(10)} readings/s (${fmt(r.http.framesPerS)} frames/s)   ratio to /v1/readings ${(r.http.framesReadingsPerS / r.http.readingsPerS).toFixed(2)}`,
  );
}
if (want('simulator')) {
  process.stderr.write('[simulator] warming up, then 24 vehicles × 42 days to NDJSON on one core\n');
  await measureSimulatorThroughput({ vehicles: 2, days: 7 });
  const r = await measureSimulatorThroughput({ vehicles: 24, days: 42 });
  lines.push(
    `simulator (thermocline simulate, NDJSON to disk, one core)`,
    `  ${fmt(r.readings)} readings in ${r.seconds.toFixed(1)} s: ${fmt(r.readingsPerSecond).padStart(10)} readings/s   ratio to the 300,000/s target ${(r.readingsPerSecond / 300_000).toFixed(2)}`,
  );
}
if (want('analysis')) {
  process.stderr.write("[analysis] analyseSamples over a simulated fleet's typed arrays, one core\n");
  const r = benchAnalysisLibrary();
  lines.push(
    `analysis library (runs, warm-up fits, overshoot, day aggregates, sensor checks over typed arrays of a simulated fleet, one core)`,
    `  ${fmt(r.readings)} readings of ${r.vehicles} vehicles: ${fmt(r.bestPerS).padStart(10)} readings/s warm (first pass, cold JIT: ${fmt(r.firstPassPerS)}/s)   ratio to the 5,000,000/s target ${(r.bestPerS / 5_000_000).toFixed(2)}`,
  );
}
if (want('worker')) {
  const r = await benchAnalysisE2e(serverUrl);
  const t = r.throughput;
  lines.push(
    `analysis end to end on PostgreSQL (database → runs, days, findings, risk; first pass over ${t.days} days a vehicle)`,
    `  wall clock, one worker (JS on one core) + its Postgres backends: ${fmt(t.readingsPerS).padStart(10)} readings/s   (${fmt(t.readings)} readings of ${t.vehicles} vehicles in ${t.seconds.toFixed(1)} s)`,
    `  CPU: worker ${t.workerCpuS.toFixed(2)} s + PostgreSQL ${t.postgresCpuS.toFixed(2)} s = ${(t.workerCpuS + t.postgresCpuS).toFixed(2)} s`,
    `  PostgreSQL processes that exited meanwhile (parallel workers; also autovacuum, other sessions; not counted above): ${t.exitedPostgresCpuS.toFixed(2)} s, second fleet ${t.warm.exitedPostgresCpuS.toFixed(2)} s`,
    `  per core (readings / CPU-second, both sides): ${fmt(t.readingsPerCoreS).padStart(10)} readings/s   ratio to the 1,000,000/s target ${(t.readingsPerCoreS / 1_000_000).toFixed(2)}`,
    want('analysis')
      ? '    (the first fleet in this process, but after the analysis library section: its JIT is partly warm; `npx tsx bench/run.ts worker` alone measures a fresh process)'
      : '    (the first fleet in a fresh process: JIT cold, V8 compiling the analysis and the decoder on its other threads, counted in the worker CPU)',
    `  the same over a second fleet in the same process (JIT warm, as in a long-running worker): ${fmt(t.warm.readingsPerS)} readings/s wall; CPU worker ${t.warm.workerCpuS.toFixed(2)} s + PostgreSQL ${t.warm.postgresCpuS.toFixed(2)} s: ${fmt(t.warm.readingsPerCoreS)} per CPU-second, ratio ${(t.warm.readingsPerCoreS / 1_000_000).toFixed(2)}`,
    `  phases alone, wall: reading windows ${fmt(t.readOnlyReadingsPerS)}/s, analyseSamples ${fmt(t.analyseOnlyReadingsPerS)}/s (bench data, JIT warm)`,
    `  worker peak RSS: ${r.memory.small.vehicles} vehicles ${r.memory.small.peakRssMb.toFixed(0)} MB, ${r.memory.large.vehicles} vehicles ${r.memory.large.peakRssMb.toFixed(0)} MB: ratio ${r.memory.ratio.toFixed(2)} (flat = about 1)`,
    `  GET /v1/fleet/at-risk, ${fmt(r.atRisk.vehicles)} vehicles, ${fmt(r.atRisk.findings)} findings, ${r.atRisk.requests} requests after warm-up: p50 ${r.atRisk.p50Ms.toFixed(1)} ms, p99 ${r.atRisk.p99Ms.toFixed(1)} ms   ratio to the 20 ms target ${(r.atRisk.p99Ms / 20).toFixed(2)}`,
    `  GET /healthz in between (no database; this machine's floor): p50 ${r.atRisk.healthzP50Ms.toFixed(1)} ms, p99 ${r.atRisk.healthzP99Ms.toFixed(1)} ms`,
    `  load average before ${r.loadAverage.before.map((l) => l.toFixed(2)).join(' ')}, after ${r.loadAverage.after.map((l) => l.toFixed(2)).join(' ')}`,
  );
}
if (want('fleet-page')) {
  // FLEET_PAGE_VEHICLES=1000 checks the section quickly; the target is at the default 10,000.
  const r = await benchFleetPage(serverUrl, Number(process.env.FLEET_PAGE_VEHICLES) || undefined);
  lines.push(
    `web view fleet page: GET /v1/fleet/vehicles with a session cookie, ${fmt(r.vehicles)} vehicles (${fmt(r.atRisk)} at risk), ${REQUESTS_PER_QUERY} requests per query after warm-up`,
    ...r.queries.map(
      (q) =>
        `  ${q.path.padEnd(72)} p50 ${q.p50Ms.toFixed(1).padStart(5)} ms, p99 ${q.p99Ms.toFixed(1).padStart(5)} ms (${q.rows} rows of ${fmt(q.total)})`,
    ),
    `  all queries: p99 ${r.allP99Ms.toFixed(1)} ms   ratio to the 50 ms target ${(r.allP99Ms / 50).toFixed(2)}`,
  );
}
const load = loadavg()
  .map((l) => l.toFixed(2))
  .join(' ');
process.stdout.write(
  `\nthermocline bench — ${cpus().length} cores, load average at the end ${load} (figures are only comparable on a quiet machine)\n\n${lines.join('\n')}\n`,
);
