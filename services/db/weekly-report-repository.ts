import { type Kysely, sql } from 'kysely';
import type { DayAggregate } from '../analysis/day-aggregates.js';
import type { RunMetrics } from '../analysis/run-metrics.js';
import {
  afterKeySql,
  keySelections,
  orderBySql,
  pageOf,
  type Page,
  type PageRequest,
  type SortColumn,
} from './keyset.js';
import type { Database } from './schema.js';
import { DEPOT_JOIN, SITE_PRESSURE, SITE_SOURCE, type SiteSource } from './vehicle-site.js';
import { isValidTimeZone } from '../time/zoned-time.js';

/** Every database read and write of the weekly report (one module for all its SQL). */

/** A fleet; `timeZone` is always a valid IANA zone (an unknown stored zone reads as UTC). */
export interface FleetRow {
  fleetId: string;
  name: string;
  timeZone: string;
}
export interface ReportVehicle {
  vehicleId: string;
  label: string | null;
  engineFamily: string;
  thermostatOpenC: number;
  capPressureKpa: number;
  glycolPercent: number;
  riskScore: number;
  /** The vehicle's latest analysed reading, ms (null: never analysed). */
  lastReadingMs?: number | null;
  /** The site's atmospheric pressure, kPa (null: the config's sea level). */
  atmosphericPressureKpa?: number | null;
  /** No profile set: thermostat, cap and glycol are defaults. */
  defaultProfile?: boolean;
  depot?: string | null;
  /** Where atmosphericPressureKpa comes from. */
  siteSource?: SiteSource;
}
/** A finding's planner state as it stood at some time (from the audit of planner actions). */
export interface PlannerStateAt {
  status: 'open' | 'acknowledged' | 'deferred';
  deferredUntilMs: number | null;
  deferredReason: string | null;
  acknowledged: boolean;
}
export interface StoredDay {
  vehicleId: string;
  metrics: DayAggregate;
}
export interface StoredRun {
  vehicleId: string;
  metrics: RunMetrics;
}
export interface StoredFinding {
  findingId: string;
  vehicleId: string;
  kind: string;
  severity: 'advisory' | 'warning' | 'critical';
  confidence: number;
  firstSeenMs: number;
  lastSeenMs: number;
  createdMs: number;
  status: 'open' | 'acknowledged' | 'deferred' | 'resolved';
  summary: string;
  recommendedCheck: string;
  troubleCode: string | null;
  resolvedMs: number | null;
  resolvedReason: string | null;
  deferredUntilMs: number | null;
  deferredReason: string | null;
  key: string;
  metrics: Record<string, number>;
  acknowledgedMs: number | null;
}
export interface StoredSensorEvent {
  vehicleId: string;
  kind: string;
}
export interface ReadingSeries {
  tsMs: number[];
  coolantC: number[];
}
/** What the analysis tables hold for a fleet's week (the report's coverage), and what is still to be analysed. */
export interface WeekData {
  vehiclesWithData: number;
  vehicleDays: number;
  readings: number;
  firstReadingMs: number | null;
  lastReadingMs: number | null;
  findings: number;
  findingsChangedMs: number | null;
  serviceEvents: number;
  serviceEventsChangedMs: number | null;
  /** Vehicles of the fleet with readings queued for analysis that reach back before the week's end. */
  pendingVehicles: number;
}
/** An archived report as the list shows it. */
export interface ArchivedReportEntry {
  isoWeek: string;
  generatedAt: string;
  complete: boolean | null;
  workItems: number | null;
}

/** Archived reports, newest week first (one per fleet and week). */
export const ARCHIVE_ORDER: readonly SortColumn[] = [{ sql: sql.ref('iso_week'), dir: 'desc', type: 'text' }];

export interface ArchivedReport {
  fleetId: string;
  isoWeek: string;
  generatedAt: Date;
  json: unknown;
  html: string;
  csv: string;
}

function fleetRow(r: { fleet_id: string; name: string; time_zone: string }): FleetRow {
  return { fleetId: r.fleet_id, name: r.name, timeZone: isValidTimeZone(r.time_zone) ? r.time_zone : 'UTC' };
}

const ms = (d: Date | string) => (d instanceof Date ? d.getTime() : Date.parse(d));

