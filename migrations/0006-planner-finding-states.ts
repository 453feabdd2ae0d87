import { sql, type Kysely } from 'kysely';

/**
 * The planner's finding states and the audit of planner actions:
 * - `findings.status` gains `deferred` (work postponed until `deferred_until`, with a reason).
 *   Acknowledged and deferred findings are unresolved: they keep counting for risk and stay in
 *   the at-risk list (before, acknowledging took a vehicle out of it while nothing was repaired).
 * - `planner_actions`: one row per planner action on a finding or a service event (acknowledge,
 *   defer, reopen, correct, delete), with the key that did it and the state before and after.
 *   `vehicle_id` leads the primary key (Citus distribution column, as every growing table).
 * - `vehicle_analysis.open_findings` / `max_severity` / `open_findings_brief` now cover every
 *   unresolved finding; existing rows are refilled here (risk_score follows at the vehicle's
 *   next analysis pass or planner action, since the risk formula lives in app code).
 */
export async function up(db: Kysely<any>): Promise<void> {
  await sql`ALTER TABLE findings DROP CONSTRAINT IF EXISTS findings_status_check`.execute(db);
  await sql`ALTER TABLE findings ADD CONSTRAINT findings_status_check CHECK (status IN ('open', 'acknowledged', 'deferred', 'resolved'))`.execute(
    db,
  );
  await sql`ALTER TABLE findings ADD COLUMN deferred_until timestamptz`.execute(db);
  await sql`ALTER TABLE findings ADD COLUMN deferred_reason text`.execute(db);
  await sql`ALTER TABLE findings ADD COLUMN deferred_by text`.execute(db);

  await sql`
    CREATE TABLE planner_actions (
      vehicle_id  text NOT NULL,
      action_id   text NOT NULL,
      fleet_id    text NOT NULL,
      subject     text NOT NULL CHECK (subject IN ('finding', 'service-event')),
      subject_id  text NOT NULL,
      action      text NOT NULL,
      key_id      text NOT NULL,
      at          timestamptz NOT NULL DEFAULT now(),
      before      jsonb,
      after       jsonb,
      PRIMARY KEY (vehicle_id, action_id)
    )`.execute(db);
  await sql`CREATE INDEX planner_actions_subject_idx ON planner_actions (vehicle_id, subject_id, at)`.execute(db);

  await sql`
    UPDATE vehicle_analysis a SET open_findings = coalesce(b.n, 0), max_severity = b.max_severity, open_findings_brief = coalesce(b.brief, '[]'::jsonb)
    FROM (
      SELECT v.vehicle_id, count(f.finding_id)::int AS n,
             (array_agg(f.severity ORDER BY CASE f.severity WHEN 'critical' THEN 0 WHEN 'warning' THEN 1 ELSE 2 END))[1] AS max_severity,
             jsonb_agg(jsonb_build_object(
               'id', f.finding_id, 'kind', f.kind, 'severity', f.severity, 'confidence', f.confidence, 'status', f.status,
               'firstSeen', to_char(f.first_seen AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"'),
               'lastSeen', to_char(f.last_seen AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"'),
               'summary', f.summary, 'recommendedCheck', f.recommended_check, 'troubleCode', f.trouble_code, 'deferredUntil', null)
               ORDER BY CASE f.severity WHEN 'critical' THEN 0 WHEN 'warning' THEN 1 ELSE 2 END, f.confidence DESC, f.finding_id)
               FILTER (WHERE f.finding_id IS NOT NULL) AS brief
      FROM vehicle_analysis v LEFT JOIN findings f ON f.vehicle_id = v.vehicle_id AND f.status <> 'resolved'
      GROUP BY v.vehicle_id
    ) b
    WHERE b.vehicle_id = a.vehicle_id`.execute(db);
}
