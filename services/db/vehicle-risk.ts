import { sql, type Kysely, type RawBuilder } from 'kysely';
import { resolveConfig } from '../analysis/config.js';
import type { Severity } from '../analysis/findings/finding.js';
import { riskScore } from '../analysis/risk-score.js';
import type { Database } from './schema.js';

const SEVERITY_RANK: Record<Severity, number> = { advisory: 1, warning: 2, critical: 3 };

/** One open finding as the at-risk list shows it (vehicle_analysis.open_findings_brief, migration 0004). */
export interface FindingBriefView {
  id: string;
  kind: string;
  severity: Severity;
  confidence: number;
  /** ISO 8601. */
  firstSeen: string;
  lastSeen: string;
  summary: string;
  recommendedCheck: string;
  troubleCode: string | null;
  /** open, acknowledged or deferred (migrations/0006; older briefs lack it until refreshed). */
  status?: 'open' | 'acknowledged' | 'deferred';
  deferredUntil?: string | null;
}

/** ISO 8601 in UTC with milliseconds, as Date.prototype.toISOString prints it. */
const isoText = (column: string) => sql.raw(`to_char(f.${column} AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"')`);

/** The brief of the unresolved findings of the vehicle_analysis row aliased `a`, most severe first. */
const openFindingsBrief = sql`coalesce((
      select jsonb_agg(jsonb_build_object(
               'id', f.finding_id, 'kind', f.kind, 'severity', f.severity, 'confidence', f.confidence,
               'firstSeen', ${isoText('first_seen')}, 'lastSeen', ${isoText('last_seen')},
               'summary', f.summary, 'recommendedCheck', f.recommended_check, 'troubleCode', f.trouble_code,
               'status', f.status, 'deferredUntil', case when f.deferred_until is null then null else ${isoText('deferred_until')} end)
               order by case f.severity when 'critical' then 0 when 'warning' then 1 else 2 end, f.confidence desc, f.finding_id)
      from findings f where f.vehicle_id = a.vehicle_id and f.status <> 'resolved'), '[]'::jsonb)`;

/** The earliest onset of the unresolved findings of the row aliased `a`, epoch ms (null: none): the fleet page's "since" (migration 0011). */
const openSinceMs = sql`(select floor(extract(epoch from min(f.first_seen)) * 1000)::float8
      from findings f where f.vehicle_id = a.vehicle_id and f.status <> 'resolved')`;

/**
 * Rebuilds `open_findings_brief` (and `open_since_ms`) of the vehicle_analysis rows (alias `a`) matching `where` from
 * their unresolved findings, in one statement.
 */
export async function refreshOpenFindingsBrief(trx: Kysely<Database>, where: RawBuilder<unknown>): Promise<void> {
  await sql`update vehicle_analysis a set open_findings_brief = ${openFindingsBrief}, open_since_ms = ${openSinceMs} where ${where}`.execute(
    trx,
  );
}

/**
 * Recomputes a vehicle's risk, unresolved-finding count, highest unresolved severity and the
 * brief of its unresolved findings from its stored findings that are open, acknowledged or
 * deferred (a planner having seen or postponed a finding repairs nothing; resolved ones do not
 * count, as in `riskScore`), at the vehicle's analysis time (its latest reading), and stores them in
 * vehicle_analysis, where the at-risk list reads them without touching findings. Called by the
 * worker after each pass and by the planner actions that change a finding's status.
 */
export async function refreshVehicleRisk(trx: Kysely<Database>, vehicleId: string): Promise<number | undefined> {
  // Two statements, not four (the worker runs this once per vehicle): the state with its open
  // findings (one row with null findings columns when there are none), then one update of the
  // risk and the brief.
  const rows = await sql<{
    last_reading_at: Date | null;
    engine_family: string;
    severity: Severity | null;
    confidence: number | null;
    last_seen: Date | null;
  }>`
    select a.last_reading_at, v.engine_family, f.severity, f.confidence, f.last_seen
    from vehicle_analysis a join vehicles v on v.vehicle_id = a.vehicle_id
    left join findings f on f.vehicle_id = a.vehicle_id and f.status <> 'resolved'
    where a.vehicle_id = ${vehicleId}
    order by f.finding_id`.execute(trx);
  const state = rows.rows[0];
  if (!state) return undefined;
  const open = rows.rows.flatMap((f) =>
    f.severity === null ? [] : [{ severity: f.severity, confidence: f.confidence!, lastSeen: f.last_seen!.getTime() }],
  );
  const asOf = state.last_reading_at?.getTime() ?? 0;
  const risk = riskScore(open, asOf, resolveConfig(state.engine_family).riskHalfLifeDays);
  let max: Severity | null = null;
  for (const f of open) if (max === null || SEVERITY_RANK[f.severity] > SEVERITY_RANK[max]) max = f.severity;
  await sql`
    update vehicle_analysis a set risk_score = ${risk}, open_findings = ${open.length}, max_severity = ${max}, open_findings_brief = ${openFindingsBrief},
      open_since_ms = ${openSinceMs}
    where a.vehicle_id = ${vehicleId}`.execute(trx);
  return risk;
}
