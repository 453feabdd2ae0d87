import type { DatabaseHandle } from '../db/database.js';
import { analyseVehicle, LeaseLostError, prepareVehicle, type PreparedVehicle, type VehicleOutcome } from './analyse-vehicle.js';
import type { PeerBaselines } from './peer-baselines.js';
import type { Lease, QueueRepository } from './queue-repository.js';

/** The few pino methods the worker logs through. */
export interface WorkerLogger {
  info(obj: object, msg: string): void;
  warn(obj: object, msg: string): void;
  error(obj: object, msg: string): void;
}

export const SILENT_LOGGER: WorkerLogger = { info: () => undefined, warn: () => undefined, error: () => undefined };

export interface ProcessContext {
  handle: DatabaseHandle;
  queue: QueueRepository;
  peers: PeerBaselines;
  workerId: string;
  leaseMs: number;
  logger: WorkerLogger;
  /** Asked before each vehicle: true releases the rest of the batch untouched. */
  stopRequested: () => boolean;
}

export interface BatchSummary {
  analysed: VehicleOutcome[];
  failed: Array<{ vehicleId: string; error: string }>;
  released: string[];
}

function message(err: unknown): string {
  return err instanceof Error ? err.message : String(err);
}

/**
 * Analyses a batch of leased vehicles one after the other. Before each vehicle the leases of the
 * rest are extended (a heartbeat), so a long batch does not lose them; a failure is recorded on
 * the queue row (backoff, last_error) and the batch goes on; a stop request releases what is
 * left. On a server the next vehicle's window is read while the current one is analysed.
 * Each vehicle's start and end are logged ('vehicle analysed') with the worker id.
 */
export async function processLeases(ctx: ProcessContext, leases: readonly Lease[]): Promise<BatchSummary> {
  const summary: BatchSummary = { analysed: [], failed: [], released: [] };
  // On a server, the next vehicle's window is read (on another pooled connection) while this one
  // is analysed and written: Postgres and the worker then work at the same time. PGlite has one
  // connection, whose open transaction a concurrent read would join, so there it stays sequential.
  const pipelined = ctx.handle.pool !== undefined;
  const prefetch = (lease: Lease | undefined) => {
    if (!pipelined || !lease) return undefined;
    const prepared = prepareVehicle(ctx.handle, lease, Date.now());
    prepared.catch(() => undefined); // settled when consumed; the failure is handled there
    return prepared;
  };
  let next: Promise<PreparedVehicle> | undefined;
  for (let i = 0; i < leases.length; i++) {
    const lease = leases[i]!;
    const rest = leases.slice(i).map((l) => l.vehicleId);
    if (ctx.stopRequested()) {
      await next?.catch(() => undefined);
      await ctx.queue.release(ctx.workerId, rest);
      summary.released.push(...rest);
      break;
    }
    await ctx.queue.extend(ctx.workerId, rest, ctx.leaseMs);
    const current = next;
    next = undefined;
    const startedAt = Date.now();
    try {
      const prepared = current ? await current : undefined;
      if (i + 1 < leases.length && !ctx.stopRequested()) next = prefetch(leases[i + 1]);
      const outcome = await analyseVehicle({ handle: ctx.handle, queue: ctx.queue, peers: ctx.peers, workerId: ctx.workerId, nowMs: startedAt }, lease, prepared);
      summary.analysed.push(outcome);
      ctx.logger.info({
        workerId: ctx.workerId, vehicleId: lease.vehicleId, startedAt: prepared?.startedAt ?? startedAt, finishedAt: Date.now(), readings: outcome.readings,
        findings: outcome.findings, riskScore: outcome.riskScore, queue: outcome.queue,
      }, 'vehicle analysed');
    } catch (err) {
      if (i + 1 < leases.length && !next && !ctx.stopRequested()) next = prefetch(leases[i + 1]);
      summary.failed.push({ vehicleId: lease.vehicleId, error: message(err) });
      if (err instanceof LeaseLostError) {
        ctx.logger.warn({ workerId: ctx.workerId, vehicleId: lease.vehicleId }, err.message);
        continue;
      }
      ctx.logger.error({ err, workerId: ctx.workerId, vehicleId: lease.vehicleId, attempts: lease.attempts }, 'vehicle analysis failed; retrying after backoff');
      await ctx.queue.fail(ctx.workerId, lease.vehicleId, message(err)).catch((e: unknown) =>
        ctx.logger.error({ err: e, vehicleId: lease.vehicleId }, 'could not record the failure; the lease will expire instead'));
    }
  }
  await next?.catch(() => undefined);
  return summary;
}
