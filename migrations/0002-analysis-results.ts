import { sql, type Kysely } from 'kysely';

/**
 * Derived tables written by the analysis worker and read by the planner API and the weekly
 * report: engine runs, vehicle-days, sensor events, findings, service events, per-vehicle
 * analysis state (risk, watermark), engine-family peer baselines and the report archive.
 * Every table that grows with the fleet has `vehicle_id` first in its primary key (Citus
 * distribution column); peer_baselines and weekly_reports are small reference tables.
 */
export async function up(db: Kysely<any>): Promise<void> {
  await sql`
    CREATE TABLE engine_runs (
      vehicle_id  text NOT NULL,
      start_ts    timestamptz NOT NULL,
      end_ts      timestamptz NOT NULL,
      start_kind  text NOT NULL,
      open        boolean NOT NULL,
      metrics     jsonb NOT NULL,
      PRIMARY KEY (vehicle_id, start_ts)
    )`.execute(db);

  await sql`
    CREATE TABLE vehicle_days (
      vehicle_id  text NOT NULL,
      day         date NOT NULL,
      metrics     jsonb NOT NULL,
      PRIMARY KEY (vehicle_id, day)
    )`.execute(db);

  await sql`
    CREATE TABLE sensor_events (
      vehicle_id  text NOT NULL,
      run_start   timestamptz NOT NULL,
      kind        text NOT NULL,
      event       jsonb NOT NULL,
      PRIMARY KEY (vehicle_id, run_start, kind)
    )`.execute(db);

  await sql`
    CREATE TABLE findings (
      vehicle_id         text NOT NULL,
      finding_id         text NOT NULL,
      fleet_id           text NOT NULL,
      finding_key        text NOT NULL,
      kind               text NOT NULL,
      sub_kind           text,
      severity           text NOT NULL CHECK (severity IN ('advisory', 'warning', 'critical')),
      confidence         real NOT NULL CHECK (confidence BETWEEN 0 AND 1),
      first_seen         timestamptz NOT NULL,
      last_seen          timestamptz NOT NULL,
      status             text NOT NULL DEFAULT 'open' CHECK (status IN ('open', 'acknowledged', 'resolved')),
      summary            text NOT NULL,
      recommended_check  text NOT NULL,
      trouble_code       text,
      metrics            jsonb NOT NULL DEFAULT '{}',
      evidence           jsonb NOT NULL DEFAULT '[]',
      created_at         timestamptz NOT NULL DEFAULT now(),
      updated_at         timestamptz NOT NULL DEFAULT now(),
      acknowledged_at    timestamptz,
      acknowledged_by    text,
      resolved_at        timestamptz,
      resolved_reason    text,
      PRIMARY KEY (vehicle_id, finding_id),
      UNIQUE (vehicle_id, finding_key)
    )`.execute(db);
  await sql`CREATE INDEX findings_id_idx ON findings (finding_id)`.execute(db);
  await sql`CREATE INDEX findings_fleet_status_idx ON findings (fleet_id, status, kind)`.execute(db);

  await sql`
    CREATE TABLE service_events (
      vehicle_id  text NOT NULL,
      event_id    text NOT NULL,
      fleet_id    text NOT NULL,
      kind        text NOT NULL,
      at          timestamptz NOT NULL,
      notes       text,
      recorded_by text,
      created_at  timestamptz NOT NULL DEFAULT now(),
      PRIMARY KEY (vehicle_id, event_id)
    )`.execute(db);

  await sql`
    CREATE TABLE vehicle_analysis (
      vehicle_id         text PRIMARY KEY,
      fleet_id           text NOT NULL,
      risk_score         real NOT NULL DEFAULT 0,
      open_findings      integer NOT NULL DEFAULT 0,
      max_severity       text,
      resume_from        timestamptz,
      last_run_end       timestamptz,
      last_reading_at    timestamptz,
      readings_analysed  bigint NOT NULL DEFAULT 0,
      analysed_at        timestamptz NOT NULL DEFAULT now()
    )`.execute(db);
  await sql`CREATE INDEX vehicle_analysis_risk_idx ON vehicle_analysis (fleet_id, risk_score DESC, vehicle_id)`.execute(
    db,
  );

  await sql`
    CREATE TABLE peer_baselines (
      engine_family  text PRIMARY KEY,
      baseline       jsonb NOT NULL,
      vehicles       integer NOT NULL,
      updated_at     timestamptz NOT NULL DEFAULT now()
    )`.execute(db);

  await sql`
    CREATE TABLE weekly_reports (
      fleet_id      text NOT NULL,
      iso_week      text NOT NULL,
      generated_at  timestamptz NOT NULL DEFAULT now(),
      report_json   jsonb NOT NULL,
      report_html   text NOT NULL,
      worklist_csv  text NOT NULL,
      PRIMARY KEY (fleet_id, iso_week)
    )`.execute(db);
}
