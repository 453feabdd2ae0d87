import { sql, type Kysely, type RawBuilder } from 'kysely';
import {
  afterKeySql,
  keyColumnsSql,
  orderBySql,
  pageOf,
  reversed,
  type Page,
  type PageRequest,
  type SortColumn,
} from './keyset.js';
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

const hasStatus = (status: string) => sql`a.open_findings_brief @> ${JSON.stringify([{ status }])}::jsonb`;

/** Risk negated, so that "highest first" is ascending like the rest of each order (one direction: a row comparison, one index range). */
const RISK_DESC: SortColumn = { sql: sql`(-a.risk_score)`, dir: 'asc', type: 'number', real: true };
const VEHICLE: SortColumn = { sql: sql.ref('a.vehicle_id'), dir: 'asc', type: 'text' };

/**
 * Each sort in its `asc` order, every column ascending and the last the vehicle id (unique);
 * `desc` is the exact reverse. Each is the order of one partial index over the vehicles at risk
 * (migration 0011), so a page is one index range from the cursor's key on (the row comparison of
 * keyset.ts). Priority and since break ties by risk (highest first in asc, reversed in desc); the
 * depot sort by vehicle id, its index being on `vehicles`.
 */
const ASC_ORDERS: Readonly<Record<BoardSort, readonly SortColumn[]>> = {
  // asc: lowest risk first = the reverse of highest risk first.
  risk: reversed([RISK_DESC, VEHICLE]),
  priority: [
    {
      sql: sql`((case a.max_severity when 'critical' then 0 when 'warning' then 1 else 2 end)::float8)`,
      dir: 'asc',
      type: 'number',
    },
    RISK_DESC,
    VEHICLE,
  ],
  since: [{ sql: sql.ref('a.open_since_ms'), dir: 'asc', type: 'number' }, RISK_DESC, VEHICLE],
  vehicle: [VEHICLE],
  // Vehicles without a depot after every depot (asc).
  depot: [
    { sql: sql`((v.depot is null)::int::float8)`, dir: 'asc', type: 'number' },
    { sql: sql`coalesce(v.depot, '')`, dir: 'asc', type: 'text' },
    { sql: sql.ref('v.vehicle_id'), dir: 'asc', type: 'text' },
  ],
};

/** The key order of a sort and direction (`decodeCursor` checks a cursor against it). */
export const boardOrder = (sort: BoardSort, desc: boolean): readonly SortColumn[] =>
  desc ? reversed(ASC_ORDERS[sort]) : ASC_ORDERS[sort];

/** The tag of a sort's cursors: a cursor of one sort or direction is refused by another. */
export const boardCursorTag = (sort: BoardSort, desc: boolean): string => `board:${sort}:${desc ? 'desc' : 'asc'}`;

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
 * paged by cursor (keyset.ts), and the fleet's counts. Everything is read from vehicle_analysis (risk and the brief of
 * the unresolved findings, kept by refreshVehicleRisk) joined to vehicles (label, depot): no
 * findings scan per request.
 */
