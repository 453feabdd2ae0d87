import { ApiClient, Uplink } from './api-client.js';
import type { EvaluationService } from './evaluation-service.js';
import { FleetFeed, registerProfiles } from './fleet-feed.js';
import { fleetFindings, FindingsLedger, riskScores, vehicleFindings } from './findings-ledger.js';
import type { MonitorAlarm } from './on-board-monitor.js';
import type { FleetPlan } from './seed-ranges.js';
import { HOUR_MS, DAY_MS } from '../time/durations.js';

/** Requests outstanding at once (gateways and the relay together). */
const MAX_IN_FLIGHT = 4;
/** The stream advances in steps of this much true time, ms. */
const STEP_MS = 60_000;

export interface FleetRunResult {
  ledger: FindingsLedger;
  risk: Map<string, number>;
  readings: number;
  requests: number;
  rejected: number;
  seconds: number;
}

export interface StreamedRunResult extends FleetRunResult {
  /** The on-board-monitor baseline's alarms per vehicle, true time. */
  monitors: Map<string, MonitorAlarm[]>;
}

/** Progress callback: day of the period, readings posted, seconds since the start. */
export type Progress = (p: { day: number; days: number; readings: number; seconds: number }) => void;

/**
 * Streams one fleet through a running service as production does: profiles first, then every
 * vehicle's readings in fleet-wide time order while the service's worker analyses as data
 * arrives. Every `analyseEveryH` hours of data the stream waits for an analysis of what has
 * arrived (POST /v1/analysis/runs?wait=true) and reads the fleet's findings: a production worker
 * keeps up with real time, and this bounds how far it may fall behind a stream that runs many
 * times faster. At the end every vehicle's findings are read (GET /v1/vehicles/{id}/findings).
 */
export async function streamFleet(
  service: EvaluationService,
  plan: FleetPlan,
  analyseEveryH: number,
  progress?: Progress,
): Promise<StreamedRunResult> {
  const started = performance.now();
  const seconds = () => (performance.now() - started) / 1000;
  const gateway = new ApiClient(service.baseUrl, service.ingestKey);
  const planner = new ApiClient(service.baseUrl, service.readKey);
  await registerProfiles(gateway, plan.fleet);
  const feed = new FleetFeed(plan, gateway, new Uplink(MAX_IN_FLIGHT));
  const ledger = new FindingsLedger();
  const endMs = plan.startMs + plan.days * DAY_MS;
  const tickMs = analyseEveryH * HOUR_MS;
  const analyse = async (atMs: number) => {
    await feed.flush();
    await planner.call('POST', '/v1/analysis/runs?wait=true');
    ledger.observe(await fleetFindings(planner), atMs);
  };
  let nextTick = plan.startMs + tickMs;
  let nextDay = plan.startMs + DAY_MS;
  for (let t = plan.startMs + STEP_MS; t <= endMs; t += STEP_MS) {
    await feed.advance(t);
    if (t >= nextTick) {
      await analyse(t);
      nextTick += tickMs;
    }
    if (t >= nextDay) {
      progress?.({
        day: Math.round((t - plan.startMs) / DAY_MS),
        days: plan.days,
        readings: feed.totals.readings,
        seconds: seconds(),
      });
      nextDay += DAY_MS;
    }
  }
  await analyse(endMs);
  ledger.observe(
    await vehicleFindings(
      planner,
      plan.fleet.map((v) => v.vehicleId),
    ),
    endMs,
  );
  const monitors = new Map<string, MonitorAlarm[]>();
  for (const f of feed.vehicles)
    monitors.set(
      f.v.vehicleId,
      f.monitor.alarms.map((a) => ({ ...a, atMs: a.atMs - f.offsetMs })),
    );
  return {
    ledger,
    monitors,
    risk: await riskScores(planner),
    readings: feed.totals.readings,
    requests: feed.totals.requests,
    rejected: feed.totals.rejected,
    seconds: seconds(),
  };
}
