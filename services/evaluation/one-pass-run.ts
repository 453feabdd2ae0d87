import { NdjsonEncoder, simulateVehicle } from '../simulator/index.js';
import { ApiClient, type IngestReply } from './api-client.js';
import type { EvaluationService } from './evaluation-service.js';
import { registerProfiles } from './fleet-feed.js';
import { FindingsLedger, riskScores, vehicleFindings } from './findings-ledger.js';
import type { FleetPlan } from './seed-ranges.js';
import type { FleetRunResult } from './streamed-run.js';
import { DAY_MS } from '../time/durations.js';

/** Lines per NDJSON body when the whole history is posted at once. */
const BODY_LINES = 100_000;

/**
 * The same fleet's data posted whole (vehicle by vehicle, the service's worker off), then
 * analysed once (POST /v1/analysis/runs?wait=true). A finding counts as seen from the date its
 * evidence gives it (firstSeen): that is what a planner reading the result would take it for.
 */
export async function onePassFleet(service: EvaluationService, plan: FleetPlan): Promise<FleetRunResult> {
  const started = performance.now();
  const gateway = new ApiClient(service.baseUrl, service.ingestKey);
  const planner = new ApiClient(service.baseUrl, service.readKey);
  await registerProfiles(gateway, plan.fleet);
  let readings = 0;
  let requests = 0;
  let rejected = 0;
  const post = async (parts: Buffer[]) => {
    const r = await gateway.call<IngestReply>('POST', '/v1/readings', Buffer.concat(parts), 'application/x-ndjson');
    requests++;
    rejected += r.rejected.length;
  };
  for (const v of plan.fleet) {
    const encoder = new NdjsonEncoder(v.vehicleId);
    let parts: Buffer[] = [];
    let lines = 0;
    for (const c of simulateVehicle(v, { startMs: plan.startMs, days: plan.days, seed: plan.seed })) {
      parts.push(encoder.encode(c));
      lines += c.length;
      readings += c.length;
      if (lines >= BODY_LINES) {
        await post(parts);
        parts = [];
        lines = 0;
      }
    }
    if (lines > 0) await post(parts);
  }
  await planner.call('POST', '/v1/analysis/runs?wait=true');
  const ledger = new FindingsLedger();
  ledger.observe(
    await vehicleFindings(
      planner,
      plan.fleet.map((v) => v.vehicleId),
    ),
    plan.startMs + plan.days * DAY_MS,
    true,
  );
  return {
    ledger,
    risk: await riskScores(planner),
    readings,
    requests,
    rejected,
    seconds: (performance.now() - started) / 1000,
  };
}
