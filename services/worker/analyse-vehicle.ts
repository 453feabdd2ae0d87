import { analyseSamples } from '../analysis/analyse-samples.js';
import { resolveConfig } from '../analysis/config.js';
import type { DayAggregate } from '../analysis/day-aggregates.js';
import { deriveFindings } from '../analysis/derive-findings.js';
import type { RunMetrics } from '../analysis/run-metrics.js';
import { utcDayStartMs, type SampleArrays } from '../analysis/sample-arrays.js';
import type { SensorEvent } from '../analysis/sensor-events.js';
import type { DatabaseHandle } from '../db/database.js';
import { refreshVehicleRisk } from '../db/vehicle-risk.js';
import { createAnalysisStore, type VehicleState, type WindowResults } from '../db/analysis-results-repository.js';
import { syncFindings } from '../db/findings-sync.js';
import type { PeerBaselines } from '../db/peer-baselines-repository.js';
import type { Lease, QueueRepository } from '../db/analysis-queue-repository.js';
import { COLUMN_NAMES } from '../db/pg-wire/binary-window-decoder.js';
import { windowBounds } from '../db/reading-windows.js';
import { DAY_MS } from '../time/durations.js';

/*
 * One pass over one leased vehicle:
 * 1. window start: the earlier of its watermark (`resume_from`, the day its open run began)
 *    and the day of the earliest new reading (late or back-filled data), moved back over any
 *    stored run that reaches it (`prepareVehicles`);
 * 2. reads the readings from there on as typed arrays, slice by slice, and analyses them
 *    (`WindowAnalysis`), each slice resuming where the previous one's open run began;
 * 3. re-derives the findings from the stored run/day history plus the new results
 *    (`deriveFindings`, closed runs only: an open run's metrics are provisional) at the
 *    vehicle's analysis time, its latest reading; the engine family's peer baseline and the
 *    vehicle's service events are passed in;
 * 4. in one transaction, if the lease is still held: replaces the derived rows from the window
 *    start on, syncs the findings, records the watermark, refreshes the risk and finishes the
 *    lease. Re-running over the same data writes the same rows.
 * `processLeases` runs these steps for a batch of leased vehicles, reading their slices together.
 */

/** Readings are read and analysed in slices of at most this many days (shorter when many vehicles are read together): memory stays bounded. */
export const WINDOW_SLICE_DAYS = 14;

/** The lease was lost (expired and taken by another worker) before the results were written. */
export class LeaseLostError extends Error {
  constructor(vehicleId: string) {
    super(`lease on ${vehicleId} was lost before its results were written; nothing was stored`);
    this.name = 'LeaseLostError';
  }
}

export interface VehicleOutcome {
  vehicleId: string;
  fleetId: string;
  /** Readings analysed in this pass. */
  readings: number;
  /** Start of the re-analysed window, ms (a UTC midnight). */
  windowFromMs: number;
  /** Analysis time (latest reading), ms; null when the vehicle has no readings. */
  asOfMs: number | null;
  findings: number;
  riskScore: number;
  /** 'done': queue row removed; 'again': new data arrived during the pass, queued again. */
  queue: 'done' | 'again';
}

export interface AnalyseContext {
  handle: DatabaseHandle;
  queue: QueueRepository;
  peers: PeerBaselines;
  workerId: string;
  /** Wall clock, ms: a trailing run quiet for longer than the run gap is closed. */
  nowMs: number;
}

/** The runs, days and sensor events of one slice that are final, given where the next slice starts. */
function finalPart(results: WindowResults, beforeMs: number): WindowResults {
  return {
    runs: results.runs.filter((x) => x.startMs < beforeMs),
    days: results.days.filter((x) => x.dayStartMs < beforeMs),
    sensorEvents: results.sensorEvents.filter((x) => x.runStartMs < beforeMs),
  };
}

/** What a pass knows before reading: the window and the readings around it. */
export interface PreparedVehicle {
  /** When the preparation began, ms (logged as the pass's start). */
  startedAt: number;
  state: VehicleState;
  windowFromMs: number;
  /** Latest reading in the window, ms; undefined when the window is empty. */
  lastMs: number | undefined;
  /** Last reading before the window, ms (for the gap before its first run). */
  previousRunEndMs: number | undefined;
}

