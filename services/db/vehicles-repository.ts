import { sql, type Kysely, type Selectable } from 'kysely';
import { SEA_LEVEL_PRESSURE_KPA } from '../analysis/physics/atmosphere.js';
import { glycolMassToVolumePercent } from '../analysis/physics/units.js';
import type { Page, PageRequest, SortColumn } from './keyset.js';
import type { Database, VehiclesTable } from './schema.js';
import { SITE_PRESSURE, SITE_SOURCE, type SiteSource } from './vehicle-site.js';

/** Vehicles by id: the order of GET /v1/vehicles (its key is checked against it). */
export const VEHICLE_ORDER: readonly SortColumn[] = [{ sql: sql.ref('v.vehicle_id'), dir: 'asc', type: 'text' }];

/** A vehicle's cooling-system profile as the API shows it. */
export interface VehicleProfile {
  vehicleId: string;
  fleetId: string;
  engineFamily: string;
  thermostatOpenC: number;
  capPressureKpa: number;
  glycolPercent: number;
  samplePeriodS: number;
  label: string | null;
  createdAt: string;
  updatedAt: string;
  depot: string | null;
  siteAltitudeM: number | null;
  /** The atmospheric pressure used for the boiling point, kPa: the vehicle's site, else its depot's, else sea level. */
  atmosphericPressureKpa: number;
  /** Where atmosphericPressureKpa comes from. */
  siteSource: SiteSource;
  /** The depot's name, when the depot is registered and named. */
  depotName: string | null;
  glycolPercentByVolume: number;
  /** How the glycol share was given; glycolPercent is always by mass. */
  glycolBasis: 'mass' | 'volume' | null;
  /** True while no cooling-system profile has been set: thermostat, cap and glycol are the defaults. */
  defaultProfile: boolean;
}

export interface VehicleProfilePatch {
  engineFamily?: string;
  thermostatOpenC?: number;
  capPressureKpa?: number;
  /** By mass. */
  glycolPercent?: number;
  samplePeriodS?: number;
  label?: string | null;
  depot?: string | null;
  siteAltitudeM?: number | null;
  atmosphericPressureKpa?: number | null;
  glycolBasis?: 'mass' | 'volume';
}

/** A vehicles row with its depot's site (selectVehicles). */
export type VehicleRow = Selectable<VehiclesTable> & {
  site_kpa: number | null;
  site_source: SiteSource;
  depot_name: string | null;
};

export function toVehicleProfile(row: VehicleRow): VehicleProfile {
  return {
    vehicleId: row.vehicle_id,
    fleetId: row.fleet_id,
    engineFamily: row.engine_family,
    thermostatOpenC: row.thermostat_open_c,
    capPressureKpa: row.cap_pressure_kpa,
    glycolPercent: row.glycol_percent,
    samplePeriodS: row.sample_period_s,
    label: row.label,
    createdAt: row.created_at.toISOString(),
    updatedAt: row.updated_at.toISOString(),
    depot: row.depot,
    siteAltitudeM: row.site_altitude_m,
    atmosphericPressureKpa: row.site_kpa ?? SEA_LEVEL_PRESSURE_KPA,
    siteSource: row.site_source,
    depotName: row.depot_name,
    glycolBasis: row.glycol_basis,
    glycolPercentByVolume: Math.round(glycolMassToVolumePercent(row.glycol_percent) * 100) / 100,
    defaultProfile: row.profile_set_at === null,
  };
}

function patchValues(patch: VehicleProfilePatch) {
  return {
    ...(patch.engineFamily !== undefined ? { engine_family: patch.engineFamily } : {}),
    ...(patch.thermostatOpenC !== undefined ? { thermostat_open_c: patch.thermostatOpenC } : {}),
    ...(patch.capPressureKpa !== undefined ? { cap_pressure_kpa: patch.capPressureKpa } : {}),
    ...(patch.glycolPercent !== undefined ? { glycol_percent: patch.glycolPercent } : {}),
    ...(patch.samplePeriodS !== undefined ? { sample_period_s: patch.samplePeriodS } : {}),
    ...(patch.label !== undefined ? { label: patch.label } : {}),
    ...(patch.depot !== undefined ? { depot: patch.depot } : {}),
    ...(patch.siteAltitudeM !== undefined ? { site_altitude_m: patch.siteAltitudeM } : {}),
    ...(patch.atmosphericPressureKpa !== undefined ? { atmospheric_pressure_kpa: patch.atmosphericPressureKpa } : {}),
    ...(patch.glycolBasis !== undefined ? { glycol_basis: patch.glycolBasis } : {}),
    ...(PROFILE_FIELDS.some((k) => patch[k] !== undefined) ? { profile_set_at: sql<Date>`now()` } : {}),
  };
}

