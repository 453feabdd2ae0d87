import { sql, type Kysely } from 'kysely';

/**
 * What the analysis worker needs beyond 0001/0002:
 * - `analysis_queue.leased_from`: the start of the window a lease covers. Leasing moves
 *   `dirty_from` here and sets `dirty_from` to +infinity, so an ingest that commits during the
 *   lease records exactly the earliest *new* reading (ingest keeps `least(dirty_from, new)`);
 *   a failed or expired lease folds `leased_from` back into `dirty_from`, so nothing is lost.
 * - `findings.raised_at`: the analysis time (the vehicle's latest reading) of the pass that
 *   first raised the finding, i.e. when the service could first have told a planner.
 */
export async function up(db: Kysely<any>): Promise<void> {
  await sql`ALTER TABLE analysis_queue ADD COLUMN leased_from timestamptz`.execute(db);
  await sql`ALTER TABLE findings ADD COLUMN raised_at timestamptz`.execute(db);
  // The planner's lists: open findings of a vehicle, and a fleet's findings newest first.
  await sql`CREATE INDEX findings_vehicle_status_idx ON findings (vehicle_id, status)`.execute(db);
}