/** Step 1 of a pass, for a batch of leased vehicles at once: each one's window and the readings that bound it. */
export async function prepareVehicles(
  handle: DatabaseHandle,
  leases: readonly Lease[],
  nowMs: number,
): Promise<PreparedVehicle[]> {
  const startedAt = Date.now();
  const store = createAnalysisStore(handle.db);
  const states = await store.vehicleStates(leases.map((l) => l.vehicleId));
  const starts = await store.extendOverStoredRuns(
    leases.map((lease, k) => {
      const state = states[k]!;
      const dirtyDay = Number.isFinite(lease.windowFromMs) ? utcDayStartMs(lease.windowFromMs) : Infinity;
      let fromMs = Math.min(state.resumeFromMs ?? Infinity, dirtyDay);
      if (!Number.isFinite(fromMs)) fromMs = utcDayStartMs(state.lastReadingMs ?? nowMs);
      return { vehicleId: lease.vehicleId, fromMs, gapMs: resolveConfig(state.profile.engineFamily).runGapS * 1000 };
    }),
  );
  const bounds = await windowBounds(
    handle,
    leases.map((lease, k) => ({ vehicleId: lease.vehicleId, fromMs: starts[k]! })),
  );
  return leases.map((_, k) => {
    const { lastMs, beforeMs } = bounds[k]!;
    return {
      startedAt,
      state: states[k]!,
      windowFromMs: starts[k]!,
      lastMs,
      previousRunEndMs: lastMs === undefined ? undefined : beforeMs,
    };
  });
}

/**
 * Step 2 of a pass: the window's readings analysed slice by slice (`analyseSamples`),
 * each slice resuming where the previous one's open run began. The caller reads each slice that
 * `nextSlice` names and hands it to `consume`, so a worker can read the slices of many vehicles
 * in one statement.
 */
export class WindowAnalysis {
  readonly fresh: WindowResults = { runs: [], days: [], sensorEvents: [] };
  /** Readings analysed (each counted once, although a slice re-analyses the previous one's open run). */
  readings = 0;
  /** Watermark for the next pass: the UTC midnight before the open run, or null. */
  resumeFromMs: number | null = null;
  private from: number;
  /** Where the next read starts: the previous slice's end (its tail from `from` on is kept in `carry`). */
  private readFrom: number;
  private carry: SampleArrays | undefined;
  private previousRunEndMs: number | undefined;
  private done: boolean;
  private readonly cfg;

  /**
   * @param sliceMs the first slice's length, ms (a whole number of days: slices end at UTC
   *   midnights); memory is bounded by one slice of readings. Doubled when one run outlasts it.
   * @param nowMs wall clock: a trailing run quiet for longer than the run gap is closed.
   */
  constructor(
    private readonly p: PreparedVehicle,
    private sliceMs: number,
    private readonly nowMs: number,
  ) {
    this.from = p.windowFromMs;
    this.readFrom = p.windowFromMs;
    this.previousRunEndMs = p.previousRunEndMs;
    this.done = p.lastMs === undefined;
    this.cfg = resolveConfig(p.state.profile.engineFamily);
  }

  /**
   * The readings to read next, [fromMs, toMs); undefined when the window has been analysed. A
   * slice starts where the previous one's open run began, but the readings from there to the
   * previous slice's end are kept rather than read again (a day in seven with 7-day slices).
   */
  nextSlice(): { fromMs: number; toMs: number; prefix?: SampleArrays } | undefined {
    if (this.done) return undefined;
    return {
      fromMs: this.readFrom,
      toMs: sliceEnd(this.from, this.sliceMs, this.p.lastMs!),
      ...(this.carry ? { prefix: this.carry } : {}),
    };
  }

  /**
   * Analyses the slice `nextSlice` named: the kept rows (its `prefix`) followed by those read,
   * as `readWindows` returns them; they may be views into buffers the caller reuses.
   */
  consume(arrays: SampleArrays): void {
    const lastMs = this.p.lastMs!;
    const from = this.from;
    const toMs = sliceEnd(from, this.sliceMs, lastMs);
    const last = from + this.sliceMs > lastMs;
    this.carry = undefined;
    this.readFrom = toMs;
    const previousRunEndMs = this.previousRunEndMs;
    const a = analyseSamples(
      {
        ...arrays,
        ...(previousRunEndMs !== undefined ? { previousRunEndMs } : {}),
        ...(last ? { nowMs: this.nowMs } : {}),
      },
      this.p.state.profile,
      this.cfg,
    );
    const stored = (x: { truncatedStart: boolean }) => !x.truncatedStart;
    if (last) {
      this.fresh.runs.push(...a.runs.filter(stored));
      this.fresh.days.push(...a.days);
      this.fresh.sensorEvents.push(...a.sensorEvents);
      this.readings += arrays.ts.length;
      this.resumeFromMs = a.resumeFromMs;
      this.done = true;
      return;
    }
    const next = a.resumeFromMs ?? from + this.sliceMs;
    if (next <= from) {
      // One run longer than the slice: a longer slice rather than no progress.
      this.sliceMs *= 2;
      this.carry = sliceArrays(arrays, 0);
      return;
    }
    const part = finalPart(a, next);
    this.fresh.runs.push(...part.runs.filter(stored));
    this.fresh.days.push(...part.days);
    this.fresh.sensorEvents.push(...part.sensorEvents);
    let k = 0;
    while (k < arrays.ts.length && arrays.ts[k]! < next) k++;
    this.readings += k;
    this.previousRunEndMs = k > 0 ? arrays.ts[k - 1] : previousRunEndMs;
    this.carry = sliceArrays(arrays, k);
    this.from = next;
  }
}

