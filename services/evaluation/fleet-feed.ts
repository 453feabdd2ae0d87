import { engineFamily, NdjsonEncoder, simulateVehicle, type SampleChunk, type SimVehicle } from '../simulator/index.js';
import { hashSeed, Rng } from '../simulator/prng.js';
import type { ApiClient, IngestReply, Uplink } from './api-client.js';
import { OnBoardMonitor } from './on-board-monitor.js';
import type { FleetPlan } from './seed-ranges.js';

/**
 * A fleet's readings as they reach the service in production, in fleet-wide time order: some
 * vehicles' gateways post their own JSON batches every 1–10 minutes; the rest go through a relay
 * that forwards many vehicles' readings as NDJSON bodies. Every reading also goes through the
 * vehicle's on-board-monitor baseline.
 */

/**
 * One vehicle in this many (the second, seventh, …) has a gateway that posts its own batches; the
 * rest go through the relay. Each small batch is a request with its own transaction and, with
 * the worker woken by every commit, an analysis of that vehicle: measured 2026-12-03 at about
 * 25 ms a request on 2 busy cores, most of a stream's replay time. One in five keeps both paths
 * busy at a bearable cost.
 */
const OWN_GATEWAY_EVERY = 5;
/** A gateway's batch spans this many minutes of readings. */
const GATEWAY_BATCH_MIN: readonly [number, number] = [1, 10];
/** The relay posts a body when it holds this many lines. */
export const RELAY_BODY_LINES = 20_000;
/** Default profile of a vehicle registered by its first readings (README: thermostat 88 °C). */
const DEFAULT_THERMOSTAT_C = 88;
const HEAVY_FAMILIES = new Set(['Halvern M7', 'Brenmark H13']);

/** The profile the fleet registered for a vehicle (PUT /v1/vehicles/{id}), or null for none. */
export function registeredProfile(vehicle: SimVehicle): {
  engineFamily: string;
  thermostatOpenC: number;
  capPressureKpa: number;
  glycolPercent: number;
  label: string;
} | null {
  const mode = vehicle.variation?.profile ?? 'exact';
  if (mode === 'none') return null;
  if (mode === 'wrong-family') {
    const f = engineFamily(vehicle.variation?.registeredFamily ?? vehicle.engineFamily);
    return {
      engineFamily: f.name,
      thermostatOpenC: f.thermostatOpenC,
      capPressureKpa: f.capPressureKpa,
      glycolPercent: f.glycolPercent,
      label: vehicle.label,
    };
  }
  return {
    engineFamily: vehicle.engineFamily,
    thermostatOpenC: vehicle.thermostatOpenC,
    capPressureKpa: vehicle.capPressureKpa,
    glycolPercent: vehicle.glycolPercent,
    label: vehicle.label,
  };
}

/** Registers every vehicle that has a profile. */
export async function registerProfiles(client: ApiClient, fleet: readonly SimVehicle[]): Promise<void> {
  for (const v of fleet) {
    const p = registeredProfile(v);
    if (p) await client.call('PUT', `/v1/vehicles/${encodeURIComponent(v.vehicleId)}`, JSON.stringify(p));
  }
}

/** NDJSON lines → the JSON batch format `{"readings":[…]}`. */
function jsonBatch(ndjson: Buffer): string {
  const text = ndjson.toString('latin1').trimEnd();
  return `{"readings":[${text.replaceAll('\n', ',')}]}`;
}

/** One vehicle's place in the stream. */
class VehicleFeed {
  private readonly gen: Generator<SampleChunk>;
  private chunk: SampleChunk | undefined;
  private i = 0;
  private done = false;
  readonly encoder: NdjsonEncoder;
  readonly offsetMs: number;
  readonly monitor: OnBoardMonitor;
  /** Own gateway: its batch span, ms; 0 = through the relay. */
  readonly batchMs: number;
  batch: Buffer[] = [];
  batchFirstMs = Number.NaN;
  readings = 0;