/** The cooling-system facts: setting any of them ends the default profile. */
const PROFILE_FIELDS = ['engineFamily', 'thermostatOpenC', 'capPressureKpa', 'glycolPercent'] as const;

/** Vehicles with the site of their depot. */
function selectVehicles(db: Kysely<Database>) {
  return db
    .selectFrom('vehicles as v')
    .leftJoin('depots as d', (j) => j.onRef('d.fleet_id', '=', 'v.fleet_id').onRef('d.depot_id', '=', 'v.depot'))
    .selectAll('v')
    .select([SITE_PRESSURE.as('site_kpa'), SITE_SOURCE.as('site_source'), 'd.name as depot_name']);
}

/** Registers a depot a vehicle names (without a site) if the fleet has none of that id. */
async function ensureDepot(db: Kysely<Database>, fleetId: string, depotId: string): Promise<void> {
  await db
    .insertInto('depots')
    .values({ fleet_id: fleetId, depot_id: depotId })
    .onConflict((oc) => oc.columns(['fleet_id', 'depot_id']).doNothing())
    .execute();
}

export function createVehiclesRepository(db: Kysely<Database>) {
  const get = async (vehicleId: string): Promise<VehicleProfile | undefined> => {
    const row = await selectVehicles(db).where('v.vehicle_id', '=', vehicleId).executeTakeFirst();
    return row ? toVehicleProfile(row) : undefined;
  };
  return {
    get,

    /** A page of the vehicles of one fleet (or all fleets), by id; `depot` keeps one depot's. */
    async list(options: { fleetId: string | null; depot?: string } & PageRequest): Promise<Page<VehicleProfile>> {
      let q = selectVehicles(db)
        .orderBy('v.vehicle_id')
        .limit(options.limit + 1);
      if (options.fleetId !== null) q = q.where('v.fleet_id', '=', options.fleetId);
      if (options.depot !== undefined) q = q.where('v.depot', '=', options.depot);
      if (options.after) q = q.where('v.vehicle_id', '>', String(options.after[0]));
      const rows = await q.execute();
      const items = rows.slice(0, options.limit).map(toVehicleProfile);
      const last = items[items.length - 1];
      return { items, nextKey: rows.length > options.limit && last ? [last.vehicleId] : null };
    },

    /**
     * Creates the vehicle in `fleetId` or updates the given fields of the existing one, in one
     * statement that decides ownership itself: with `onlyIfFleet`, an existing vehicle of another
     * fleet is left alone and the answer is `{ ownedByOtherFleet: true }`. `ON CONFLICT DO UPDATE`
     * waits for a concurrent transaction registering the same id, so a profile can never be
     * written into a vehicle another fleet registered a moment earlier (seen before: 37 of 150
     * racing PUTs wrote one fleet's label into the other's vehicle).
     *
     * @example await vehicles.upsert('NS-12', { fleetId: 'northside', onlyIfFleet: 'northside' }, { label: 'van 12' })
     */
    async upsert(
      vehicleId: string,
      owner: { fleetId: string; onlyIfFleet: string | null },
      patch: VehicleProfilePatch,
    ): Promise<{ vehicle: VehicleProfile; created: boolean } | { ownedByOtherFleet: true }> {
      const values = patchValues(patch);
      const row = await db
        .insertInto('vehicles')
        .values({ vehicle_id: vehicleId, fleet_id: owner.fleetId, label: null, ...values })
        .onConflict((oc) => {
          const update = oc.column('vehicle_id').doUpdateSet({ ...values, updated_at: sql<Date>`now()` });
          return owner.onlyIfFleet === null ? update : update.where('vehicles.fleet_id', '=', owner.onlyIfFleet);
        })
        .returningAll()
        // xmax is 0 on a row version this statement inserted, the updating transaction's id otherwise.
        .returning(sql<boolean>`(xmax = 0)`.as('created'))
        .executeTakeFirst();
      if (!row) return { ownedByOtherFleet: true };
      if (patch.depot) await ensureDepot(db, row.fleet_id, patch.depot);
      return { vehicle: (await get(vehicleId))!, created: row.created };
    },

    /** Updates the given fields of an existing vehicle (any fleet: admin keys); undefined if there is none. */
    async update(vehicleId: string, patch: VehicleProfilePatch): Promise<VehicleProfile | undefined> {
      const row = await db
        .updateTable('vehicles')
        .set({ ...patchValues(patch), updated_at: sql<Date>`now()` })
        .where('vehicle_id', '=', vehicleId)
        .returning(['vehicle_id', 'fleet_id'])
        .executeTakeFirst();
      if (row && patch.depot) await ensureDepot(db, row.fleet_id, patch.depot);
      return row ? get(vehicleId) : undefined;
    },
  };
}

export type VehiclesRepository = ReturnType<typeof createVehiclesRepository>;