/** A copy of the rows from `k` on (the caller's arrays may be views into buffers it reuses). */
function sliceArrays(samples: SampleArrays, k: number): SampleArrays {
  const out = {} as SampleArrays;
  for (const c of COLUMN_NAMES) {
    const col = samples[c];
    if (col) out[c] = col.slice(k);
  }
  return out;
}

/** End (exclusive) of the slice from `fromMs`: `sliceMs` later, or just past the last reading. */
function sliceEnd(fromMs: number, sliceMs: number, lastMs: number): number {
  return fromMs + sliceMs > lastMs ? lastMs + 1 : fromMs + sliceMs;
}

/** Steps 3 and 4 of a pass, once the window has been analysed. */
export async function writeVehicle(
  ctx: AnalyseContext,
  lease: Lease,
  p: PreparedVehicle,
  analysis: WindowAnalysis,
): Promise<VehicleOutcome> {
  const { handle, queue, workerId } = ctx;
  const store = createAnalysisStore(handle.db);
  const { state, lastMs } = p;
  const windowFrom = p.windowFromMs;
  const cfg = resolveConfig(state.profile.engineFamily);
  const { fresh, readings, resumeFromMs } = analysis;

  const asOfMs = lastMs ?? state.lastReadingMs;
  const history = await store.historyBefore(lease.vehicleId, windowFrom);
  const closed = (r: RunMetrics) => !r.open;
  const runs = [...history.runs, ...fresh.runs].filter(closed);
  const openRunStarts = new Set([...history.runs, ...fresh.runs].filter((r) => r.open).map((r) => r.startMs));
  const days: DayAggregate[] = [...history.days, ...fresh.days];
  const sensorEvents: SensorEvent[] = [...history.sensorEvents, ...fresh.sensorEvents].filter(
    (e) => !openRunStarts.has(e.runStartMs),
  );
  const peer = asOfMs === null ? null : await ctx.peers.forAnalysis(state.profile.engineFamily, asOfMs);
  const derived =
    asOfMs === null
      ? []
      : deriveFindings(
          { runs, days, sensorEvents },
          state.profile,
          { now: asOfMs, peer, serviceEvents: history.serviceEvents },
          cfg,
        );
  const lastClosed = runs.length > 0 ? runs[runs.length - 1]!.endMs : null;

  return handle.db.transaction().execute(async (trx) => {
    if (!(await queue.holds(workerId, lease.vehicleId, trx))) throw new LeaseLostError(lease.vehicleId);
    await store.replaceFrom(trx, lease.vehicleId, windowFrom, fresh);
    if (asOfMs !== null) {
      await syncFindings(trx, {
        vehicleId: lease.vehicleId,
        fleetId: lease.fleetId,
        asOfMs,
        derived,
        quietPeriodMs: cfg.findingStaleDays * DAY_MS,
      });
    }
    await store.recordPass(trx, {
      vehicleId: lease.vehicleId,
      fleetId: lease.fleetId,
      resumeFromMs,
      lastRunEndMs: lastClosed,
      lastReadingMs: asOfMs,
      readings,
    });
    const riskScore = (await refreshVehicleRisk(trx, lease.vehicleId)) ?? 0;
    const finished = await queue.finish(workerId, lease, trx);
    if (finished === 'lost') throw new LeaseLostError(lease.vehicleId);
    return {
      vehicleId: lease.vehicleId,
      fleetId: lease.fleetId,
      readings,
      windowFromMs: windowFrom,
      asOfMs,
      findings: derived.length,
      riskScore,
      queue: finished,
    };
  });
}