  constructor(
    readonly v: SimVehicle,
    plan: FleetPlan,
    ownGateway: boolean,
    rng: Rng,
  ) {
    this.gen = simulateVehicle(v, { startMs: plan.startMs, days: plan.days, seed: plan.seed });
    this.encoder = new NdjsonEncoder(v.vehicleId);
    this.offsetMs = (v.variation?.clockOffsetS ?? 0) * 1000;
    const p = registeredProfile(v);
    this.monitor = new OnBoardMonitor(
      p?.thermostatOpenC ?? DEFAULT_THERMOSTAT_C,
      HEAVY_FAMILIES.has(p?.engineFamily ?? ''),
    );
    const batchMin = rng.uniform(GATEWAY_BATCH_MIN[0], GATEWAY_BATCH_MIN[1]);
    this.batchMs = ownGateway ? Math.round(batchMin * 60) * 1000 : 0;
  }

  /** Hands the samples taken before true time untilMs to `sink` as runs of one chunk. */
  take(untilMs: number, sink: (c: SampleChunk, from: number, to: number) => void): void {
    while (!this.done) {
      if (!this.chunk || this.i >= this.chunk.length) {
        const next = this.gen.next();
        if (next.done) {
          this.done = true;
          return;
        }
        this.chunk = next.value;
        this.i = 0;
      }
      const c = this.chunk;
      const limit = untilMs + this.offsetMs;
      let j = this.i;
      while (j < c.length && (c.ts[j] as number) < limit) j++;
      if (j > this.i) sink(c, this.i, j);
      const more = j < c.length;
      this.readings += j - this.i;
      this.i = j;
      if (more) return;
    }
  }
}

export interface FeedProgress {
  readings: number;
  accepted: number;
  duplicates: number;
  rejected: number;
  requests: number;
}

/** Feeds one fleet's readings in fleet-wide time order through an uplink. */
export class FleetFeed {
  readonly vehicles: VehicleFeed[];
  readonly totals: FeedProgress = { readings: 0, accepted: 0, duplicates: 0, rejected: 0, requests: 0 };
  private relay: Buffer[] = [];
  private relayLines = 0;

  constructor(
    plan: FleetPlan,
    private readonly client: ApiClient,
    private readonly uplink: Uplink,
  ) {
    const rng = new Rng(hashSeed(plan.seed, 'evaluation:transport'));
    this.vehicles = plan.fleet.map((v, i) => new VehicleFeed(v, plan, i % OWN_GATEWAY_EVERY === 1, rng));
  }

  /** Moves every vehicle's readings up to true time untilMs into batches and bodies, posting full ones. */
  async advance(untilMs: number): Promise<void> {
    for (const f of this.vehicles) {
      f.take(untilMs, (c, from, to) => {
        for (let k = from; k < to; k++)
          f.monitor.push(c.ts[k] as number, c.coolant[k] as number, c.ambient[k] as number, c.speedKph[k] as number);
        const lines = f.encoder.encode(c, from, to);
        this.totals.readings += to - from;
        if (f.batchMs > 0) {
          if (f.batch.length === 0) f.batchFirstMs = (c.ts[from] as number) - f.offsetMs;
          f.batch.push(lines);
        } else {
          this.relay.push(lines);
          this.relayLines += to - from;
        }
      });
      if (f.batch.length > 0 && untilMs - f.batchFirstMs >= f.batchMs) await this.postBatch(f);
    }
    if (this.relayLines >= RELAY_BODY_LINES) await this.postRelay();
  }

  /** Posts everything held back (before an analysis, and at the end). */
  async flush(): Promise<void> {
    for (const f of this.vehicles) if (f.batch.length > 0) await this.postBatch(f);
    if (this.relayLines > 0) await this.postRelay();
    await this.uplink.drain();
  }

  private async postBatch(f: VehicleFeed): Promise<void> {
    const body = jsonBatch(Buffer.concat(f.batch));
    f.batch = [];
    await this.uplink.send(f.v.vehicleId, () => this.post(body, 'application/json'));
  }

  private async postRelay(): Promise<void> {
    const body = Buffer.concat(this.relay);
    this.relay = [];
    this.relayLines = 0;
    await this.uplink.send('relay', () => this.post(body, 'application/x-ndjson'));
  }

  private async post(body: string | Buffer, contentType: string): Promise<void> {
    const r = await this.client.call<IngestReply>('POST', '/v1/readings', body, contentType);
    this.totals.requests++;
    this.totals.accepted += r.accepted;
    this.totals.duplicates += r.duplicates;
    this.totals.rejected += r.rejected.length;
  }
}
