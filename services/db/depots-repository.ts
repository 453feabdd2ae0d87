import { sql, type Kysely, type Selectable } from 'kysely';
import { SEA_LEVEL_PRESSURE_KPA } from '../analysis/physics/atmosphere.js';
import {
  afterKeySql,
  keySelections,
  orderBySql,
  pageOf,
  type Page,
  type PageRequest,
  type SortColumn,
} from './keyset.js';
import type { Database, DepotsTable } from './schema.js';

/** A depot as the API shows it. */
export interface DepotView {
  depotId: string;
  fleetId: string;
  name: string | null;
  siteAltitudeM: number | null;
  /** The depot's atmospheric pressure, kPa (sea level when no site is given). */
  atmosphericPressureKpa: number;
  /** True when the depot has a site (altitude or pressure) of its own. */
  siteGiven: boolean;
  /** Vehicles that name this depot. */
  vehicles: number;
  createdAt: string;
  updatedAt: string;
}

export interface DepotPatch {
  name?: string | null;
  siteAltitudeM?: number | null;
  atmosphericPressureKpa?: number | null;
}

/** Depots by fleet, then id. */
export const DEPOT_ORDER: readonly SortColumn[] = [
  { sql: sql.ref('d.fleet_id'), dir: 'asc', type: 'text' },
  { sql: sql.ref('d.depot_id'), dir: 'asc', type: 'text' },
];

type DepotRow = Selectable<DepotsTable> & { vehicles: number | string };

function toDepotView(row: DepotRow): DepotView {
  return {
    depotId: row.depot_id,
    fleetId: row.fleet_id,
    name: row.name,
    siteAltitudeM: row.site_altitude_m,
    atmosphericPressureKpa: row.atmospheric_pressure_kpa ?? SEA_LEVEL_PRESSURE_KPA,
    siteGiven: row.atmospheric_pressure_kpa !== null,
    vehicles: Number(row.vehicles),
    createdAt: row.created_at.toISOString(),
    updatedAt: row.updated_at.toISOString(),
  };
}

const vehicleCount = sql<number>`(select count(*) from vehicles v where v.fleet_id = d.fleet_id and v.depot = d.depot_id)`;

/** A fleet's depots (migrations/0009): the sites whose pressure sets the boiling point of their vehicles. */
export function createDepotsRepository(db: Kysely<Database>) {
  const select = (executor: Kysely<Database>) =>
    executor.selectFrom('depots as d').selectAll('d').select(vehicleCount.as('vehicles'));
  return {
    async get(fleetId: string, depotId: string, executor: Kysely<Database> = db): Promise<DepotView | undefined> {
      const row = await select(executor)
        .where('d.fleet_id', '=', fleetId)
        .where('d.depot_id', '=', depotId)
        .executeTakeFirst();
      return row ? toDepotView(row) : undefined;
    },

    /** A page of one fleet's (or, for null, every fleet's) depots. */
    async list(fleetId: string | null, pageRequest: PageRequest): Promise<Page<DepotView>> {
      let q = select(db).select(keySelections(DEPOT_ORDER));
      if (fleetId !== null) q = q.where('d.fleet_id', '=', fleetId);
      const rows = await q
        .where(afterKeySql(DEPOT_ORDER, pageRequest.after))
        .orderBy(orderBySql(DEPOT_ORDER))
        .limit(pageRequest.limit + 1)
        .execute();
      return pageOf(rows, pageRequest.limit, DEPOT_ORDER.length, toDepotView);
    },

    /** Creates the depot or updates the given fields; `created` tells which. */
    async upsert(
      trx: Kysely<Database>,
      fleetId: string,
      depotId: string,
      patch: DepotPatch,
    ): Promise<{ created: boolean }> {
      const values = {
        ...(patch.name !== undefined ? { name: patch.name } : {}),
        ...(patch.siteAltitudeM !== undefined ? { site_altitude_m: patch.siteAltitudeM } : {}),
        ...(patch.atmosphericPressureKpa !== undefined
          ? { atmospheric_pressure_kpa: patch.atmosphericPressureKpa }
          : {}),
      };
      const row = await trx
        .insertInto('depots')
        .values({ fleet_id: fleetId, depot_id: depotId, ...values })
        .onConflict((oc) =>
          oc.columns(['fleet_id', 'depot_id']).doUpdateSet({ ...values, updated_at: sql<Date>`now()` }),
        )
        // xmax is 0 on a row version this statement inserted.
        .returning(sql<boolean>`(xmax = 0)`.as('created'))
        .executeTakeFirstOrThrow();
      return { created: row.created };
    },

    /** Vehicles of the depot without a site of their own (its site sets their boiling point), with their analysis time. */
    async vehiclesUsingSite(
      trx: Kysely<Database>,
      fleetId: string,
      depotId: string,
    ): Promise<Array<{ vehicleId: string; lastReadingMs: number | null }>> {
      const rows = await trx
        .selectFrom('vehicles as v')
        .leftJoin('vehicle_analysis as a', 'a.vehicle_id', 'v.vehicle_id')
        .select(['v.vehicle_id', 'a.last_reading_at'])
        .where('v.fleet_id', '=', fleetId)
        .where('v.depot', '=', depotId)
        .where('v.atmospheric_pressure_kpa', 'is', null)
        .execute();
      return rows.map((r) => ({ vehicleId: r.vehicle_id, lastReadingMs: r.last_reading_at?.getTime() ?? null }));
    },

    /** Deletes the depot when no vehicle names it; false when vehicles still do, undefined when there is none. */
    async remove(fleetId: string, depotId: string): Promise<boolean | undefined> {
      return db.transaction().execute(async (trx) => {
        const depot = await trx
          .selectFrom('depots')
          .select('depot_id')
          .where('fleet_id', '=', fleetId)
          .where('depot_id', '=', depotId)
          .forUpdate()
          .executeTakeFirst();
        if (!depot) return undefined;
        const used = await trx
          .selectFrom('vehicles')
          .select('vehicle_id')
          .where('fleet_id', '=', fleetId)
          .where('depot', '=', depotId)
          .limit(1)
          .executeTakeFirst();
        if (used) return false;
        await trx.deleteFrom('depots').where('fleet_id', '=', fleetId).where('depot_id', '=', depotId).execute();
        return true;
      });
    },
  };
}
