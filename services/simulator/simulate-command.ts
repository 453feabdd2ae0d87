/**
 * `thermocline simulate`: simulate a fleet and write readings.ndjson (ingest format),
 * vehicles.json (vehicle profiles, no faults) and truth.json (ground truth). The only file of
 * the simulator that does I/O.
 */
import { once } from 'node:events';
import { createWriteStream } from 'node:fs';
import { mkdir, mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { busLines, type GatewayEncoding } from './bus-lines.js';
import { planFleet, type Scenario } from './fleet-plan.js';
import { groundTruth } from './ground-truth.js';
import { NdjsonEncoder } from './ndjson-lines.js';
import type { SimVehicle } from './sim-vehicle.js';
import { DEFAULT_SAMPLE_PERIOD_S, simulateVehicle } from './simulate-vehicle.js';

export interface SimulateRequest {
  vehicles: number;
  days: number;
  seed: number;
  startMs: number;
  samplePeriodS?: number;
  scenario?: Scenario;
  /** What the gateway posts: readings (default), J1939 frames or OBD-II responses. */
  as?: GatewayEncoding;
}

export interface SimulateResult {
  vehicles: number;
  readings: number;
  seconds: number;
  readingsPerSecond: number;
}

const HELP = `usage: thermocline simulate --out DIR [options]

Simulates a fleet's cooling systems and writes DIR/readings.ndjson (ingest format),
DIR/vehicles.json (vehicle profiles) and DIR/truth.json (injected faults, ground truth).
With --as j1939 or --as obd the telemetry is written as the vehicle bus carries it instead:
DIR/frames.ndjson for POST /v1/frames/j1939 or DIR/responses.ndjson for POST /v1/frames/obd.

options:
  --vehicles N         number of vehicles (default 36)
  --days D             days to simulate (default 49)
  --seed S             random seed; the same seed gives the same files (default 1)
  --out DIR            output directory (created if missing)
  --start DATE         first day, YYYY-MM-DD, UTC (default 2026-10-05)
  --sample-period S    gateway sample period in seconds (default 10)
  --scenario NAME      demo | evaluation (default demo)
  --as FORMAT          readings | j1939 | obd (default readings)
  --help               show this help
`;

/** Stream buffer, bytes: one chunk of 4096 lines is about 450 kB. */
const STREAM_HIGH_WATER_BYTES = 1 << 20;
/** Least time between progress lines, ms. */
const PROGRESS_EVERY_MS = 1000;

/** Vehicle profile as written to vehicles.json (what a planner would register; faults are truth). */
function profileOf(vehicle: SimVehicle): Omit<SimVehicle, 'faults'> {
  const { faults: _faults, ...profile } = vehicle;
  return profile;
}

/**
 * Simulates the fleet and writes the three files into outDir, streaming readings with
 * backpressure (memory does not grow with days or vehicles).
 */
export async function writeSimulation(
  req: SimulateRequest,
  outDir: string,
  onProgress: (line: string) => void = () => {},
): Promise<SimulateResult> {
  const opts = {
    startMs: req.startMs,
    days: req.days,
    seed: req.seed,
    samplePeriodS: req.samplePeriodS ?? DEFAULT_SAMPLE_PERIOD_S,
  };
  const fleet = planFleet({ ...opts, vehicles: req.vehicles, scenario: req.scenario ?? 'demo' });
  await mkdir(outDir, { recursive: true });
  await writeFile(join(outDir, 'vehicles.json'), `${JSON.stringify(fleet.map(profileOf), null, 2)}\n`);
  await writeFile(join(outDir, 'truth.json'), `${JSON.stringify(groundTruth(fleet), null, 2)}\n`);
  const as = req.as ?? 'readings';
  const fileName = as === 'j1939' ? 'frames.ndjson' : as === 'obd' ? 'responses.ndjson' : 'readings.ndjson';
  const out = createWriteStream(join(outDir, fileName), { highWaterMark: STREAM_HIGH_WATER_BYTES });
  const failed = once(out, 'error').then(([err]: unknown[]) => {
    throw new Error(`writing ${fileName} failed`, { cause: err });
  });
  failed.catch(() => {}); // observed below; keeps an early error from being unhandled
  const t0 = performance.now();
  let readings = 0;
  let lastProgress = t0;
  for (const [i, v] of fleet.entries()) {
    const encoder = new NdjsonEncoder(v.vehicleId);
    for (const chunk of simulateVehicle(v, opts)) {
      readings += chunk.length;
      const data = as === 'readings' ? encoder.encode(chunk) : busLines(v.vehicleId, chunk, as);
      if (!out.write(data)) await Promise.race([once(out, 'drain'), failed]);
    }
    const now = performance.now();
    if (now - lastProgress >= PROGRESS_EVERY_MS || i === fleet.length - 1) {
      lastProgress = now;
      const rate = Math.round(readings / ((now - t0) / 1000));
      onProgress(
        `simulate: ${i + 1}/${fleet.length} vehicles, ${readings.toLocaleString('en')} readings, ${rate.toLocaleString('en')} readings/s`,
      );
    }
  }
  out.end();
  await Promise.race([once(out, 'finish'), failed]);
  const seconds = (performance.now() - t0) / 1000;
  return { vehicles: fleet.length, readings, seconds, readingsPerSecond: readings / seconds };
}

/**
 * Measures the simulate command's throughput (simulation + NDJSON formatting + file writes)
 * into a temporary directory that is removed afterwards. For the bench.
 * @example const { readingsPerSecond } = await measureSimulatorThroughput({ vehicles: 12, days: 28 });
 */
export async function measureSimulatorThroughput(req: Partial<SimulateRequest> = {}): Promise<SimulateResult> {
  const dir = await mkdtemp(join(tmpdir(), 'thermocline-sim-'));
  try {
    return await writeSimulation({ vehicles: 12, days: 28, seed: 1, startMs: Date.UTC(2026, 9, 5), ...req }, dir);
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}

function positiveNumber(name: string, raw: string | undefined, fallback: number, integer: boolean): number {
  if (raw === undefined) return fallback;
  const n = Number(raw);
  if (!Number.isFinite(n) || n <= 0 || (integer && !Number.isInteger(n))) {
    throw new RangeError(`--${name} must be a positive ${integer ? 'integer' : 'number'}, got '${raw}'`);
  }
  return n;
}

/** CLI entry: parses options, writes the files, returns the exit code. */
export async function run(argv: string[]): Promise<number> {
  let values;
  try {
    ({ values } = parseArgs({
      args: argv,
      options: {
        vehicles: { type: 'string' },
        days: { type: 'string' },
        seed: { type: 'string' },
        out: { type: 'string' },
        start: { type: 'string' },
        'sample-period': { type: 'string' },
        scenario: { type: 'string' },
        as: { type: 'string' },
        help: { type: 'boolean', short: 'h' },
      },
      strict: true,
    }));
  } catch (err) {
    process.stderr.write(`thermocline simulate: ${err instanceof Error ? err.message : String(err)}\n\n${HELP}`);
    return 2;
  }
  if (values.help) {
    process.stdout.write(HELP);
    return 0;
  }
  try {
    if (!values.out) throw new RangeError('--out DIR is required');
    const start = values.start ?? '2026-10-05';
    const startMs = /^\d{4}-\d{2}-\d{2}$/.test(start) ? Date.parse(`${start}T00:00:00Z`) : Number.NaN;
    if (Number.isNaN(startMs)) throw new RangeError(`--start must be a date YYYY-MM-DD, got '${start}'`);
    const scenario = values.scenario ?? 'demo';
    if (scenario !== 'demo' && scenario !== 'evaluation')
      throw new RangeError(`--scenario must be demo or evaluation, got '${scenario}'`);
    const as = values.as ?? 'readings';
    if (as !== 'readings' && as !== 'j1939' && as !== 'obd')
      throw new RangeError(`--as must be readings, j1939 or obd, got '${as}'`);
    const req: SimulateRequest = {
      as,
      vehicles: positiveNumber('vehicles', values.vehicles, 36, true),
      days: positiveNumber('days', values.days, 49, true),
      seed: positiveNumber('seed', values.seed, 1, true),
      samplePeriodS: positiveNumber('sample-period', values['sample-period'], DEFAULT_SAMPLE_PERIOD_S, false),
      startMs,
      scenario,
    };
    const result = await writeSimulation(req, values.out, (line) => process.stderr.write(`${line}\n`));
    process.stderr.write(
      `simulate: wrote ${result.readings.toLocaleString('en')} readings for ${result.vehicles} vehicles to ${values.out} ` +
        `in ${result.seconds.toFixed(1)} s (${Math.round(result.readingsPerSecond).toLocaleString('en')} readings/s)\n`,
    );
    return 0;
  } catch (err) {
    if (err instanceof RangeError) {
      process.stderr.write(`thermocline simulate: ${err.message}\n`);
      return 2;
    }
    throw err;
  }
}
