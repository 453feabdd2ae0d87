import { sql, type Kysely } from 'kysely';

/**
 * A vehicle's repair history as planners keep it:
 * - `service_events.resolved_findings`: the ids of the findings the event resolved when it was
 *   recorded (or last corrected), so the history says what each repair closed;
 * - `service_events.finding_ids`: findings an inspection looked at (kind
 *   inspected-no-fault-found), which it does not resolve;
 * - `updated_at`, `deleted_at`, `deleted_by`: a wrong entry is corrected or deleted (soft, so the
 *   audit in planner_actions still points at it); the worker ignores deleted events;
 * - `findings.resolved_by_event`: the event that resolved a finding, so correcting or deleting
 *   the event reopens exactly those.
 * Existing events are linked to the findings resolved at their time with their kind's reason.
 */
export async function up(db: Kysely<any>): Promise<void> {
  await sql`ALTER TABLE service_events ADD COLUMN resolved_findings jsonb NOT NULL DEFAULT '[]'`.execute(db);
  await sql`ALTER TABLE service_events ADD COLUMN finding_ids jsonb NOT NULL DEFAULT '[]'`.execute(db);
  await sql`ALTER TABLE service_events ADD COLUMN updated_at timestamptz`.execute(db);
  await sql`ALTER TABLE service_events ADD COLUMN deleted_at timestamptz`.execute(db);
  await sql`ALTER TABLE service_events ADD COLUMN deleted_by text`.execute(db);
  await sql`ALTER TABLE findings ADD COLUMN resolved_by_event text`.execute(db);
  await sql`CREATE INDEX service_events_vehicle_at_idx ON service_events (vehicle_id, at DESC, event_id)`.execute(db);

  await sql`
    UPDATE findings f SET resolved_by_event = e.event_id
    FROM service_events e
    WHERE e.vehicle_id = f.vehicle_id AND f.resolved_reason = 'service-event:' || e.kind AND f.resolved_at = e.at`.execute(
    db,
  );
  await sql`
    UPDATE service_events e SET resolved_findings = coalesce((
      SELECT jsonb_agg(f.finding_id ORDER BY f.finding_id) FROM findings f
      WHERE f.vehicle_id = e.vehicle_id AND f.resolved_by_event = e.event_id), '[]'::jsonb)`.execute(db);
}
