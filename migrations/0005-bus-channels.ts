import { sql, type Kysely } from 'kysely';

/**
 * What the vehicle bus adds (issue 18):
 * - three optional channels on `readings`: barometric pressure (SAE J1939-71 SPN 108 / SAE J1979
 *   PID 0x33), engine coolant level (SPN 111) and coolant pressure (SPN 109). Nullable columns
 *   without a default: a catalogue change only, no partition is rewritten.
 * - `vehicles.sample_period_s`: the period bus frames are decimated to (default 10 s), a whole
 *   number of seconds.
 * - `bus_slots`: the frame ingest's alignment state, one row per vehicle and sample period
 *   ("slot") with the slot's earliest and latest sample of each channel in a compact binary record (services/db/bus-slot-writes.ts: no number is formatted or parsed as text)
 *   (services/bus-decoding/vehicle-slots.ts gives its layout). The ingest merges into it under a
 *   per-vehicle lock, so frames of one vehicle may arrive in any requests in any order. Keyed by
 *   vehicle first (distributes by vehicle_id); the period is in the key so a changed period
 *   starts new slots instead of merging into old ones.
 */
export async function up(db: Kysely<any>): Promise<void> {
  await sql`
    ALTER TABLE readings
      ADD COLUMN barometric_kpa real,
      ADD COLUMN coolant_level_pct real,
      ADD COLUMN coolant_pressure_kpa real`.execute(db);
  await sql`ALTER TABLE vehicles ADD COLUMN sample_period_s integer NOT NULL DEFAULT 10 CHECK (sample_period_s BETWEEN 1 AND 3600)`.execute(
    db,
  );
  await sql`
    CREATE TABLE bus_slots (
      vehicle_id  text NOT NULL,
      period_s    integer NOT NULL,
      slot_ms     double precision NOT NULL,
      rec         bytea NOT NULL,
      updated_at  timestamptz NOT NULL DEFAULT now(),
      PRIMARY KEY (vehicle_id, period_s, slot_ms)
    )`.execute(db);
}
