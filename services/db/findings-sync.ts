import { sql, type Kysely } from 'kysely';
import type { Finding } from '../analysis/findings/finding.js';
import { EVIDENCE_STOPPED, SUPERSEDED } from './finding-resolutions.js';
import type { Database } from './schema.js';

export { EVIDENCE_STOPPED };

export interface SyncInput {
  vehicleId: string;
  fleetId: string;
  /** Analysis time: the vehicle's latest reading, ms. */
  asOfMs: number;
  derived: readonly Finding[];
  /** A finding no longer derived resolves itself once its last evidence is this old, ms. */
  quietPeriodMs: number;
}

/**
 * Brings the stored findings of a vehicle in line with a pass's derived findings:
 * - ends deferrals whose date has passed;
 * - upserts each by (vehicle_id, finding_key), keeping id, status and acknowledgement; a
 *   finding that resolved itself (or was superseded) comes back `open` if derived again (a
 *   finding resolved by a service event stays resolved); rows whose content is unchanged are not touched, so a
 *   re-run writes nothing;
 * - resolves (`evidence-stopped`, at the analysis time) unresolved findings that were
 *   not derived and whose last evidence is older than the quiet period. One not derived but
 *   with recent evidence stays as it is: a change-point that wavers does not flap the status.
 */
export async function syncFindings(trx: Kysely<Database>, input: SyncInput): Promise<void> {
  const { vehicleId, asOfMs } = input;
  const asOf = sql`to_timestamp(${asOfMs}::float8 / 1000)`;
  // Closed by the analysis itself (quiet evidence, or a withdrawn baseline) and derived again: open again.
  const reopen = sql`(findings.status = 'resolved' and findings.resolved_reason in (${EVIDENCE_STOPPED}, ${SUPERSEDED}))`;
  const keys = input.derived.map((f) => f.key);
  // A deferral ends on its date (wall clock: the planner's calendar, not the readings' time):
  // the finding goes back to acknowledged if it had been, else open.
  await sql`
    update findings set status = case when acknowledged_at is not null then 'acknowledged' else 'open' end,
                        deferred_until = null, deferred_reason = null, deferred_by = null, updated_at = now()
    where vehicle_id = ${vehicleId} and status = 'deferred' and deferred_until <= now()`.execute(trx);
  // One statement: the upsert as a data-modifying CTE (it runs though nothing reads it) and the
  // resolving update touch disjoint rows (derived keys vs. keys not derived).
  await sql`
    with upserted as (
      insert into findings (vehicle_id, finding_id, fleet_id, finding_key, kind, sub_kind, severity, confidence, first_seen, last_seen,
                            summary, recommended_check, trouble_code, metrics, evidence, raised_at)
      select ${vehicleId}, gen_random_uuid()::text, ${input.fleetId}, f->>'key', f->>'kind', f->>'subKind', f->>'severity', (f->>'confidence')::real,
             to_timestamp((f->>'firstSeen')::float8 / 1000), to_timestamp((f->>'lastSeen')::float8 / 1000),
             f->>'summary', f->>'recommendedCheck', f->>'troubleCode', f->'metrics', f->'evidence', ${asOf}
      from jsonb_array_elements(${JSON.stringify(input.derived)}::jsonb) f
      on conflict (vehicle_id, finding_key) do update set
        kind = excluded.kind, sub_kind = excluded.sub_kind, severity = excluded.severity, confidence = excluded.confidence,
        first_seen = excluded.first_seen, last_seen = excluded.last_seen, summary = excluded.summary,
        recommended_check = excluded.recommended_check, trouble_code = excluded.trouble_code,
        metrics = excluded.metrics, evidence = excluded.evidence, updated_at = now(),
        status = case when ${reopen} then 'open' else findings.status end,
        resolved_at = case when ${reopen} then null else findings.resolved_at end,
        resolved_reason = case when ${reopen} then null else findings.resolved_reason end
      where ${reopen}
         or (findings.kind, findings.sub_kind, findings.severity, findings.confidence, findings.first_seen, findings.last_seen, findings.summary,
             findings.recommended_check, findings.trouble_code, findings.metrics, findings.evidence)
            is distinct from
            (excluded.kind, excluded.sub_kind, excluded.severity, excluded.confidence, excluded.first_seen, excluded.last_seen, excluded.summary,
             excluded.recommended_check, excluded.trouble_code, excluded.metrics, excluded.evidence)
    )
    update findings set status = 'resolved', resolved_reason = ${EVIDENCE_STOPPED}, resolved_at = ${asOf}, updated_at = now()
    where vehicle_id = ${vehicleId} and status in ('open', 'acknowledged', 'deferred')
      and not (finding_key = any(${keys}::text[]))
      and last_seen < to_timestamp(${asOfMs - input.quietPeriodMs}::float8 / 1000)`.execute(trx);
}
