import { sql, type Kysely } from 'kysely';

/**
 * Fleets, vehicles, readings (range-partitioned by month), API keys, ingest audit and the
 * analysis queue.
 *
 * Scale-out rule: every table that grows with the fleet has `vehicle_id` in its primary key and
 * in every unique constraint, and no foreign key crosses vehicles, so the schema can be
 * distributed by `vehicle_id` on Citus unchanged (fleets and api_keys become reference tables).
 */
export async function up(db: Kysely<any>): Promise<void> {
  await sql`
    CREATE TABLE fleets (
      fleet_id    text PRIMARY KEY CHECK (fleet_id ~ '^[A-Za-z0-9][A-Za-z0-9_.-]{0,63}$'),
      name        text NOT NULL,
      time_zone   text NOT NULL DEFAULT 'UTC',
      created_at  timestamptz NOT NULL DEFAULT now()
    )`.execute(db);

  await sql`
    CREATE TABLE vehicles (
      vehicle_id         text PRIMARY KEY,
      fleet_id           text NOT NULL,
      engine_family      text NOT NULL DEFAULT 'unknown',
      thermostat_open_c  real NOT NULL DEFAULT 88 CHECK (thermostat_open_c BETWEEN 60 AND 110),
      cap_pressure_kpa   real NOT NULL DEFAULT 100 CHECK (cap_pressure_kpa BETWEEN 0 AND 250),
      glycol_percent     real NOT NULL DEFAULT 50 CHECK (glycol_percent BETWEEN 0 AND 70),
      label              text,
      created_at         timestamptz NOT NULL DEFAULT now(),
      updated_at         timestamptz NOT NULL DEFAULT now()
    )`.execute(db);
  await sql`CREATE INDEX vehicles_fleet_idx ON vehicles (fleet_id, vehicle_id)`.execute(db);

  // Partitions are created by the service (see services/db/partitions.ts), ahead of time and
  // for every month a batch touches, including back-filled old months.
  await sql`
    CREATE TABLE readings (
      vehicle_id  text NOT NULL,
      ts          timestamptz NOT NULL,
      coolant_c   real NOT NULL,
      ambient_c   real,
      speed_kph   real,
      rpm         real,
      PRIMARY KEY (vehicle_id, ts)
    ) PARTITION BY RANGE (ts)`.execute(db);

  await sql`
    CREATE TABLE api_keys (
      key_id       text PRIMARY KEY,
      fleet_id     text,
      scopes       text[] NOT NULL,
      secret_hash  text NOT NULL,
      label        text,
      created_at   timestamptz NOT NULL DEFAULT now(),
      revoked_at   timestamptz,
      CHECK (fleet_id IS NOT NULL OR 'admin' = ANY (scopes))
    )`.execute(db);

  await sql`
    CREATE TABLE ingest_audit (
      audit_id      bigserial PRIMARY KEY,
      key_id        text NOT NULL,
      fleet_id      text,
      received_at   timestamptz NOT NULL DEFAULT now(),
      content_type  text NOT NULL,
      body_bytes    bigint NOT NULL,
      accepted      integer NOT NULL,
      duplicates    integer NOT NULL,
      rejected      integer NOT NULL,
      vehicles      integer NOT NULL,
      duration_ms   integer NOT NULL
    )`.execute(db);
  await sql`CREATE INDEX ingest_audit_fleet_idx ON ingest_audit (fleet_id, received_at)`.execute(db);

  // One row per vehicle with unanalysed data. `generation` increases on every enqueue so a worker
  // finishing a lease removes the row only if no new data arrived meanwhile.
  await sql`
    CREATE TABLE analysis_queue (
      vehicle_id    text PRIMARY KEY,
      fleet_id      text NOT NULL,
      dirty_from    timestamptz NOT NULL,
      generation    bigint NOT NULL DEFAULT 1,
      enqueued_at   timestamptz NOT NULL DEFAULT now(),
      run_after     timestamptz NOT NULL DEFAULT now(),
      locked_by     text,
      locked_until  timestamptz,
      attempts      integer NOT NULL DEFAULT 0,
      last_error    text
    )`.execute(db);
  await sql`CREATE INDEX analysis_queue_ready_idx ON analysis_queue (run_after)`.execute(db);
}
