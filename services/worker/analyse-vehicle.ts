import { analyseSamples } from '../analysis/analyse-samples.js';
import { resolveConfig } from '../analysis/config.js';
import type { DayAggregate } from '../analysis/day-aggregates.js';
import { deriveFindings } from '../analysis/derive-findings.js';
import type { RunMetrics } from '../analysis/run-metrics.js';
import { utcDayStartMs, type SampleArrays } from '../analysis/sample-arrays.js';
import type { SensorEvent } from '../analysis/sensor-events.js';
import type { DatabaseHandle } from '../db/database.js';
import { refreshVehicleRisk } from '../db/vehicle-risk.js';
import { createAnalysisStore, type VehicleState, type WindowResults } from './analysis-store.js';
import { syncFindings } from './findings-sync.js';
import type { PeerBaselines } from './peer-baselines.js';
import type { Lease, QueueRepository } from './queue-repository.js';
import { latestReading, readingBefore, readWindow } from './readings-window.js';

const DAY_MS = 86_400_000;
/** Readings are read and analysed in slices of this many days: memory stays bounded by one slice. */
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
function finalPart(r: WindowResults, beforeMs: number): WindowResults {
  return {
    runs: r.runs.filter((x) => x.startMs < beforeMs),
    days: r.days.filter((x) => x.dayStartMs < beforeMs),
    sensorEvents: r.sensorEvents.filter((x) => x.runStartMs < beforeMs),
  };
}

/** What a pass reads before analysing: the window and its first slice of readings. */
export interface PreparedVehicle {
  /** When the preparation began, ms (logged as the pass's start). */
  startedAt: number;
  state: VehicleState;
  windowFromMs: number;
  /** Latest reading in the window, ms; undefined when the window is empty. */
  lastMs: number | undefined;
  /** Last reading before the window, ms (for the gap before its first run). */
  previousRunEndMs: number | undefined;
  /** The first slice's readings (up to WINDOW_SLICE_DAYS), when the window has any. */
  first: { toMs: number; arrays: SampleArrays } | undefined;
}

/**
 * Step 1 and the first read of step 2 of `analyseVehicle`, separated so a worker can read the next
 * leased vehicle's window while it analyses and writes the current one (on a server the two run
 * on different connections, so Postgres and the worker work in parallel).
 */
export async function prepareVehicle(handle: DatabaseHandle, lease: Lease, nowMs: number): Promise<PreparedVehicle> {
  const startedAt = Date.now();
  const store = createAnalysisStore(handle.db);
  const state = await store.vehicleState(lease.vehicleId);
  const cfg = resolveConfig(state.profile.engineFamily);
  const dirtyDay = Number.isFinite(lease.windowFromMs) ? utcDayStartMs(lease.windowFromMs) : Infinity;
  let windowFrom = Math.min(state.resumeFromMs ?? Infinity, dirtyDay);
  if (!Number.isFinite(windowFrom)) windowFrom = utcDayStartMs(state.lastReadingMs ?? nowMs);
  windowFrom = await store.extendOverStoredRuns(lease.vehicleId, windowFrom, cfg.runGapS * 1000);
  const lastMs = await latestReading(handle, lease.vehicleId, windowFrom);
  if (lastMs === undefined) return { startedAt, state, windowFromMs: windowFrom, lastMs, previousRunEndMs: undefined, first: undefined };
  const previousRunEndMs = await readingBefore(handle, lease.vehicleId, windowFrom);
  const toMs = sliceEnd(windowFrom, WINDOW_SLICE_DAYS * DAY_MS, lastMs);
  const arrays = await readWindow(handle, lease.vehicleId, windowFrom, toMs);
  return { startedAt, state, windowFromMs: windowFrom, lastMs, previousRunEndMs, first: { toMs, arrays } };
}

/** End (exclusive) of the slice from `fromMs`: `sliceMs` later, or just past the last reading. */
function sliceEnd(fromMs: number, sliceMs: number, lastMs: number): number {
  return fromMs + sliceMs > lastMs ? lastMs + 1 : fromMs + sliceMs;
}

/**
 * One pass over one leased vehicle:
 * 1. window start: the earlier of its watermark (`resume_from`, the day its open run began)
 *    and the day of the earliest new reading (late or back-filled data), moved back over any
 *    stored run that reaches it;
 * 2. reads the readings from there on as typed arrays, slice by slice, and analyses them
 *    (`analyseSamples`), each slice resuming where the previous one's open run began;
 * 3. re-derives the findings from the stored run/day history plus the new results
 *    (`deriveFindings`, closed runs only: an open run's metrics are provisional) at the
 *    vehicle's analysis time, its latest reading; the engine family's peer baseline and the
 *    vehicle's service events are passed in;
 * 4. in one transaction, if the lease is still held: replaces the derived rows from the window
 *    start on, syncs the findings, records the watermark, refreshes the risk and finishes the
 *    lease. Re-running over the same data writes the same rows.
 */
