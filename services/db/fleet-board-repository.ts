import { sql, type Kysely, type RawBuilder } from 'kysely';
import type { Severity } from '../analysis/findings/finding.js';
import { type Database, toNumber } from './schema.js';
import type { FindingBriefView } from './vehicle-risk.js';

export const BOARD_SORTS = ['risk', 'priority', 'since', 'vehicle', 'depot'] as const;
export type BoardSort = (typeof BOARD_SORTS)[number];
export const BOARD_MARKS = ['acknowledged', 'deferred', 'marked', 'unmarked'] as const;
/** acknowledged / deferred: a finding of the row has that status; marked: either; unmarked: neither. */
export type BoardMark = (typeof BOARD_MARKS)[number];

export interface BoardFilter {
  /** null: every fleet (an admin key without a fleet). */
  fleetId: string | null;
  severity?: Severity;
  kind?: string;
  depot?: string;
  mark?: BoardMark;
  /** Part of the vehicle id or label, any case. */
  search?: string;
}

export interface BoardRow {
  vehicleId: string;
  label: string | null;
  depot: string | null;
  riskScore: number;
  maxSeverity: Severity;
  lastReadingAt: Date | null;
  findings: FindingBriefView[];
}

export interface BoardCounts {
  vehicles: number;
  atRisk: number;
  reporting: number;
  silentGateways: number;
  newThisWeek: number;
}

/** The earliest onset among a row's unresolved findings (ISO text sorts as time). */
const SINCE = sql`(select min(e->>'firstSeen') from jsonb_array_elements(a.open_findings_brief) e)`;
const SEVERITY_RANK = sql`case a.max_severity when 'critical' then 0 when 'warning' then 1 else 2 end`;
const hasStatus = (status: string) => sql`a.open_findings_brief @> ${JSON.stringify([{ status }])}::jsonb`;

const ORDER: Readonly<Record<BoardSort, (desc: boolean) => RawBuilder<unknown>>> = {
  risk: (d) => sql`a.risk_score ${sql.raw(d ? 'desc' : 'asc')}, a.vehicle_id`,
  priority: (d) => sql`${SEVERITY_RANK} ${sql.raw(d ? 'desc' : 'asc')}, a.risk_score desc, a.vehicle_id`,
  since: (d) => sql`${SINCE} ${sql.raw(d ? 'desc' : 'asc')}, a.risk_score desc, a.vehicle_id`,
  vehicle: (d) => sql`a.vehicle_id ${sql.raw(d ? 'desc' : 'asc')}`,
  depot: (d) => sql`v.depot ${sql.raw(d ? 'desc nulls last' : 'asc nulls last')}, a.risk_score desc, a.vehicle_id`,
};

