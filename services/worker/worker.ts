import { hostname } from 'node:os';
import { randomBytes } from 'node:crypto';
import type { DatabaseHandle } from '../db/database.js';
import { WindowBuffers } from '../db/pg-wire/binary-window-decoder.js';
import { processLeases, SILENT_LOGGER, type WorkerLogger } from './lease-processor.js';
import { PeerBaselines } from '../db/peer-baselines-repository.js';
import { createQueueRepository, type QueueRepository } from '../db/analysis-queue-repository.js';

export interface WorkerOptions {
  handle: DatabaseHandle;
  /** How often an idle worker polls the queue, ms (config workerPollMs). */
  pollMs: number;
  /** Lease length, ms (config workerLeaseMs). */
  leaseMs: number;
  /** Vehicles leased per batch (config workerBatchSize). */
  batchSize: number;
  logger?: WorkerLogger;
  /** Defaults to host:pid:random. */
  workerId?: string;
}

/** A unique, readable worker id: host, process and a random suffix. */
export function newWorkerId(): string {
  return `${hostname()}:${process.pid}:${randomBytes(3).toString('hex')}`;
}

/**
 * The analysis worker: leases batches of dirty vehicles and analyses them, polls the queue every
 * `pollMs` when idle (one indexed query: a quiet fleet costs nothing more), wakes at once on
 * `wake()` (the API calls it after an ingest commits), sweeps expired leases of dead workers
 * once per lease period, and on `stop()` finishes the vehicle in hand and releases the rest.
 */
export class Worker {
  readonly id: string;
  private readonly queue: QueueRepository;
  private readonly peers: PeerBaselines;
  private readonly logger: WorkerLogger;
  private stopping = false;
  private woken = false;
  private wakeIdle: (() => void) | undefined;
  private loopDone: Promise<void> | undefined;
  private lastSweepMs = 0;
  /** Read buffers kept from batch to batch while there is work; dropped when the queue is empty. */
  private buffers: WindowBuffers | undefined;

  constructor(private readonly options: WorkerOptions) {
    this.id = options.workerId ?? newWorkerId();
    this.queue = createQueueRepository(options.handle.db);
    this.peers = new PeerBaselines(options.handle.db);
    this.logger = options.logger ?? SILENT_LOGGER;
  }

  start(): void {
    if (this.loopDone) return;
    this.logger.info(
      {
        workerId: this.id,
        pollMs: this.options.pollMs,
        leaseMs: this.options.leaseMs,
        batchSize: this.options.batchSize,
      },
      'analysis worker started',
    );
    this.loopDone = this.loop();
  }

  /** Look at the queue now instead of at the next poll. */
  wake(): void {
    this.woken = true;
    this.wakeIdle?.();
  }

  /** Finishes the vehicle in hand, releases the other leases of the batch, and returns. */
  async stop(): Promise<void> {
    this.stopping = true;
    this.wakeIdle?.();
    await this.loopDone;
    this.logger.info({ workerId: this.id }, 'analysis worker stopped');
  }

  private idle(ms: number): Promise<void> {
    if (this.woken || this.stopping) return Promise.resolve();
    return new Promise<void>((resolve) => {
      const timer = setTimeout(done, ms);
      function done() {
        clearTimeout(timer);
        resolve();
      }
      this.wakeIdle = done;
    }).then(() => {
      this.wakeIdle = undefined;
    });
  }

  private async loop(): Promise<void> {
    const { handle, pollMs, leaseMs, batchSize } = this.options;
    while (!this.stopping) {
      this.woken = false;
      try {
        if (Date.now() - this.lastSweepMs >= leaseMs) {
          this.lastSweepMs = Date.now();
          const freed = await this.queue.sweepExpired();
          if (freed.length > 0)
            this.logger.warn({ workerId: this.id, vehicles: freed }, 'released expired leases of stopped workers');
        }
        const leases = await this.queue.lease(this.id, batchSize, leaseMs);
        if (leases.length === 0) {
          this.buffers = undefined;
          await this.idle(pollMs);
          continue;
        }
        this.buffers ??= new WindowBuffers();
        await processLeases(
          {
            handle,
            queue: this.queue,
            peers: this.peers,
            workerId: this.id,
            leaseMs,
            logger: this.logger,
            stopRequested: () => this.stopping,
            buffers: this.buffers,
          },
          leases,
        );
      } catch (err) {
        // The database is down or a query failed outside a vehicle: wait a poll period and retry.
        this.logger.error({ err, workerId: this.id }, 'analysis worker loop failed; retrying after the poll interval');
        await this.idle(pollMs);
      }
    }
  }
}