export function createReportRepository(db: Kysely<Database>) {
  return {
    async fleet(fleetId: string): Promise<FleetRow | undefined> {
      const row = await db
        .selectFrom('fleets')
        .select(['fleet_id', 'name', 'time_zone'])
        .where('fleet_id', '=', fleetId)
        .executeTakeFirst();
      return row && fleetRow(row);
    },

    async fleets(): Promise<FleetRow[]> {
      const rows = await db
        .selectFrom('fleets')
        .select(['fleet_id', 'name', 'time_zone'])
        .orderBy('fleet_id')
        .execute();
      return rows.map(fleetRow);
    },

    /** The fleet's vehicles with their stored risk (0 when never analysed) and their site (own, else the depot's). */
    async vehicles(fleetId: string): Promise<ReportVehicle[]> {
      const r = await sql<{
        vehicle_id: string;
        label: string | null;
        engine_family: string;
        thermostat_open_c: number;
        cap_pressure_kpa: number;
        glycol_percent: number;
        risk_score: number | null;
        last_reading_at: Date | null;
        kpa: number | null;
        source: SiteSource;
        profile_set_at: Date | null;
        depot: string | null;
      }>`
        select v.vehicle_id, v.label, v.engine_family, v.thermostat_open_c, v.cap_pressure_kpa, v.glycol_percent, a.risk_score, a.last_reading_at,
               ${SITE_PRESSURE} as kpa, ${SITE_SOURCE} as source, v.profile_set_at, v.depot
        from vehicles v ${DEPOT_JOIN} left join vehicle_analysis a on a.vehicle_id = v.vehicle_id
        where v.fleet_id = ${fleetId} order by v.vehicle_id`.execute(db);
      return r.rows.map((x) => ({
        vehicleId: x.vehicle_id,
        label: x.label,
        engineFamily: x.engine_family,
        thermostatOpenC: x.thermostat_open_c,
        capPressureKpa: x.cap_pressure_kpa,
        glycolPercent: x.glycol_percent,
        riskScore: x.risk_score ?? 0,
        lastReadingMs: x.last_reading_at ? ms(x.last_reading_at) : null,
        atmosphericPressureKpa: x.kpa,
        defaultProfile: x.profile_set_at === null,
        depot: x.depot,
        siteSource: x.source,
      }));
    },

    /**
     * Each finding's planner state as it stood at `atMs`: the state after the latest planner
     * action on it by then (acknowledge, defer, reopen; planner_actions, migrations/0006), a
     * deferral whose date had passed by then counting as ended. Findings with no action by then
     * are absent (they were open, unless acknowledged before the audit existed).
     */
    async plannerStatesAt(fleetId: string, atMs: number): Promise<Map<string, PlannerStateAt>> {
      const r = await sql<{
        subject_id: string;
        after: {
          status?: string;
          acknowledgedBy?: string | null;
          deferredUntil?: string | null;
          deferredReason?: string | null;
        } | null;
      }>`
        select distinct on (subject_id) subject_id, after from planner_actions
        where fleet_id = ${fleetId} and subject = 'finding' and at <= ${new Date(atMs)}
        order by subject_id, at desc, action_id desc`.execute(db);
      const out = new Map<string, PlannerStateAt>();
      for (const row of r.rows) {
        const a = row.after ?? {};
        const acknowledged = a.acknowledgedBy !== null && a.acknowledgedBy !== undefined;
        const untilMs = a.deferredUntil ? Date.parse(a.deferredUntil) : null;
        const deferred = a.status === 'deferred' && untilMs !== null && untilMs > atMs;
        out.set(row.subject_id, {
          status: deferred ? 'deferred' : acknowledged ? 'acknowledged' : 'open',
          acknowledged,
          deferredUntilMs: deferred ? untilMs : null,
          deferredReason: deferred ? (a.deferredReason ?? null) : null,
        });
      }
      return out;
    },

    /** Vehicle-days of the fleet's vehicles (or of `vehicleIds`) with first ≤ day ≤ last (YYYY-MM-DD). */
    async days(fleetId: string, first: string, last: string, vehicleIds?: readonly string[]): Promise<StoredDay[]> {
      if (vehicleIds && vehicleIds.length === 0) return [];
      let q = db
        .selectFrom('vehicle_days as d')
        .innerJoin('vehicles as v', 'v.vehicle_id', 'd.vehicle_id')
        .select(['d.vehicle_id', 'd.metrics'])
        .where('v.fleet_id', '=', fleetId)
        .where('d.day', '>=', first)
        .where('d.day', '<=', last);
      if (vehicleIds) q = q.where('d.vehicle_id', 'in', vehicleIds);
      const rows = await q.orderBy('d.vehicle_id').orderBy('d.day').execute();
      return rows.map((r) => ({ vehicleId: r.vehicle_id, metrics: r.metrics as unknown as DayAggregate }));
    },

    /**
     * Per vehicle, the longest break between consecutive days with data among days in
     * [first, last] (YYYY-MM-DD), ms: how long the vehicle normally stands unused.
     */
    async longestBreaks(fleetId: string, first: string, last: string): Promise<Map<string, number>> {
      const result = await sql<{ vehicle_id: string; gap_ms: number | string | null }>`
        select vehicle_id, max(gap_ms) as gap_ms from (
          select d.vehicle_id, (d.metrics->>'firstSampleMs')::float8
                 - lag((d.metrics->>'lastSampleMs')::float8) over (partition by d.vehicle_id order by d.day) as gap_ms
          from vehicle_days d join vehicles v on v.vehicle_id = d.vehicle_id
          where v.fleet_id = ${fleetId} and d.day >= ${first}::date and d.day <= ${last}::date) g
        group by vehicle_id`.execute(db);
      return new Map(result.rows.filter((r) => r.gap_ms !== null).map((r) => [r.vehicle_id, Number(r.gap_ms)]));
    },

    /** Per vehicle, missing time inside engine runs and running time over days in [first, last], s. */
    async gapTotals(
      fleetId: string,
      first: string,
      last: string,
    ): Promise<Map<string, { missingS: number; runningS: number }>> {
      const result = await sql<{ vehicle_id: string; missing_s: number | string; running_s: number | string }>`
        select d.vehicle_id, sum((d.metrics->>'missingS')::float8) as missing_s, sum((d.metrics->>'engineHours')::float8) * 3600 as running_s
        from vehicle_days d join vehicles v on v.vehicle_id = d.vehicle_id
        where v.fleet_id = ${fleetId} and d.day >= ${first}::date and d.day <= ${last}::date
        group by d.vehicle_id`.execute(db);
      return new Map(
        result.rows.map((r) => [r.vehicle_id, { missingS: Number(r.missing_s), runningS: Number(r.running_s) }]),
      );
    },

    /** Cold-start runs of `vehicleIds` starting in [fromMs, toMs), oldest first. */
    async coldStarts(vehicleIds: readonly string[], fromMs: number, toMs: number): Promise<StoredRun[]> {
      if (vehicleIds.length === 0) return [];
      const rows = await db
        .selectFrom('engine_runs')
        .select(['vehicle_id', 'metrics'])
        .where('vehicle_id', 'in', vehicleIds)
        .where('start_kind', '=', 'cold')
        .where('start_ts', '>=', new Date(fromMs))
        .where('start_ts', '<', new Date(toMs))
        .orderBy('vehicle_id')
        .orderBy('start_ts')
        .execute();
      return rows.map((r) => ({ vehicleId: r.vehicle_id, metrics: r.metrics as unknown as RunMetrics }));
    },

    /** Latest service event of each vehicle before `beforeMs`, epoch ms. */
    async lastServiceEvents(vehicleIds: readonly string[], beforeMs: number): Promise<Map<string, number>> {
      if (vehicleIds.length === 0) return new Map();
      const rows = await db
        .selectFrom('service_events')
        .select(['vehicle_id', (eb) => eb.fn.max('at').as('at')])
        .where('vehicle_id', 'in', vehicleIds)
        .where('at', '<', new Date(beforeMs))
        .where('deleted_at', 'is', null)
        .groupBy('vehicle_id')
        .execute();
      return new Map(rows.map((r) => [r.vehicle_id, ms(r.at as Date)]));
    },

    /** Findings that existed at some time in [startMs, endMs): evidence before the end, not resolved before the start. */
    async findings(fleetId: string, startMs: number, endMs: number): Promise<StoredFinding[]> {
      const rows = await db
        .selectFrom('findings')
        .selectAll()
        .where('fleet_id', '=', fleetId)
        .where('first_seen', '<', new Date(endMs))
        .where((eb) => eb.or([eb('resolved_at', 'is', null), eb('resolved_at', '>=', new Date(startMs))]))
        .orderBy('vehicle_id')
        .orderBy('finding_id')
        .execute();
      return rows.map((r) => ({
        findingId: r.finding_id,
        vehicleId: r.vehicle_id,
        kind: r.kind,
        severity: r.severity,
        confidence: r.confidence,
        firstSeenMs: ms(r.first_seen),
        lastSeenMs: ms(r.last_seen),
        createdMs: ms(r.created_at),
        status: r.status,
        summary: r.summary,
        recommendedCheck: r.recommended_check,
        troubleCode: r.trouble_code,
        resolvedMs: r.resolved_at ? ms(r.resolved_at) : null,
        resolvedReason: r.resolved_reason,
        deferredUntilMs: r.deferred_until ? ms(r.deferred_until) : null,
        deferredReason: r.deferred_reason,
        key: r.finding_key,
        metrics: r.metrics,
        acknowledgedMs: r.acknowledged_at ? ms(r.acknowledged_at) : null,
      }));
    },

    /** Sensor events of the fleet's runs starting in [startMs, endMs). */
    async sensorEvents(fleetId: string, startMs: number, endMs: number): Promise<StoredSensorEvent[]> {
      const rows = await db
        .selectFrom('sensor_events as e')
        .innerJoin('vehicles as v', 'v.vehicle_id', 'e.vehicle_id')
        .select(['e.vehicle_id', 'e.kind'])
        .where('v.fleet_id', '=', fleetId)
        .where('e.run_start', '>=', new Date(startMs))
        .where('e.run_start', '<', new Date(endMs))
        .execute();
      return rows.map((r) => ({ vehicleId: r.vehicle_id, kind: r.kind }));
    },

    /**
     * Each vehicle's latest reading in [asOfMs − lookBackMs, asOfMs), or null. The lower bound
     * lets Postgres skip older partitions; each lookup is one backward index probe per partition.
     */
    async lastReadings(fleetId: string, asOfMs: number, lookBackMs: number): Promise<Map<string, number | null>> {
      const result = await sql<{ vehicle_id: string; last_ts: Date | string | null }>`
        select v.vehicle_id,
               (select max(r.ts) from readings r
                 where r.vehicle_id = v.vehicle_id and r.ts >= ${new Date(asOfMs - lookBackMs)} and r.ts < ${new Date(asOfMs)}) as last_ts
        from vehicles v where v.fleet_id = ${fleetId}`.execute(db);
      return new Map(result.rows.map((r) => [r.vehicle_id, r.last_ts === null ? null : ms(r.last_ts)]));
    },

    /** One vehicle's coolant readings in [fromMs, toMs), in time order. */
    async coolant(vehicleId: string, fromMs: number, toMs: number): Promise<ReadingSeries> {
      const rows = await db
        .selectFrom('readings')
        .select(['ts', 'coolant_c'])
        .where('vehicle_id', '=', vehicleId)
        .where('ts', '>=', new Date(fromMs))
        .where('ts', '<', new Date(toMs))
        .orderBy('ts')
        .execute();
      return { tsMs: rows.map((r) => ms(r.ts)), coolantC: rows.map((r) => r.coolant_c) };
    },

    /** Stores the week's report, replacing an earlier one of the same fleet and week. */
    async archive(
      fleetId: string,
      isoWeek: string,
      json: unknown,
      html: string,
      csv: string,
      generatedAt: Date,
    ): Promise<void> {
      const row = {
        fleet_id: fleetId,
        iso_week: isoWeek,
        generated_at: generatedAt,
        report_json: JSON.stringify(json),
        report_html: html,
        worklist_csv: csv,
      };
      await db
        .insertInto('weekly_reports')
        .values(row)
        .onConflict((oc) =>
          oc.columns(['fleet_id', 'iso_week']).doUpdateSet({
            generated_at: generatedAt,
            report_json: row.report_json,
            report_html: html,
            worklist_csv: csv,
          }),
        )
        .execute();
    },

    /**
     * The fleet's week as the analysis tables hold it now: the vehicle-days of its dates, the
     * findings and service events that can appear in it, and the vehicles whose queued readings
     * reach back before its end (analysis not caught up). Any change of these changes the report.
     */
    async weekData(fleetId: string, first: string, last: string, endMs: number): Promise<WeekData> {
      const end = new Date(endMs);
      const r = await sql<Record<string, number | string | null>>`
        select
          (select count(distinct d.vehicle_id) from vehicle_days d join vehicles v on v.vehicle_id = d.vehicle_id
            where v.fleet_id = ${fleetId} and d.day >= ${first}::date and d.day <= ${last}::date and (d.metrics->>'sampleCount')::float8 > 0) as vehicles_with_data,
          (select count(*) from vehicle_days d join vehicles v on v.vehicle_id = d.vehicle_id
            where v.fleet_id = ${fleetId} and d.day >= ${first}::date and d.day <= ${last}::date) as vehicle_days,
          (select coalesce(sum((d.metrics->>'sampleCount')::float8), 0) from vehicle_days d join vehicles v on v.vehicle_id = d.vehicle_id
            where v.fleet_id = ${fleetId} and d.day >= ${first}::date and d.day <= ${last}::date) as readings,
          (select min((d.metrics->>'firstSampleMs')::float8) from vehicle_days d join vehicles v on v.vehicle_id = d.vehicle_id
            where v.fleet_id = ${fleetId} and d.day >= ${first}::date and d.day <= ${last}::date and (d.metrics->>'sampleCount')::float8 > 0) as first_reading_ms,
          (select max((d.metrics->>'lastSampleMs')::float8) from vehicle_days d join vehicles v on v.vehicle_id = d.vehicle_id
            where v.fleet_id = ${fleetId} and d.day >= ${first}::date and d.day <= ${last}::date and (d.metrics->>'sampleCount')::float8 > 0) as last_reading_ms,
          (select count(*) from findings f where f.fleet_id = ${fleetId} and f.first_seen < ${end}) as findings,
          (select floor(extract(epoch from max(f.updated_at)) * 1000) from findings f where f.fleet_id = ${fleetId} and f.first_seen < ${end}) as findings_changed_ms,
          (select count(*) from service_events e where e.fleet_id = ${fleetId} and e.at < ${end} and e.deleted_at is null) as service_events,
          (select floor(extract(epoch from max(greatest(e.created_at, e.updated_at, e.deleted_at))) * 1000) from service_events e
            where e.fleet_id = ${fleetId} and e.at < ${end}) as service_events_changed_ms,
          (select count(*) from analysis_queue q where q.fleet_id = ${fleetId} and least(q.dirty_from, coalesce(q.leased_from, 'infinity'::timestamptz)) < ${end}) as pending_vehicles`.execute(
        db,
      );
      const row = r.rows[0] ?? {};
      const num = (k: string) => Number(row[k] ?? 0);
      const opt = (k: string) => (row[k] === null || row[k] === undefined ? null : Number(row[k]));
      return {
        vehiclesWithData: num('vehicles_with_data'),
        vehicleDays: num('vehicle_days'),
        readings: num('readings'),
        firstReadingMs: opt('first_reading_ms'),
        lastReadingMs: opt('last_reading_ms'),
        findings: num('findings'),
        findingsChangedMs: opt('findings_changed_ms'),
        serviceEvents: num('service_events'),
        serviceEventsChangedMs: opt('service_events_changed_ms'),
        pendingVehicles: num('pending_vehicles'),
      };
    },

    /** ISO weeks of the fleet's archived reports generated after `sinceMs`, newest first. */
    async archivedWeeks(fleetId: string, sinceMs: number): Promise<string[]> {
      const rows = await db
        .selectFrom('weekly_reports')
        .select('iso_week')
        .where('fleet_id', '=', fleetId)
        .where('generated_at', '>=', new Date(sinceMs))
        .orderBy('iso_week', 'desc')
        .execute();
      return rows.map((r) => r.iso_week);
    },

    async archived(fleetId: string, isoWeek: string): Promise<ArchivedReport | undefined> {
      const r = await db
        .selectFrom('weekly_reports')
        .selectAll()
        .where('fleet_id', '=', fleetId)
        .where('iso_week', '=', isoWeek)
        .executeTakeFirst();
      return (
        r && {
          fleetId: r.fleet_id,
          isoWeek: r.iso_week,
          generatedAt: r.generated_at,
          json: r.report_json,
          html: r.report_html,
          csv: r.worklist_csv,
        }
      );
    },

    /** A page of the fleet's archived reports, newest week first. */
    async archivedPage(fleetId: string, pageRequest: PageRequest): Promise<Page<ArchivedReportEntry>> {
      const rows = await db
        .selectFrom('weekly_reports')
        .select([
          'iso_week',
          'generated_at',
          sql<boolean | null>`(report_json->'coverage'->>'complete')::boolean`.as('complete'),
          sql<number | null>`jsonb_array_length(report_json->'workList')`.as('work_items'),
        ])
        .select(keySelections(ARCHIVE_ORDER))
        .where('fleet_id', '=', fleetId)
        .where(afterKeySql(ARCHIVE_ORDER, pageRequest.after))
        .orderBy(orderBySql(ARCHIVE_ORDER))
        .limit(pageRequest.limit + 1)
        .execute();
      return pageOf(rows, pageRequest.limit, ARCHIVE_ORDER.length, (r) => ({
        isoWeek: r.iso_week,
        generatedAt: r.generated_at.toISOString(),
        complete: r.complete,
        workItems: r.work_items === null ? null : Number(r.work_items),
      }));
    },

    async isArchived(fleetId: string, isoWeek: string): Promise<boolean> {
      const r = await db
        .selectFrom('weekly_reports')
        .select('iso_week')
        .where('fleet_id', '=', fleetId)
        .where('iso_week', '=', isoWeek)
        .executeTakeFirst();
      return r !== undefined;
    },
  };
}

export type ReportRepository = ReturnType<typeof createReportRepository>;
