import type { Kysely, Selectable } from 'kysely';
import type { Database, VehiclesTable } from './schema.js';

/** A vehicle's cooling-system profile as the API shows it. */
export interface VehicleProfile {
  vehicleId: string;
  fleetId: string;
  engineFamily: string;
  thermostatOpenC: number;
  capPressureKpa: number;
  glycolPercent: number;
  label: string | null;
  createdAt: string;
  updatedAt: string;
}

export interface VehicleProfilePatch {
  engineFamily?: string;
  thermostatOpenC?: number;
  capPressureKpa?: number;
  glycolPercent?: number;
  label?: string | null;
}

export function toVehicleProfile(row: Selectable<VehiclesTable>): VehicleProfile {
  return {
    vehicleId: row.vehicle_id,
    fleetId: row.fleet_id,
    engineFamily: row.engine_family,
    thermostatOpenC: row.thermostat_open_c,
    capPressureKpa: row.cap_pressure_kpa,
    glycolPercent: row.glycol_percent,
    label: row.label,
    createdAt: row.created_at.toISOString(),
    updatedAt: row.updated_at.toISOString(),
  };
}

export function createVehiclesRepository(db: Kysely<Database>) {
  return {
    async get(vehicleId: string): Promise<VehicleProfile | undefined> {
      const row = await db.selectFrom('vehicles').selectAll().where('vehicle_id', '=', vehicleId).executeTakeFirst();
      return row ? toVehicleProfile(row) : undefined;
    },

    /** Vehicles of one fleet (or all fleets), by id, after `after` (keyset pagination). */
    async list(options: { fleetId: string | null; limit: number; after?: string }): Promise<VehicleProfile[]> {
      let q = db.selectFrom('vehicles').selectAll().orderBy('vehicle_id').limit(options.limit);
      if (options.fleetId !== null) q = q.where('fleet_id', '=', options.fleetId);
      if (options.after) q = q.where('vehicle_id', '>', options.after);
      return (await q.execute()).map(toVehicleProfile);
    },

    /** Creates the vehicle in `fleetId` or updates the given fields; returns it and whether it was new. */
    async upsert(vehicleId: string, fleetId: string, patch: VehicleProfilePatch): Promise<{ vehicle: VehicleProfile; created: boolean }> {
      const values = {
        ...(patch.engineFamily !== undefined ? { engine_family: patch.engineFamily } : {}),
        ...(patch.thermostatOpenC !== undefined ? { thermostat_open_c: patch.thermostatOpenC } : {}),
        ...(patch.capPressureKpa !== undefined ? { cap_pressure_kpa: patch.capPressureKpa } : {}),
        ...(patch.glycolPercent !== undefined ? { glycol_percent: patch.glycolPercent } : {}),
        ...(patch.label !== undefined ? { label: patch.label } : {}),
      };
      return db.transaction().execute(async (trx) => {
        const existing = await trx.selectFrom('vehicles').select('vehicle_id').where('vehicle_id', '=', vehicleId).forUpdate().executeTakeFirst();
        if (existing) {
          const row = await trx
            .updateTable('vehicles')
            .set({ ...values, updated_at: new Date() })
            .where('vehicle_id', '=', vehicleId)
            .returningAll()
            .executeTakeFirstOrThrow();
          return { vehicle: toVehicleProfile(row), created: false };
        }
        const row = await trx
          .insertInto('vehicles')
          .values({ vehicle_id: vehicleId, fleet_id: fleetId, label: null, ...values })
          .returningAll()
          .executeTakeFirstOrThrow();
        return { vehicle: toVehicleProfile(row), created: true };
      });
    },

    /** The fleet a vehicle is registered to, or undefined. */
    async fleetOf(vehicleId: string): Promise<string | undefined> {
      const row = await db.selectFrom('vehicles').select('fleet_id').where('vehicle_id', '=', vehicleId).executeTakeFirst();
      return row?.fleet_id;
    },
  };
}

export type VehiclesRepository = ReturnType<typeof createVehiclesRepository>;
