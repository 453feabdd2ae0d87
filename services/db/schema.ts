import type { ColumnType, Generated } from 'kysely';

/** Kysely table types for the tables of migrations/0001-foundation.ts, 0002-analysis-results.ts and 0003-worker-leases.ts. */
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
  /** Period bus frames are decimated to, s (migration 0005). */
  sample_period_s: Generated<number>;
  label: string | null;
  created_at: Generated<Date>;
  updated_at: Generated<Date>;
  /** migrations/0008: site, how the glycol share was given, when a profile was set (null: defaults). */
  depot: Generated<string | null>;
  site_altitude_m: Generated<number | null>;
  atmospheric_pressure_kpa: Generated<number | null>;
  glycol_basis: Generated<'mass' | 'volume' | null>;
  profile_set_at: Generated<Date | null>;
}

export interface ReadingsTable {
  vehicle_id: string;
  ts: Date;
  coolant_c: number;
  ambient_c: number | null;
  speed_kph: number | null;
  rpm: number | null;
  /** Migration 0005: channels the vehicle bus adds. */
  barometric_kpa: number | null;
  coolant_level_pct: number | null;
  coolant_pressure_kpa: number | null;
}

/** The frame ingest's alignment state (migration 0005); `rec` is a VehicleSlots record. */
export interface BusSlotsTable {
  vehicle_id: string;
  period_s: number;
  slot_ms: number;
  rec: Uint8Array;
  updated_at: Generated<Date>;
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
  /** Start of the window the current lease covers (migrations/0003); null when not leased. */
  leased_from: Date | null;
}

/** jsonb columns: pg and PGlite both parse them into objects. */
type Json<T> = ColumnType<T, string, string>;

export interface EngineRunsTable {
  vehicle_id: string;
  start_ts: Date;
  end_ts: Date;
  start_kind: string;
  open: boolean;
  metrics: Json<Record<string, unknown>>;
}

export interface VehicleDaysTable {
  vehicle_id: string;
  /** pg returns `date` as a Date at local midnight unless parsed; we select it as text. */
  day: ColumnType<string, string, string>;
  metrics: Json<Record<string, unknown>>;
}

export interface SensorEventsTable {
  vehicle_id: string;
  run_start: Date;
  kind: string;
  event: Json<Record<string, unknown>>;
}

export interface FindingsTable {
  vehicle_id: string;
  finding_id: string;
  fleet_id: string;
  finding_key: string;
  kind: string;
  sub_kind: string | null;
  severity: 'advisory' | 'warning' | 'critical';
  confidence: number;
  first_seen: Date;
  last_seen: Date;
  status: Generated<'open' | 'acknowledged' | 'deferred' | 'resolved'>;
  summary: string;
  recommended_check: string;
  trouble_code: string | null;
  metrics: Json<Record<string, number>>;
  evidence: Json<unknown[]>;
  created_at: Generated<Date>;
  updated_at: Generated<Date>;
  acknowledged_at: Date | null;
  acknowledged_by: string | null;
  resolved_at: Date | null;
  resolved_reason: string | null;
  /** Analysis time of the pass that first raised it (migrations/0003). */
  raised_at: Date | null;
  /** Deferral (migrations/0006): the work is postponed until this time, for this reason, by this key. */
  deferred_until: Date | null;
  deferred_reason: string | null;
  deferred_by: string | null;
  /** The service event that resolved it (migrations/0007). */
  resolved_by_event: string | null;
}

export interface ServiceEventsTable {
  vehicle_id: string;
  event_id: string;
  fleet_id: string;
  kind: string;
  at: Date;
  notes: string | null;
  recorded_by: string | null;
  created_at: Generated<Date>;
  /** migrations/0007: findings resolved by the event, findings an inspection looked at (ids), correction and soft deletion. */
  resolved_findings: ColumnType<string[], string | undefined, string>;
  finding_ids: ColumnType<string[], string | undefined, string>;
  updated_at: Date | null;
  deleted_at: Date | null;
  deleted_by: string | null;
}

export interface VehicleAnalysisTable {
  vehicle_id: string;
  fleet_id: string;
  risk_score: Generated<number>;
  open_findings: Generated<number>;
  max_severity: string | null;
  resume_from: Date | null;
  last_run_end: Date | null;
  last_reading_at: Date | null;
  readings_analysed: Generated<BigIntColumn>;
  analysed_at: Generated<Date>;
  /** The open findings as the at-risk list shows them (migration 0004, kept by refreshVehicleRisk). */
  open_findings_brief: Generated<Json<unknown[]>>;
  /** The earliest onset of the unresolved findings, epoch ms (migration 0011, kept with the brief). */
  open_since_ms: number | null;
}

/** The audit of planner actions on findings and service events (migrations/0006). */
export interface PlannerActionsTable {
  vehicle_id: string;
  action_id: string;
  fleet_id: string;
  subject: 'finding' | 'service-event';
  subject_id: string;
  action: string;
  key_id: string;
  at: Generated<Date>;
  before: ColumnType<Record<string, unknown> | null, string | null, string | null>;
  after: ColumnType<Record<string, unknown> | null, string | null, string | null>;
}

/** A fleet's depots and their sites (migrations/0009). */
export interface DepotsTable {
  fleet_id: string;
  depot_id: string;
  name: string | null;
  site_altitude_m: number | null;
  atmospheric_pressure_kpa: number | null;
  created_at: Generated<Date>;
  updated_at: Generated<Date>;
}

export interface PeerBaselinesTable {
  engine_family: string;
  baseline: Json<Record<string, unknown>>;
  vehicles: number;
  updated_at: Generated<Date>;
}

export interface WeeklyReportsTable {
  fleet_id: string;
  iso_week: string;
  generated_at: Generated<Date>;
  report_json: Json<Record<string, unknown>>;
  report_html: string;
  worklist_csv: string;
}

/** Sessions of the planner web view (migrations/0010). */
export interface WebSessionsTable {
  session_hash: string;
  key_id: string;
  fleet_id: string | null;
  csrf_token: string;
  created_at: Generated<Date>;
  expires_at: Date;
  max_expires_at: Date;
}

export interface Database {
  engine_runs: EngineRunsTable;
  vehicle_days: VehicleDaysTable;
  sensor_events: SensorEventsTable;
  findings: FindingsTable;
  service_events: ServiceEventsTable;
  vehicle_analysis: VehicleAnalysisTable;
  peer_baselines: PeerBaselinesTable;
  weekly_reports: WeeklyReportsTable;
  fleets: FleetsTable;
  vehicles: VehiclesTable;
  readings: ReadingsTable;
  bus_slots: BusSlotsTable;
  api_keys: ApiKeysTable;
  ingest_audit: IngestAuditTable;
  analysis_queue: AnalysisQueueTable;
  planner_actions: PlannerActionsTable;
  web_sessions: WebSessionsTable;
  depots: DepotsTable;
}

/**
 * Normalises a count or bigint from either driver: pg returns int8 as a string, PGlite as a
 * number. Every place that reads a count goes through here.
 */
export function toNumber(value: string | number | bigint | null | undefined): number {
  if (value === null || value === undefined) return 0;
  return typeof value === 'number' ? value : Number(value);
}
