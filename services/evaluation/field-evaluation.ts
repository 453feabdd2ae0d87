import { EXPECTED_FINDINGS } from './expected-findings.js';
import type { SimVehicle } from '../simulator/index.js';
import type { ServiceFactory } from './evaluation-service.js';
import { faultVisible } from './fault-visibility.js';
import { MONITOR_EXPECTED, type MonitorAlarm } from './on-board-monitor.js';
import { onePassFleet } from './one-pass-run.js';
import { scoreRun, type Cohort, type RunScore, type ScoredVehicle } from './scoring.js';
import type { FleetPlan } from './seed-ranges.js';
import { streamFleet, type FleetRunResult, type Progress } from './streamed-run.js';

/** The cohort a healthy vehicle is counted in. */
export function cohortOf(vehicle: SimVehicle): Cohort {
  if (vehicle.climate === 'cold') return 'cold climate';
  if (vehicle.climate === 'hot' && (vehicle.duty === 'long-haul' || vehicle.duty === 'bus')) return 'hot heavy duty';
  return 'others';
}

/** What the evaluation measured. */
export interface FieldEvaluation {
  streamed: RunScore;
  onePass: RunScore | null;
  baseline: RunScore;
  fleets: Array<{
    seed: number;
    fleetId: string;
    startDate: string;
    days: number;
    vehicles: number;
    readings: number;
    requests: number;
    /** Readings the service rejected (streamed and one pass): 0 when the simulator and the API agree. */
    rejected: number;
    streamedSeconds: number;
    onePassSeconds: number | null;
  }>;
  seconds: number;
}

export interface EvaluationOptions {
  plans: readonly FleetPlan[];
  services: ServiceFactory;
  /** Hours of data between the analyses the stream waits for. */
  analyseEveryH: number;
  /** Also run each fleet as one analysis after all data has arrived (default true). */
  onePass?: boolean;
  /** Progress lines (stderr in the command). */
  say?: (line: string) => void;
}

const MONITOR_RISK: Readonly<Record<MonitorAlarm['severity'], number>> = { warning: 1, critical: 2 };

function scored(plan: FleetPlan, visible: Map<string, boolean>, run: FleetRunResult): ScoredVehicle[] {
  return plan.fleet.map((v) => ({
    vehicleId: v.vehicleId,
    cohort: cohortOf(v),
    fault: truthOf(v, visible),
    alarms: run.ledger.alarmsOf(v.vehicleId),
    riskScore: run.risk.get(v.vehicleId) ?? 0,
  }));
}

function truthOf(vehicle: SimVehicle, visible: Map<string, boolean>): ScoredVehicle['fault'] {
  const f = vehicle.faults[0];
  return f ? { kind: f.kind, onsetMs: f.onsetMs, visible: visible.get(vehicle.vehicleId) ?? true } : null;
}

/**
 * Runs every planned fleet streamed (and, unless turned off, in one pass) through fresh services,
 * with the on-board-monitor baseline on the same readings, and scores all three.
 * @example await evaluateFleets({ plans: [planForSeed(5000, { vehicles: 24, days: 35 })], services, analyseEveryH: 6 })
 */
export async function evaluateFleets(o: EvaluationOptions): Promise<FieldEvaluation> {
  const started = performance.now();
  const say = o.say ?? (() => undefined);
  const streamed: ScoredVehicle[][] = [];
  const onePass: ScoredVehicle[][] = [];
  const baseline: ScoredVehicle[][] = [];
  const fleets: FieldEvaluation['fleets'] = [];
  for (const [index, plan] of o.plans.entries()) {
    const label = `fleet ${index + 1}/${o.plans.length} (seed ${plan.seed}, ${plan.fleet.length} vehicles from ${new Date(plan.startMs).toISOString().slice(0, 10)})`;
    const visible = new Map(
      plan.fleet.filter((v) => v.faults.length > 0).map((v) => [v.vehicleId, faultVisible(v, plan)]),
    );
    const progress: Progress = (p) =>
      say(
        `evaluate: ${label} streamed: day ${p.day}/${p.days}, ${p.readings.toLocaleString('en-US')} readings, ${Math.round(p.readings / p.seconds).toLocaleString('en-US')} readings/s`,
      );
    const service = await o.services({ fleetId: plan.fleetId, worker: true });
    let s;
    try {
      s = await streamFleet(service, plan, o.analyseEveryH, progress);
    } finally {
      await service.stop();
    }
    say(
      `evaluate: ${label} streamed: ${s.readings.toLocaleString('en-US')} readings in ${s.requests.toLocaleString('en-US')} requests, ${s.seconds.toFixed(1)} s, ${s.ledger.size} findings seen`,
    );
    streamed.push(scored(plan, visible, s));
    baseline.push(
      plan.fleet.map((v) => {
        const alarms = s.monitors.get(v.vehicleId) ?? [];
        return {
          vehicleId: v.vehicleId,
          cohort: cohortOf(v),
          fault: truthOf(v, visible),
          alarms: alarms.map((a, i) => ({
            id: `${v.vehicleId}:${i}`,
            kind: a.kind,
            maxSeverity: a.severity,
            seenAtMs: a.atMs,
            datedMs: a.atMs,
          })),
          riskScore: alarms.reduce((sum, a) => sum + MONITOR_RISK[a.severity], 0),
        };
      }),
    );
    let onePassSeconds: number | null = null;
    let rejected = s.rejected;
    if (o.onePass !== false) {
      const batch = await o.services({ fleetId: plan.fleetId, worker: false });
      let b;
      try {
        b = await onePassFleet(batch, plan);
      } finally {
        await batch.stop();
      }
      onePassSeconds = b.seconds;
      rejected += b.rejected;
      say(`evaluate: ${label} one pass: ${b.seconds.toFixed(1)} s, ${b.ledger.size} findings`);
      onePass.push(scored(plan, visible, b));
    }
    fleets.push({
      seed: plan.seed,
      fleetId: plan.fleetId,
      startDate: new Date(plan.startMs).toISOString().slice(0, 10),
      days: plan.days,
      vehicles: plan.fleet.length,
      readings: s.readings,
      requests: s.requests,
      rejected,
      streamedSeconds: s.seconds,
      onePassSeconds,
    });
  }
  return {
    streamed: scoreRun(streamed, EXPECTED_FINDINGS),
    onePass: o.onePass !== false ? scoreRun(onePass, EXPECTED_FINDINGS) : null,
    baseline: scoreRun(baseline, MONITOR_EXPECTED),
    fleets,
    seconds: (performance.now() - started) / 1000,
  };
}