export async function analyseVehicle(ctx: AnalyseContext, lease: Lease, prepared?: PreparedVehicle): Promise<VehicleOutcome> {
  const { handle, queue, workerId } = ctx;
  const store = createAnalysisStore(handle.db);
  const p = prepared ?? (await prepareVehicle(handle, lease, ctx.nowMs));
  const { state, lastMs } = p;
  const windowFrom = p.windowFromMs;
  const cfg = resolveConfig(state.profile.engineFamily);

  const fresh: WindowResults = { runs: [], days: [], sensorEvents: [] };
  let readings = 0;
  let resumeFromMs: number | null = null;
  if (lastMs !== undefined) {
    let from = windowFrom;
    let previousRunEndMs = p.previousRunEndMs;
    let sliceMs = WINDOW_SLICE_DAYS * DAY_MS;
    let first = p.first;
    for (;;) {
      const last = from + sliceMs > lastMs;
      const toMs = sliceEnd(from, sliceMs, lastMs);
      const arrays = first && first.toMs === toMs ? first.arrays : await readWindow(handle, lease.vehicleId, from, toMs);
      first = undefined;
      const a = analyseSamples({ ...arrays, ...(previousRunEndMs !== undefined ? { previousRunEndMs } : {}), ...(last ? { nowMs: ctx.nowMs } : {}) }, state.profile, cfg);
      const stored = (x: { truncatedStart: boolean }) => !x.truncatedStart;
      if (last) {
        fresh.runs.push(...a.runs.filter(stored));
        fresh.days.push(...a.days);
        fresh.sensorEvents.push(...a.sensorEvents);
        readings += arrays.ts.length;
        resumeFromMs = a.resumeFromMs;
        break;
      }
      const next = a.resumeFromMs ?? from + sliceMs;
      if (next <= from) {
        // One run longer than the slice: read a longer slice rather than make no progress.
        sliceMs *= 2;
        continue;
      }
      const part = finalPart(a, next);
      fresh.runs.push(...part.runs.filter(stored));
      fresh.days.push(...part.days);
      fresh.sensorEvents.push(...part.sensorEvents);
      let k = 0;
      while (k < arrays.ts.length && arrays.ts[k]! < next) k++;
      readings += k;
      previousRunEndMs = k > 0 ? arrays.ts[k - 1] : previousRunEndMs;
      from = next;
    }
  }

  const asOfMs = lastMs ?? state.lastReadingMs;
  const history = await store.historyBefore(lease.vehicleId, windowFrom);
  const closed = (r: RunMetrics) => !r.open;
  const runs = [...history.runs, ...fresh.runs].filter(closed);
  const openRunStarts = new Set([...history.runs, ...fresh.runs].filter((r) => r.open).map((r) => r.startMs));
  const days: DayAggregate[] = [...history.days, ...fresh.days];
  const sensorEvents: SensorEvent[] = [...history.sensorEvents, ...fresh.sensorEvents].filter((e) => !openRunStarts.has(e.runStartMs));
  const peer = asOfMs === null ? null : await ctx.peers.forAnalysis(state.profile.engineFamily, asOfMs);
  const derived = asOfMs === null ? [] : deriveFindings({ runs, days, sensorEvents }, state.profile, { now: asOfMs, peer, serviceEvents: history.serviceEvents }, cfg);
  const lastClosed = runs.length > 0 ? runs[runs.length - 1]!.endMs : null;

  return handle.db.transaction().execute(async (trx) => {
    if (!(await queue.holds(workerId, lease.vehicleId, trx))) throw new LeaseLostError(lease.vehicleId);
    await store.replaceFrom(trx, lease.vehicleId, windowFrom, fresh);
    if (asOfMs !== null) {
      await syncFindings(trx, { vehicleId: lease.vehicleId, fleetId: lease.fleetId, asOfMs, derived, quietPeriodMs: cfg.findingStaleDays * DAY_MS });
    }
    await store.recordPass(trx, {
      vehicleId: lease.vehicleId, fleetId: lease.fleetId, resumeFromMs, lastRunEndMs: lastClosed, lastReadingMs: asOfMs, readings,
    });
    const riskScore = (await refreshVehicleRisk(trx, lease.vehicleId)) ?? 0;
    const finished = await queue.finish(workerId, lease, trx);
    if (finished === 'lost') throw new LeaseLostError(lease.vehicleId);
    return { vehicleId: lease.vehicleId, fleetId: lease.fleetId, readings, windowFromMs: windowFrom, asOfMs, findings: derived.length, riskScore, queue: finished };
  });
}
