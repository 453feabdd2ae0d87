import { sql, type Kysely } from 'kysely';

/**
 * Depots: the sites a fleet's vehicles work from. A depot has a name and a site (altitude, or
 * the usual atmospheric pressure, which the altitude sets by the standard atmosphere when not
 * given). The boiling point of a vehicle uses its own site when it has one, else its depot's,
 * else sea level. `vehicles.depot` (migration 0008) names the depot by its id within the fleet.
 * Depot names already given to vehicles become depots without a site.
 */
export async function up(db: Kysely<any>): Promise<void> {
  await sql`
    CREATE TABLE depots (
      fleet_id                 text NOT NULL REFERENCES fleets (fleet_id),
      depot_id                 text NOT NULL,
      name                     text,
      site_altitude_m          real,
      atmospheric_pressure_kpa real,
      created_at               timestamptz NOT NULL DEFAULT now(),
      updated_at               timestamptz NOT NULL DEFAULT now(),
      PRIMARY KEY (fleet_id, depot_id)
    )`.execute(db);
  await sql`INSERT INTO depots (fleet_id, depot_id) SELECT DISTINCT fleet_id, depot FROM vehicles WHERE depot IS NOT NULL`.execute(
    db,
  );
}
