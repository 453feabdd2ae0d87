import type { ColumnType, Generated } from 'kysely';

/** Kysely table types for the tables of migrations/0001-foundation.ts. */
export interface FleetsTable {
  fleet_id: string;
  name: string;
  time_zone: Generated<string>;
  created_at: Generated<Date>;
}

export interface VehiclesTable {
  vehicle_id: string;
  fleet_id: string;
  engine_family: Generated<string>;
  thermostat_open_c: Generated<number>;
  cap_pressure_kpa: Generated<number>;
  glycol_percent: Generated<number>;
  label: string | null;
  created_at: Generated<Date>;
  updated_at: Generated<Date>;
}

export interface ReadingsTable {
  vehicle_id: string;
  ts: Date;
  coolant_c: number;
  ambient_c: number | null;
  speed_kph: number | null;
  rpm: number | null;
}

export interface ApiKeysTable {
  key_id: string;
  fleet_id: string | null;
  scopes: string[];
  secret_hash: string;
  label: string | null;
  created_at: Generated<Date>;
  revoked_at: Date | null;
}

/** bigint columns come back as strings from pg and as numbers from PGlite: see `toNumber`. */
type BigIntColumn = ColumnType<string | number, number | undefined, number>;

export interface IngestAuditTable {
  audit_id: Generated<BigIntColumn>;
  key_id: string;
  fleet_id: string | null;
  received_at: Generated<Date>;
  content_type: string;
  body_bytes: number;
  accepted: number;
  duplicates: number;
  rejected: number;
  vehicles: number;
  duration_ms: number;
}

export interface AnalysisQueueTable {
  vehicle_id: string;
  fleet_id: string;
  dirty_from: Date;
  generation: Generated<BigIntColumn>;
  enqueued_at: Generated<Date>;
  run_after: Generated<Date>;
  locked_by: string | null;
  locked_until: Date | null;
  attempts: Generated<number>;
  last_error: string | null;
}

export interface Database {
  fleets: FleetsTable;
  vehicles: VehiclesTable;
  readings: ReadingsTable;
  api_keys: ApiKeysTable;
  ingest_audit: IngestAuditTable;
  analysis_queue: AnalysisQueueTable;
}

/**
 * Normalises a count or bigint from either driver: pg returns int8 as a string, PGlite as a
 * number. Every place that reads a count goes through here.
 */
export function toNumber(value: string | number | bigint | null | undefined): number {
  if (value === null || value === undefined) return 0;
  return typeof value === 'number' ? value : Number(value);
}
