import { randomUUID } from 'node:crypto';
import { setTimeout as delay } from 'node:timers/promises';
import { sql } from 'kysely';
import type { DatabaseHandle } from '../db/database.js';
import { WindowBuffers } from '../db/pg-wire/binary-window-decoder.js';
import { processLeases, SILENT_LOGGER, type WorkerLogger } from './lease-processor.js';
import { PeerBaselines } from '../db/peer-baselines-repository.js';
import { createQueueRepository } from '../db/analysis-queue-repository.js';
import { newWorkerId } from './worker.js';

/** One explicit analysis run (`POST /v1/analysis/runs`), as its status URL reports it. */
export interface AnalysisRun {
  runId: string;
  /** The fleet analysed; null for an admin run over every fleet. */
  fleetId: string | null;
  status: 'running' | 'succeeded' | 'failed';
  startedAt: string;
  finishedAt: string | null;
  vehiclesAnalysed: number;
  readingsAnalysed: number;
  vehiclesFailed: number;
  failures: Array<{ vehicleId: string; error: string }>;
  /** Open findings of the fleet when the run ended. */
  openFindings: number | null;
  error: string | null;
}

/** A vehicle whose data keeps arriving is analysed at most this often in one run. */
const MAX_PASSES_PER_VEHICLE = 3;
/** While other workers hold leases in the fleet, the run checks the queue this often, ms. */
const OTHERS_POLL_MS = 100;
/** Runs kept in memory for their status URL. */
const KEPT_RUNS = 200;

/**
 * Explicit analysis runs: analyse every dirty vehicle of a fleet now (including ones backing off
 * after a failure), with the same leasing as the worker, then wait for vehicles of the fleet that
 * other workers hold. Run status lives in this process's memory (the status URL is answered by the
 * process that started the run).
 */
export class AnalysisRuns {
  private readonly runs = new Map<string, AnalysisRun>();
  private readonly active = new Set<Promise<void>>();
  private closing = false;
  private readonly queue;
  private readonly peers;

  constructor(
    private readonly handle: DatabaseHandle,
    private readonly options: { leaseMs: number; batchSize: number; logger?: WorkerLogger },
  ) {
    this.queue = createQueueRepository(handle.db);
    this.peers = new PeerBaselines(handle.db);
  }

  /** Starts a run; `done` settles when it has finished (it never rejects: failures are in the run). */
  start(fleetId: string | null): { run: AnalysisRun; done: Promise<AnalysisRun> } {
    const run: AnalysisRun = {
      runId: randomUUID(),
      fleetId,
      status: 'running',
      startedAt: new Date().toISOString(),
      finishedAt: null,
      vehiclesAnalysed: 0,
      readingsAnalysed: 0,
      vehiclesFailed: 0,
      failures: [],
      openFindings: null,
      error: null,
    };
    this.runs.set(run.runId, run);
    while (this.runs.size > KEPT_RUNS) this.runs.delete(this.runs.keys().next().value!);
    const work = this.execute(run);
    this.active.add(work);
    void work.finally(() => this.active.delete(work));
    return { run, done: work.then(() => run) };
  }

  get(runId: string): AnalysisRun | undefined {
    return this.runs.get(runId);
  }

  /** Stops runs in progress after their current vehicle and waits for them. */
  async close(): Promise<void> {
    this.closing = true;
    await Promise.all([...this.active]);
  }

  private async execute(run: AnalysisRun): Promise<void> {
    const workerId = `${newWorkerId()}:run`;
    const logger = this.options.logger ?? SILENT_LOGGER;
    const passes = new Map<string, number>();
    const fleet = run.fleetId ?? undefined;
    const buffers = new WindowBuffers();
    try {
      const waitUntil = Date.now() + this.options.leaseMs;
      while (!this.closing) {
        const leased = await this.queue.lease(workerId, this.options.batchSize, this.options.leaseMs, {
          ...(fleet ? { fleetId: fleet } : {}),
          ignoreBackoff: true,
        });
        const over = leased.filter((l) => (passes.get(l.vehicleId) ?? 0) >= MAX_PASSES_PER_VEHICLE);
        const leases = leased.filter((l) => !over.includes(l));
        if (over.length > 0)
          await this.queue.release(
            workerId,
            over.map((l) => l.vehicleId),
          );
        if (leases.length === 0) {
          if (over.length > 0) break;
          // Nothing leasable: wait for vehicles of this fleet that other workers hold right now.
          const counts = await this.queue.counts(fleet);
          if (counts.leased === 0 || Date.now() > waitUntil) break;
          await delay(OTHERS_POLL_MS);
          continue;
        }
        const summary = await processLeases(
          {
            handle: this.handle,
            queue: this.queue,
            peers: this.peers,
            workerId,
            leaseMs: this.options.leaseMs,
            logger,
            stopRequested: () => this.closing,
            buffers,
          },
          leases,
        );
        for (const l of leases) passes.set(l.vehicleId, (passes.get(l.vehicleId) ?? 0) + 1);
        for (const failed of summary.failed) passes.set(failed.vehicleId, MAX_PASSES_PER_VEHICLE);
        run.vehiclesAnalysed += summary.analysed.length;
        run.readingsAnalysed += summary.analysed.reduce((s, o) => s + o.readings, 0);
        run.vehiclesFailed += summary.failed.length;
        run.failures.push(...summary.failed);
      }
      const open = await sql<{ n: number }>`
        select count(*)::int as n from findings where status = 'open' and (${fleet ?? null}::text is null or fleet_id = ${fleet ?? null})`.execute(
        this.handle.db,
      );
      run.openFindings = open.rows[0]?.n ?? 0;
      run.status = 'succeeded';
    } catch (err) {
      run.status = 'failed';
      run.error = err instanceof Error ? err.message : String(err);
      logger.error({ err, runId: run.runId }, 'analysis run failed');
    }
    run.finishedAt = new Date().toISOString();
  }
}
