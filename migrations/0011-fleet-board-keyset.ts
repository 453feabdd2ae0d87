import { sql, type Kysely } from 'kysely';

/**
 * The web view's fleet page (`GET /v1/fleet/vehicles`) pages by cursor: each of its sorts reads
 * one index range of the fleet's vehicles at risk from the cursor's key on, instead of sorting and
 * skipping the whole filtered set.
 * - `open_since_ms`: the earliest onset (first_seen) of the vehicle's unresolved findings, epoch
 *   ms (null: none), kept beside the brief by the code that refreshes it, so "since" is a column
 *   an index holds rather than a minimum over every vehicle's JSON brief per request;
 * - partial indexes over the vehicles at risk (`open_findings > 0`), one per sort, each ending in
 *   the vehicle id (the unique tiebreak), every column ascending (risk negated), so that the
 *   cursor's key is one row comparison the index starts at; a sort's `desc` is the exact reverse
 *   of its `asc`, the same index scanned backwards. The depot sort's index is on `vehicles` (the
 *   depot is the vehicle's), with the vehicles at risk looked up beside it.
 */
/** Fills `open_since_ms` of the existing rows from their unresolved findings (exported for its test). */
export async function fillOpenSinceMs(db: Kysely<any>): Promise<void> {
  await sql`
    UPDATE vehicle_analysis a SET open_since_ms = s.since_ms
    FROM (
      SELECT vehicle_id, floor(extract(epoch from min(first_seen)) * 1000)::float8 AS since_ms
      FROM findings WHERE status <> 'resolved' GROUP BY vehicle_id
    ) s
    WHERE s.vehicle_id = a.vehicle_id`.execute(db);
}

export async function up(db: Kysely<any>): Promise<void> {
  await sql`ALTER TABLE vehicle_analysis ADD COLUMN open_since_ms double precision`.execute(db);
  await fillOpenSinceMs(db);
  // Risk negated: "highest risk first" ascending like the rest of each order (services/db/fleet-board-repository.ts).
  await sql`
    CREATE INDEX vehicle_analysis_board_risk_idx ON vehicle_analysis (fleet_id, (-risk_score), vehicle_id)
    WHERE open_findings > 0`.execute(db);
  await sql`
    CREATE INDEX vehicle_analysis_board_priority_idx ON vehicle_analysis
      (fleet_id, ((CASE max_severity WHEN 'critical' THEN 0 WHEN 'warning' THEN 1 ELSE 2 END)::float8), (-risk_score), vehicle_id)
    WHERE open_findings > 0`.execute(db);
  await sql`
    CREATE INDEX vehicle_analysis_board_since_idx ON vehicle_analysis (fleet_id, open_since_ms, (-risk_score), vehicle_id)
    WHERE open_findings > 0`.execute(db);
  await sql`
    CREATE INDEX vehicle_analysis_board_vehicle_idx ON vehicle_analysis (fleet_id, vehicle_id)
    WHERE open_findings > 0`.execute(db);
  await sql`
    CREATE INDEX vehicles_board_depot_idx ON vehicles (fleet_id, ((depot IS NULL)::int::float8), (coalesce(depot, '')), vehicle_id)`.execute(
    db,
  );
}
