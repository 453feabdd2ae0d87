import { sql, type Kysely } from 'kysely';
import { resolveConfig } from '../analysis/config.js';
import type { Severity } from '../analysis/findings/finding.js';
import { riskScore } from '../analysis/risk-score.js';
import type { Database } from './schema.js';

const SEVERITY_RANK: Record<Severity, number> = { advisory: 1, warning: 2, critical: 3 };

/**
 * Recomputes a vehicle's risk, open-finding count and highest open severity from its stored
 * `open` findings (acknowledged and resolved ones do not count, as in `riskScore`), at the
 * vehicle's analysis time (its latest reading), and stores them in vehicle_analysis. Called by
 * the worker after each pass and by the planner actions that change a finding's status.
 */
export async function refreshVehicleRisk(trx: Kysely<Database>, vehicleId: string): Promise<number | undefined> {
  const state = await trx.selectFrom('vehicle_analysis as a').innerJoin('vehicles as v', 'v.vehicle_id', 'a.vehicle_id')
    .select(['a.last_reading_at', 'v.engine_family']).where('a.vehicle_id', '=', vehicleId).executeTakeFirst();
  if (!state) return undefined;
  const open = await trx.selectFrom('findings').select(['severity', 'confidence', 'last_seen'])
    .where('vehicle_id', '=', vehicleId).where('status', '=', 'open').execute();
  const asOf = state.last_reading_at?.getTime() ?? 0;
  const risk = riskScore(open.map((f) => ({ severity: f.severity, confidence: f.confidence, lastSeen: f.last_seen.getTime() })), asOf,
    resolveConfig(state.engine_family).riskHalfLifeDays);
  let max: Severity | null = null;
  for (const f of open) if (max === null || SEVERITY_RANK[f.severity] > SEVERITY_RANK[max]) max = f.severity;
  await sql`update vehicle_analysis set risk_score = ${risk}, open_findings = ${open.length}, max_severity = ${max} where vehicle_id = ${vehicleId}`.execute(trx);
  return risk;
}
