import { sql, type Kysely } from 'kysely';
import type { DayAggregate } from '../analysis/day-aggregates.js';
import type { ServiceEvent } from '../analysis/findings/service-events.js';
import type { RunMetrics } from '../analysis/run-metrics.js';
import type { SensorEvent } from '../analysis/sensor-events.js';
import { utcDay, utcDayStartMs } from '../analysis/sample-arrays.js';
import { DEFAULT_VEHICLE_PROFILE, type VehicleProfile } from '../analysis/vehicle-profile.js';
import { DEPOT_JOIN, SITE_PRESSURE } from './vehicle-site.js';
import type { Database } from './schema.js';

/** What the worker knows about a vehicle before analysing it. */
export interface VehicleState {
  profile: VehicleProfile;
  /** Start of the day of the vehicle's open run at the last pass, ms; null if none. */
  resumeFromMs: number | null;
  /** Latest reading analysed so far, ms; null before the first pass. */
  lastReadingMs: number | null;
}

/** Stored results before a window start, for re-deriving findings from the whole history. */
export interface StoredHistory {
  runs: RunMetrics[];
  days: DayAggregate[];
  sensorEvents: SensorEvent[];
  serviceEvents: ServiceEvent[];
}

/** The results of one pass over [windowFromMs, ∞). */
export interface WindowResults {
  runs: RunMetrics[];
  days: DayAggregate[];
  sensorEvents: SensorEvent[];
}

const ts = (msValue: number) => sql`to_timestamp(${msValue}::float8 / 1000)`;

