import { sql, type Kysely } from 'kysely';
import { SEA_LEVEL_PRESSURE_KPA } from '../analysis/physics/atmosphere.js';
import type { Database } from './schema.js';

/**
 * Where a vehicle's site pressure comes from: its own site, its depot's (migrations/0009), or
 * neither (sea level). The boiling point uses the first that is given; every reader of the site
 * (worker, report, API) takes it from the SQL here, so they agree.
 */
export type SiteSource = 'vehicle' | 'depot' | 'sea level';

/** `left join` of the depot of the vehicles row aliased `v`, aliased `d`. */
export const DEPOT_JOIN = sql`left join depots d on d.fleet_id = v.fleet_id and d.depot_id = v.depot`;
/** The site pressure, kPa, null for sea level (needs `v` and `d`). */
export const SITE_PRESSURE = sql<number | null>`coalesce(v.atmospheric_pressure_kpa, d.atmospheric_pressure_kpa)`;
/** The SiteSource (needs `v` and `d`). */
export const SITE_SOURCE = sql<SiteSource>`case when v.atmospheric_pressure_kpa is not null then 'vehicle' when d.atmospheric_pressure_kpa is not null then 'depot' else 'sea level' end`;

/** What a finding or a report row says about its vehicle's profile and site. */
export interface VehicleContext {
  depot: string | null;
  depotName: string | null;
  /** Used for the boiling point, kPa. */
  atmosphericPressureKpa: number;
  siteSource: SiteSource;
  /** No profile set: cap, glycol and thermostat are defaults, so boiling and freezing figures are assumptions. */
  defaultProfile: boolean;
}

/** The context of each of `vehicleIds` that exists, in one statement. */
export async function vehicleContexts(
  db: Kysely<Database>,
  vehicleIds: readonly string[],
): Promise<Map<string, VehicleContext>> {
  if (vehicleIds.length === 0) return new Map();
  const r = await sql<{
    vehicle_id: string;
    depot: string | null;
    depot_name: string | null;
    kpa: number | null;
    source: SiteSource;
    default_profile: boolean;
  }>`
    select v.vehicle_id, v.depot, d.name as depot_name, ${SITE_PRESSURE} as kpa, ${SITE_SOURCE} as source, v.profile_set_at is null as default_profile
    from vehicles v ${DEPOT_JOIN}
    where v.vehicle_id = any(${[...new Set(vehicleIds)]}::text[])`.execute(db);
  return new Map(
    r.rows.map((x) => [
      x.vehicle_id,
      {
        depot: x.depot,
        depotName: x.depot_name,
        atmosphericPressureKpa: x.kpa ?? SEA_LEVEL_PRESSURE_KPA,
        siteSource: x.source,
        defaultProfile: x.default_profile,
      },
    ]),
  );
}