export function createFleetBoardRepository(db: Kysely<Database>) {
  return {
    /**
     * One page of rows after `pageRequest.after` in the order of `sort`: the filter, the key bound,
     * the order and limit + 1 in one statement over vehicle_analysis joined to vehicles. With a
     * fleet, every sort reads its index from the key on (migration 0011; the fleet is named on both
     * tables so the depot sort's index on `vehicles` applies): the first page and the hundredth cost
     * the same, where the offset paging sorted the whole filtered set and skipped it. Across every
     * fleet (an admin key naming none) the rows are sorted.
     */
    async page(f: BoardFilter, sort: BoardSort, desc: boolean, pageRequest: PageRequest): Promise<Page<BoardRow>> {
      const order = boardOrder(sort, desc);
      const r = await sql<
        {
          vehicle_id: string;
          label: string | null;
          depot: string | null;
          risk_score: number;
          max_severity: Severity;
          last_reading_at: Date | null;
          brief: FindingBriefView[];
        } & Record<string, unknown>
      >`
        select a.vehicle_id, v.label, v.depot, a.risk_score, a.max_severity, a.last_reading_at,
               a.open_findings_brief as brief, ${keyColumnsSql(order)}
        from vehicle_analysis a join vehicles v on v.vehicle_id = a.vehicle_id
        where ${where(f)} ${f.fleetId === null ? sql`` : sql`and v.fleet_id = ${f.fleetId}`}
          and ${afterKeySql(order, pageRequest.after)}
        order by ${orderBySql(order)}
        limit ${pageRequest.limit + 1}`.execute(db);
      return pageOf(r.rows, pageRequest.limit, order.length, (row) => ({
        vehicleId: row.vehicle_id,
        label: row.label,
        depot: row.depot,
        riskScore: row.risk_score,
        maxSeverity: row.max_severity,
        lastReadingAt: row.last_reading_at,
        findings: row.brief,
      }));
    },

    /**
     * The number of rows the filter matches (every page, whatever the cursor). A count over the
     * partial index of the fleet's vehicles at risk; `vehicles` is joined only for a depot or a search.
     */
    async total(f: BoardFilter): Promise<number> {
      const join = f.depot || f.search ? sql`join vehicles v on v.vehicle_id = a.vehicle_id` : sql``;
      const r = await sql<{ n: string | number }>`
        select count(*) as n from vehicle_analysis a ${join} where ${where(f)}`.execute(db);
      return toNumber(r.rows[0]?.n);
    },

    /**
     * The fleet's counts at `nowMs`: vehicles, those at risk, reporting (analysed data within
     * `silentMs`), silent gateways (none within it, or never), and vehicles with a finding whose
     * onset is within the last `newMs`.
     */
    async counts(fleetId: string | null, nowMs: number, silentMs: number, newMs: number): Promise<BoardCounts> {
      const since = new Date(nowMs - silentMs);
      const newFrom = new Date(nowMs - newMs);
      // "New this week" from the findings (index on fleet, status), not by parsing every brief.
      const r = await sql<Record<string, string | number>>`
        select count(*) as vehicles,
               count(*) filter (where a.open_findings > 0) as at_risk,
               count(*) filter (where a.last_reading_at >= ${since}) as reporting,
               count(*) filter (where a.last_reading_at is null or a.last_reading_at < ${since}) as silent,
               (select count(distinct f.vehicle_id) from findings f
                 where (${fleetId}::text is null or f.fleet_id = ${fleetId}) and f.status in ('open', 'acknowledged', 'deferred')
                   and f.first_seen >= ${newFrom}) as new_this_week
        from vehicles v left join vehicle_analysis a on a.vehicle_id = v.vehicle_id
        where (${fleetId}::text is null or v.fleet_id = ${fleetId})`.execute(db);
      const row = r.rows[0] ?? {};
      return {
        vehicles: toNumber(row.vehicles),
        atRisk: toNumber(row.at_risk),
        reporting: toNumber(row.reporting),
        silentGateways: toNumber(row.silent),
        newThisWeek: toNumber(row.new_this_week),
      };
    },

    /** A vehicle's latest analysed reading, ms (null: never analysed): what its charts are drawn as of. */
    async analysedUpTo(vehicleId: string): Promise<number | null> {
      const row = await db
        .selectFrom('vehicle_analysis')
        .select('last_reading_at')
        .where('vehicle_id', '=', vehicleId)
        .executeTakeFirst();
      return row?.last_reading_at?.getTime() ?? null;
    },

    /**
     * The depots the fleet's vehicles name, for the filter. For one fleet a loose index scan of
     * vehicles_board_depot_idx (migration 0011): one index probe per depot, where `select distinct`
     * read every vehicle of the fleet (7.2 ms of execution at 10,000 vehicles, load average 8).
     */
    async depots(fleetId: string | null): Promise<string[]> {
      if (fleetId === null) {
        const rows = await db
          .selectFrom('vehicles')
          .select('depot')
          .distinct()
          .where('depot', 'is not', null)
          .orderBy('depot')
          .execute();
        return rows.map((r) => r.depot!);
      }
      // The index's own expressions (named depot and in the fleet), so each step is one probe of it.
      const named = sql`v.fleet_id = ${fleetId} and ((v.depot is null)::int::float8) = 0`;
      const r = await sql<{ depot: string }>`
        with recursive d(depot) as (
          (select coalesce(v.depot, '') from vehicles v where ${named} order by coalesce(v.depot, '') limit 1)
          union all
          select (select coalesce(v.depot, '') from vehicles v where ${named} and coalesce(v.depot, '') > d.depot
                  order by coalesce(v.depot, '') limit 1)
          from d where d.depot is not null)
        select depot from d where depot is not null`.execute(db);
      return r.rows.map((row) => row.depot);
    },
  };
}