function where(f: BoardFilter): RawBuilder<unknown> {
  const parts: RawBuilder<unknown>[] = [sql`a.open_findings > 0`];
  if (f.fleetId !== null) parts.push(sql`a.fleet_id = ${f.fleetId}`);
  if (f.severity) parts.push(sql`a.max_severity = ${f.severity}`);
  if (f.kind) parts.push(sql`a.open_findings_brief @> ${JSON.stringify([{ kind: f.kind }])}::jsonb`);
  if (f.depot) parts.push(sql`v.depot = ${f.depot}`);
  if (f.mark === 'acknowledged') parts.push(hasStatus('acknowledged'));
  if (f.mark === 'deferred') parts.push(hasStatus('deferred'));
  if (f.mark === 'marked') parts.push(sql`(${hasStatus('acknowledged')} or ${hasStatus('deferred')})`);
  if (f.mark === 'unmarked') parts.push(sql`not (${hasStatus('acknowledged')} or ${hasStatus('deferred')})`);
  if (f.search) {
    const pattern = `%${f.search.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
    parts.push(sql`(a.vehicle_id ilike ${pattern} or v.label ilike ${pattern})`);
  }
  return sql.join(parts, sql` and `);
}

/**
 * The web view's fleet page: one row per vehicle with unresolved findings, filtered, sorted and
 * paged, and the fleet's counts. Everything is read from vehicle_analysis (risk and the brief of
 * the unresolved findings, kept by refreshVehicleRisk) joined to vehicles (label, depot): no
 * findings scan per request.
 */
export function createFleetBoardRepository(db: Kysely<Database>) {
  return {
    /**
     * One page of rows and the number of rows the filter matches. Offset paging: the filtered
     * set is at most the fleet (10,000 rows measured in bench/fleet-page.ts), sorted in one pass,
     * and a planner jumps to page n; a cursor would not save that sort.
     */
    async page(f: BoardFilter, sort: BoardSort, desc: boolean, limit: number, offset: number): Promise<{ total: number; rows: BoardRow[] }> {
      const result = await sql<{ vehicle_id: string; label: string | null; depot: string | null; risk_score: number; max_severity: Severity; last_reading_at: Date | null; brief: FindingBriefView[]; total: string | number }>`
        select a.vehicle_id, v.label, v.depot, a.risk_score, a.max_severity, a.last_reading_at, a.open_findings_brief as brief, count(*) over () as total
        from vehicle_analysis a join vehicles v on v.vehicle_id = a.vehicle_id
        where ${where(f)}
        order by ${ORDER[sort](desc)}
        limit ${limit} offset ${offset}`.execute(db);
      let total = toNumber(result.rows[0]?.total);
      if (result.rows.length === 0 && offset > 0) {
        // Past the last page: the window count is not there, count apart.
        const c = await sql<{ n: string | number }>`select count(*) as n from vehicle_analysis a join vehicles v on v.vehicle_id = a.vehicle_id where ${where(f)}`.execute(db);
        total = toNumber(c.rows[0]?.n);
      }
      return {
        total,
        rows: result.rows.map((r) => ({
          vehicleId: r.vehicle_id, label: r.label, depot: r.depot, riskScore: r.risk_score, maxSeverity: r.max_severity,
          lastReadingAt: r.last_reading_at, findings: r.brief,
        })),
      };
    },

    /**
     * The fleet's counts at `nowMs`: vehicles, those at risk, reporting (analysed data within
     * `silentMs`), silent gateways (none within it, or never), and vehicles with a finding whose
     * onset is within the last `newMs`.
     */
    async counts(fleetId: string | null, nowMs: number, silentMs: number, newMs: number): Promise<BoardCounts> {
      const since = new Date(nowMs - silentMs);
      const newFrom = new Date(nowMs - newMs).toISOString();
      const r = await sql<Record<string, string | number>>`
        select count(*) as vehicles,
               count(*) filter (where a.open_findings > 0) as at_risk,
               count(*) filter (where a.last_reading_at >= ${since}) as reporting,
               count(*) filter (where a.last_reading_at is null or a.last_reading_at < ${since}) as silent,
               count(*) filter (where a.open_findings > 0 and exists (
                 select 1 from jsonb_array_elements(a.open_findings_brief) e where e->>'firstSeen' >= ${newFrom})) as new_this_week
        from vehicles v left join vehicle_analysis a on a.vehicle_id = v.vehicle_id
        where (${fleetId}::text is null or v.fleet_id = ${fleetId})`.execute(db);
      const row = r.rows[0] ?? {};
      return {
        vehicles: toNumber(row.vehicles), atRisk: toNumber(row.at_risk), reporting: toNumber(row.reporting),
        silentGateways: toNumber(row.silent), newThisWeek: toNumber(row.new_this_week),
      };
    },

    /** A vehicle's latest analysed reading, ms (null: never analysed): what its charts are drawn as of. */
    async analysedUpTo(vehicleId: string): Promise<number | null> {
      const row = await db.selectFrom('vehicle_analysis').select('last_reading_at').where('vehicle_id', '=', vehicleId).executeTakeFirst();
      return row?.last_reading_at?.getTime() ?? null;
    },

    /** The depots the fleet's vehicles name, for the filter. */
    async depots(fleetId: string | null): Promise<string[]> {
      let q = db.selectFrom('vehicles').select('depot').distinct().where('depot', 'is not', null);
      if (fleetId !== null) q = q.where('fleet_id', '=', fleetId);
      const rows = await q.orderBy('depot').execute();
      return rows.map((r) => r.depot!);
    },
  };
}
