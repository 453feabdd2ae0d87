import type { DatabaseHandle } from '../db/database.js';
import {
  LeaseLostError,
  prepareVehicles,
  WindowAnalysis,
  WINDOW_SLICE_DAYS,
  writeVehicle,
  type PreparedVehicle,
  type VehicleOutcome,
} from './analyse-vehicle.js';
import type { PeerBaselines } from '../db/peer-baselines-repository.js';
import type { Lease, QueueRepository } from '../db/analysis-queue-repository.js';
import { WindowBuffers } from '../db/pg-wire/binary-window-decoder.js';
import { readWindows } from '../db/reading-windows.js';
import { DAY_MS } from '../time/durations.js';

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
  /** Asked before each read round and each write: true finishes the vehicle in hand and releases the rest of the batch. */
  stopRequested: () => boolean;
  /**
   * Read buffers to reuse from batch to batch (one batch at a time): a batch of 20 vehicles grows
   * them to about 40 MB, otherwise allocated and zeroed again for every batch (and counted by V8
   * as external memory, which brings the next full garbage collection closer).
   */
  buffers?: WindowBuffers;
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
 * The slices of a batch's vehicles that are read together cover at most this many vehicle-days:
 * with more vehicles than fit at WINDOW_SLICE_DAYS each, the slices shorten, down to one day,
 * and beyond that the vehicles are read in groups. At 10 s readings all day long that is 1.2
 * million readings, 48 MB of arrays (plus the decoder's, 41 bytes a reading).
 */
export const BATCH_READ_VEHICLE_DAYS = 140;

/** A leased vehicle on its way through the batch. */
interface Pass {
  lease: Lease;
  prepared: PreparedVehicle;
  analysis: WindowAnalysis;
}

/**
 * Analyses a batch of leased vehicles: prepares them (windows, bounding readings), then reads the
 * slices of all of them together, round by round, in one statement per round (readings arrive
 * interleaved across vehicles, so this visits each heap page once instead of once per vehicle)
 * and analyses each vehicle's slice, then derives and writes each vehicle's results in its own
 * transaction. The leases are extended (a heartbeat) before a round or a write once a quarter of
 * the lease period has passed, so a long batch does not lose them; a failure is recorded on the vehicle's queue row (backoff,
 * last_error) and the batch goes on; a stop request finishes the vehicle in hand and releases the
 * rest. Each vehicle's start and end are logged ('vehicle analysed') with the worker id.
 */
export async function processLeases(ctx: ProcessContext, leases: readonly Lease[]): Promise<BatchSummary> {
  const summary: BatchSummary = { analysed: [], failed: [], released: [] };
  const nowMs = Date.now();
  const release = async (rest: readonly Lease[]) => {
    const ids = rest.map((l) => l.vehicleId);
    await ctx.queue.release(ctx.workerId, ids);
    summary.released.push(...ids);
  };
  const failed = async (lease: Lease, err: unknown) => {
    summary.failed.push({ vehicleId: lease.vehicleId, error: message(err) });
    if (err instanceof LeaseLostError) {
      ctx.logger.warn({ workerId: ctx.workerId, vehicleId: lease.vehicleId }, err.message);
      return;
    }
    ctx.logger.error(
      { err, workerId: ctx.workerId, vehicleId: lease.vehicleId, attempts: lease.attempts },
      'vehicle analysis failed; retrying after backoff',
    );
    await ctx.queue
      .fail(ctx.workerId, lease.vehicleId, message(err))
      .catch((e: unknown) =>
        ctx.logger.error(
          { err: e, vehicleId: lease.vehicleId },
          'could not record the failure; the lease will expire instead',
        ),
      );
  };
  // Leases are extended when a quarter of the lease period has passed since the last extension.
  let extendedAt = -Infinity;
  const heartbeat = async (passes: readonly { lease: Lease }[]) => {
    if (Date.now() - extendedAt < ctx.leaseMs / 4) return;
    extendedAt = Date.now();
    await ctx.queue.extend(
      ctx.workerId,
      passes.map((p) => p.lease.vehicleId),
      ctx.leaseMs,
    );
  };

  if (ctx.stopRequested()) {
    await release(leases);
    return summary;
  }
  await heartbeat(leases.map((lease) => ({ lease })));
  let prepared: Array<{ lease: Lease; prepared: PreparedVehicle }> = [];
  try {
    const all = await prepareVehicles(ctx.handle, leases, nowMs);
    prepared = leases.map((lease, k) => ({ lease, prepared: all[k]! }));
  } catch (err) {
    for (const lease of leases) await failed(lease, err);
  }
  const reading = prepared.filter((p) => p.prepared.lastMs !== undefined).length;
  const sliceDays = Math.max(
    1,
    Math.min(WINDOW_SLICE_DAYS, Math.floor(BATCH_READ_VEHICLE_DAYS / Math.max(1, reading))),
  );
  const groupSize = Math.max(1, Math.floor(BATCH_READ_VEHICLE_DAYS / sliceDays));
  let open: Pass[] = prepared.map((p) => ({
    ...p,
    analysis: new WindowAnalysis(p.prepared, sliceDays * DAY_MS, nowMs),
  }));
  // Each round's arrays are analysed before the next round reads: one set of buffers serves them all.
  const buffers = ctx.buffers ?? new WindowBuffers();

  for (;;) {
    if (ctx.stopRequested() && open.length > 1) {
      await release(open.slice(1).map((p) => p.lease));
      open = open.slice(0, 1);
    }
    const round = open.flatMap((pass) => {
      const slice = pass.analysis.nextSlice();
      return slice ? [{ pass, window: { vehicleId: pass.lease.vehicleId, ...slice } }] : [];
    });
    if (round.length === 0) break;
    await heartbeat(open);
    const errors = new Map<Pass, unknown>();
    for (let g = 0; g < round.length; g += groupSize) {
      const group = round.slice(g, g + groupSize);
      try {
        const arrays = await readWindows(
          ctx.handle,
          group.map((r) => r.window),
          buffers,
        );
        group.forEach(({ pass }, k) => {
          try {
            pass.analysis.consume(arrays[k]!);
          } catch (err) {
            errors.set(pass, err);
          }
        });
      } catch (err) {
        for (const { pass } of group) errors.set(pass, err);
      }
    }
    for (const [pass, err] of errors) await failed(pass.lease, err);
    open = open.filter((p) => !errors.has(p));
  }

  for (let i = 0; i < open.length; i++) {
    const { lease, prepared: p, analysis } = open[i]!;
    if (ctx.stopRequested() && i > 0) {
      await release(open.slice(i).map((x) => x.lease));
      break;
    }
    await heartbeat(open.slice(i));
    try {
      const outcome = await writeVehicle(
        { handle: ctx.handle, queue: ctx.queue, peers: ctx.peers, workerId: ctx.workerId, nowMs },
        lease,
        p,
        analysis,
      );
      summary.analysed.push(outcome);
      ctx.logger.info(
        {
          workerId: ctx.workerId,
          vehicleId: lease.vehicleId,
          startedAt: p.startedAt,
          finishedAt: Date.now(),
          readings: outcome.readings,
          findings: outcome.findings,
          riskScore: outcome.riskScore,
          queue: outcome.queue,
        },
        'vehicle analysed',
      );
    } catch (err) {
      await failed(lease, err);
    }
  }
  return summary;
}
