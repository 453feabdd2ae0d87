import { sql, type Kysely } from 'kysely';

/**
 * Where a vehicle is kept and how its profile was given:
 * - `depot`, `site_altitude_m`, `atmospheric_pressure_kpa`: the site's atmospheric pressure
 *   (given, or from the altitude by the standard atmosphere) sets the boiling point; null keeps
 *   sea level;
 * - `glycol_basis`: how the planner gave the glycol share ('volume' is converted to the mass
 *   share the freezing and boiling tables use; `glycol_percent` stays by mass);
 * - `profile_set_at`: when a profile was last PUT; null means the vehicle runs on the default
 *   profile, so its boiling and freezing figures are assumptions. Existing vehicles whose
 *   profile differs from the defaults (88 °C, 100 kPa, 50 %) or that have a label count as set.
 */
export async function up(db: Kysely<any>): Promise<void> {
  await sql`ALTER TABLE vehicles ADD COLUMN depot text`.execute(db);
  await sql`ALTER TABLE vehicles ADD COLUMN site_altitude_m real`.execute(db);
  await sql`ALTER TABLE vehicles ADD COLUMN atmospheric_pressure_kpa real`.execute(db);
  await sql`ALTER TABLE vehicles ADD COLUMN glycol_basis text CHECK (glycol_basis IN ('mass', 'volume'))`.execute(db);
  await sql`ALTER TABLE vehicles ADD COLUMN profile_set_at timestamptz`.execute(db);
  await sql`
    UPDATE vehicles SET profile_set_at = updated_at
    WHERE label IS NOT NULL OR thermostat_open_c <> 88 OR cap_pressure_kpa <> 100 OR glycol_percent <> 50 OR engine_family <> 'unknown'`.execute(
    db,
  );
  await sql`CREATE INDEX vehicles_fleet_depot_idx ON vehicles (fleet_id, depot)`.execute(db);
}