/** Reads and writes the worker's derived tables: engine_runs, vehicle_days, sensor_events. */
export function createAnalysisStore(db: Kysely<Database>) {
  return {
    /** What the worker knows about each vehicle before analysing it, in the order asked (one statement for a batch). */
    async vehicleStates(vehicleIds: readonly string[]): Promise<VehicleState[]> {
      const r = await sql<{
        engine_family: string | null;
        thermostat_open_c: number;
        cap_pressure_kpa: number;
        glycol_percent: number;
        atmospheric_pressure_kpa: number | null;
        resume_from: Date | null;
        last_reading_at: Date | null;
      }>`
        select v.engine_family, v.thermostat_open_c, v.cap_pressure_kpa, v.glycol_percent, ${SITE_PRESSURE} as atmospheric_pressure_kpa, a.resume_from, a.last_reading_at
        from unnest(${[...vehicleIds]}::text[]) with ordinality as l(vehicle_id, o)
        left join vehicles v on v.vehicle_id = l.vehicle_id
        ${DEPOT_JOIN}
        left join vehicle_analysis a on a.vehicle_id = l.vehicle_id
        order by l.o`.execute(db);
      return r.rows.map((x) => ({
        profile:
          x.engine_family !== null
            ? {
                engineFamily: x.engine_family,
                thermostatOpenC: x.thermostat_open_c,
                capPressureKpa: x.cap_pressure_kpa,
                glycolPercent: x.glycol_percent,
                ...(x.atmospheric_pressure_kpa !== null ? { atmosphericPressureKpa: x.atmospheric_pressure_kpa } : {}),
              }
            : { ...DEFAULT_VEHICLE_PROFILE },
        resumeFromMs: x.resume_from?.getTime() ?? null,
        lastReadingMs: x.last_reading_at?.getTime() ?? null,
      }));
    },

    /**
     * Moves each window start back over any stored run that reaches it (or ends less than its
     * `gapMs` before it), to the UTC midnight before that run's start: late readings may extend,
     * merge or split it, so it is recomputed whole. Repeats until no stored run reaches a start;
     * one statement per repetition for the whole batch. Returns the starts in the order given.
     */
    async extendOverStoredRuns(
      windows: ReadonlyArray<{ vehicleId: string; fromMs: number; gapMs: number }>,
    ): Promise<number[]> {
      const from = windows.map((w) => w.fromMs);
      let moving = windows.map((_, k) => k);
      while (moving.length > 0) {
        const r = await sql<{ start_ts: Date | null }>`
          select (select min(start_ts) from engine_runs r
                  where r.vehicle_id = l.vehicle_id and r.start_ts < to_timestamp(l.from_ms / 1000) and r.end_ts >= to_timestamp(l.since_ms / 1000)) as start_ts
          from unnest(${moving.map((k) => windows[k]!.vehicleId)}::text[], ${moving.map((k) => from[k]!)}::float8[], ${moving.map((k) => from[k]! - windows[k]!.gapMs)}::float8[])
            with ordinality as l(vehicle_id, from_ms, since_ms, o)
          order by l.o`.execute(db);
        moving = moving.filter((k, j) => {
          const start = r.rows[j]?.start_ts;
          if (!start) return false;
          const day = utcDayStartMs(start.getTime());
          if (day >= from[k]!) return false;
          from[k] = day;
          return true;
        });
      }
      return from;
    },

    /** Runs, days and sensor events stored before `beforeMs`, and every service event. */
    async historyBefore(vehicleId: string, beforeMs: number): Promise<StoredHistory> {
      // One statement for the three derived tables and the service events (each aggregated in
      // order): the worker's per-vehicle statements cost about as much PostgreSQL CPU as reading
      // its readings. A service event's time travels as epoch ms, floored as a JS Date holds it.
      const r = await sql<{
        runs: RunMetrics[];
        days: DayAggregate[];
        events: SensorEvent[];
        services: ServiceEvent[];
      }>`
        select (select coalesce(jsonb_agg(metrics order by start_ts), '[]') from engine_runs where vehicle_id = ${vehicleId} and start_ts < ${ts(beforeMs)}) as runs,
               (select coalesce(jsonb_agg(metrics order by day), '[]') from vehicle_days where vehicle_id = ${vehicleId} and day < ${utcDay(beforeMs)}::date) as days,
               (select coalesce(jsonb_agg(event order by run_start, kind), '[]') from sensor_events where vehicle_id = ${vehicleId} and run_start < ${ts(beforeMs)}) as events,
               (select coalesce(jsonb_agg(jsonb_build_object('kind', kind, 'at', floor(extract(epoch from at) * 1000)) order by at, event_id), '[]')
                from service_events where vehicle_id = ${vehicleId} and deleted_at is null) as services`.execute(db);
      const row = r.rows[0];
      return {
        runs: row?.runs ?? [],
        days: row?.days ?? [],
        sensorEvents: row?.events ?? [],
        serviceEvents: row?.services ?? [],
      };
    },

    /** Replaces everything derived from `fromMs` (a UTC midnight) on with `results`. */
    async replaceFrom(trx: Kysely<Database>, vehicleId: string, fromMs: number, results: WindowResults): Promise<void> {
      // Two statements: the deletes of the three tables, then their inserts (each table's rows
      // travel as one JSON array parameter). Data-modifying CTEs all run, read or not.
      await sql`
        with runs as (delete from engine_runs where vehicle_id = ${vehicleId} and start_ts >= ${ts(fromMs)}),
             days as (delete from vehicle_days where vehicle_id = ${vehicleId} and day >= ${utcDay(fromMs)}::date)
        delete from sensor_events where vehicle_id = ${vehicleId} and run_start >= ${ts(fromMs)}`.execute(trx);
      if (results.runs.length + results.days.length + results.sensorEvents.length === 0) return;
      await sql`
        with runs as (
          insert into engine_runs (vehicle_id, start_ts, end_ts, start_kind, open, metrics)
          select ${vehicleId}, to_timestamp((e->>'startMs')::float8 / 1000), to_timestamp((e->>'endMs')::float8 / 1000), e->>'startKind', (e->>'open')::boolean, e
          from jsonb_array_elements(${JSON.stringify(results.runs)}::jsonb) e),
        days as (
          insert into vehicle_days (vehicle_id, day, metrics)
          select ${vehicleId}, (e->>'day')::date, e from jsonb_array_elements(${JSON.stringify(results.days)}::jsonb) e)
        insert into sensor_events (vehicle_id, run_start, kind, event)
        select ${vehicleId}, to_timestamp((e->>'runStartMs')::float8 / 1000), e->>'kind', e
        from jsonb_array_elements(${JSON.stringify(results.sensorEvents)}::jsonb) e`.execute(trx);
    },

    /** Records the pass: watermark, latest reading, readings analysed. */
    async recordPass(
      trx: Kysely<Database>,
      p: {
        vehicleId: string;
        fleetId: string;
        resumeFromMs: number | null;
        lastRunEndMs: number | null;
        lastReadingMs: number | null;
        readings: number;
      },
    ): Promise<void> {
      const opt = (v: number | null) => (v === null ? sql`null::timestamptz` : ts(v));
      await sql`
        insert into vehicle_analysis (vehicle_id, fleet_id, resume_from, last_run_end, last_reading_at, readings_analysed, analysed_at)
        values (${p.vehicleId}, ${p.fleetId}, ${opt(p.resumeFromMs)}, ${opt(p.lastRunEndMs)}, ${opt(p.lastReadingMs)}, ${p.readings}, now())
        on conflict (vehicle_id) do update set
          fleet_id = excluded.fleet_id, resume_from = excluded.resume_from, last_run_end = excluded.last_run_end,
          last_reading_at = excluded.last_reading_at,
          readings_analysed = vehicle_analysis.readings_analysed + excluded.readings_analysed, analysed_at = now()`.execute(
        trx,
      );
    },
  };
}

export type AnalysisStore = ReturnType<typeof createAnalysisStore>;

/** The time of a vehicle's latest analysed reading (its analysis time), or undefined before its first analysis. */
export async function lastAnalysedReadingAt(executor: Kysely<Database>, vehicleId: string): Promise<Date | undefined> {
  const row = await executor
    .selectFrom('vehicle_analysis')
    .select('last_reading_at')
    .where('vehicle_id', '=', vehicleId)
    .executeTakeFirst();
  return row?.last_reading_at ?? undefined;
}
