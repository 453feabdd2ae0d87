import { sql } from 'kysely';
import type { DatabaseHandle } from '../services/db/database.js';
import { createFleetsRepository } from '../services/db/fleets-repository.js';
import { monthIndexOf, PartitionKeeper } from '../services/db/partitions.js';
import { refreshOpenFindingsBrief } from '../services/db/vehicle-risk.js';
import { DAY_MS } from '../services/time/durations.js';

export const BENCH_START_MS = Date.UTC(2026, 8, 7);

/** Each simulated gateway posts a vehicle's readings every this many seconds (30 readings at 10 s). */
const POST_EVERY_S = 300;

/**
 * Readings for `vehicles` vehicles over `days` days, made in SQL (fast): one 8-hour shift a day at
 * 10 s, a Newton warm-up from a cold-soaked start to a regulated ~90 °C with 1 °C quantisation,
 * ambient varying by day and vehicle (repeating every 20 vehicles), speed and rpm varying along the shift. Rows are inserted
 * in the order ingest would store them: in time, each vehicle's readings in posts of 5 minutes,
 * the posts of all vehicles interleaved, so one vehicle's readings are spread over many heap
 * pages (about 30 of a page's ~120 rows are one vehicle's). Every vehicle is queued for
 * analysis. Returns the number of readings.
 */
export async function seedReadings(
  h: DatabaseHandle,
  fleetId: string,
  vehicles: number,
  days: number,
): Promise<number> {
  const db = h.db;
  await createFleetsRepository(db).ensure(fleetId);
  const months = new Set<number>();
  for (let d = 0; d <= days; d++) months.add(monthIndexOf(BENCH_START_MS + d * DAY_MS));
  await new PartitionKeeper().ensure(db, months);
  const ids = Array.from({ length: vehicles }, (_, i) => `${fleetId}-${String(i + 1).padStart(5, '0')}`);
  await sql`insert into vehicles (vehicle_id, fleet_id, engine_family) select unnest(${ids}::text[]), ${fleetId}, 'bench-13l'`.execute(
    db,
  );
  for (let d = 0; d < days; d++) {
    await sql`
      insert into readings (vehicle_id, ts, coolant_c, ambient_c, speed_kph, rpm)
      select v, to_timestamp(${BENCH_START_MS / 1000}::float8 + ${d} * 86400 + 6 * 3600 + s),
             round(least(89 + (s / 600) % 3, 104 - (94 - amb) * exp(-s / 480.0))),
             amb, 30 + (s / 60) % 50, 900 + (s / 30) % 900
      from unnest(${ids}::text[]) with ordinality as u(v, k),
           lateral (select (5 + 10 * sin(${d} / 5.0 + 1 + (k - 1) % 20))::real as amb) a,
           generate_series(0, 8 * 3600, 10) s
      order by s / ${POST_EVERY_S}, k, s`.execute(db);
  }
  await sql`insert into analysis_queue (vehicle_id, fleet_id, dirty_from) select unnest(${ids}::text[]), ${fleetId}, to_timestamp(${BENCH_START_MS / 1000})`.execute(
    db,
  );
  await sql`analyze readings`.execute(db);
  return vehicles * days * (8 * 360 + 1);
}

/**
 * The at-risk list's data for `vehicles` vehicles: analysis state for each, and 1–3 findings on
 * every third vehicle (severity and confidence varying), all in one fleet.
 */
export async function seedFindings(h: DatabaseHandle, fleetId: string, vehicles: number): Promise<number> {
  const db = h.db;
  await createFleetsRepository(db).ensure(fleetId);
  await sql`
    insert into vehicles (vehicle_id, fleet_id) select ${fleetId} || '-' || lpad(g::text, 5, '0'), ${fleetId} from generate_series(1, ${vehicles}) g`.execute(
    db,
  );
  await sql`
    insert into findings (vehicle_id, finding_id, fleet_id, finding_key, kind, severity, confidence, first_seen, last_seen, summary, recommended_check, metrics, evidence, raised_at)
    select ${fleetId} || '-' || lpad(g::text, 5, '0'), gen_random_uuid()::text, ${fleetId}, k.kind || '@2026-09-07T00:00:00.000Z', k.kind,
           (array['advisory', 'warning', 'critical'])[1 + (g + k.n) % 3], 0.3 + ((g * 7 + k.n) % 70) / 100.0,
           now() - interval '10 days', now() - (g % 9) * interval '1 day',
           'Since 2026-10-01 the coolant overshoots by about 9 °C when the thermostat opens (usually 3 °C), a sign of a sticking thermostat.',
           'Check the thermostat for sticking. Never open a hot pressurised cooling system.', '{"medianZ": 3.2}',
           '[{"at": 1790000000000, "scope": "run", "metric": "overshootC", "value": 9, "expected": 3, "z": 3.2}]', now()
    from generate_series(1, ${vehicles}) g
    join lateral (select n, (array['overshoot', 'slow-warmup', 'overheating-trend'])[n] as kind from generate_series(1, 1 + g % 3) n) k on true
    where g % 3 = 0`.execute(db);
  await sql`
    insert into vehicle_analysis (vehicle_id, fleet_id, risk_score, open_findings, max_severity, last_reading_at)
    select v.vehicle_id, v.fleet_id, coalesce(f.risk, 0), coalesce(f.n, 0), f.max_sev, now()
    from vehicles v left join lateral (
      select count(*)::int as n, round(100 * (1 - exp(sum(ln(1 - 0.95 * confidence * 0.5)))))::real as risk,
             (array['advisory', 'warning', 'critical'])[max(case severity when 'advisory' then 1 when 'warning' then 2 else 3 end)] as max_sev
      from findings where findings.vehicle_id = v.vehicle_id) f on true
    where v.fleet_id = ${fleetId}`.execute(db);
  await refreshOpenFindingsBrief(db, sql`a.fleet_id = ${fleetId}`);
  await sql`analyze`.execute(db);
  const n = await sql<{ n: number }>`select count(*)::int as n from findings where fleet_id = ${fleetId}`.execute(db);
  return n.rows[0]?.n ?? 0;
}
