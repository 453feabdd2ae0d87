import { sql, type Kysely, type Selectable } from 'kysely';
import type { Severity } from '../analysis/findings/finding.js';
import { defaultProfileNote } from '../analysis/findings/profile-assumptions.js';
import { resolvedKinds, type ServiceEventKind } from '../analysis/findings/service-events.js';
import { SEA_LEVEL_PRESSURE_KPA } from '../analysis/physics/atmosphere.js';
import {
  afterKeySql,
  epochMs,
  keySelections,
  orderBySql,
  pageOf,
  type Page,
  type PageRequest,
  type SortColumn,
} from './keyset.js';
import type { Database, FindingsTable } from './schema.js';
import { vehicleContexts, type SiteSource, type VehicleContext } from './vehicle-site.js';

/**
 * open → acknowledged (seen) → resolved; `deferred` (postponed until a date, with a reason) sits
 * beside acknowledged. Every status but `resolved` is unresolved: it counts for risk and keeps
 * the vehicle in the at-risk list.
 */
export type FindingStatus = 'open' | 'acknowledged' | 'deferred' | 'resolved';

/** The statuses of findings that still need work. */
export const UNRESOLVED_STATUSES: readonly FindingStatus[] = ['open', 'acknowledged', 'deferred'];

/** A finding as the planner API shows it (times ISO 8601). */
export interface FindingView {
  id: string;
  vehicleId: string;
  fleetId: string;
  key: string;
  kind: string;
  subKind: string | null;
  severity: Severity;
  confidence: number;
  status: FindingStatus;
  firstSeen: string;
  lastSeen: string;
  raisedAt: string | null;
  summary: string;
  recommendedCheck: string;
  troubleCode: string | null;
  metrics: Record<string, number>;
  evidence: Array<{
    at: string;
    scope: string;
    metric: string;
    value: number;
    expected: number | null;
    z: number | null;
  }>;
  acknowledgedAt: string | null;
  acknowledgedBy: string | null;
  resolvedAt: string | null;
  resolvedReason: string | null;
  deferredUntil: string | null;
  deferredReason: string | null;
  deferredBy: string | null;
  updatedAt: string;
  /** The vehicle runs on the default profile (its boiling and freezing figures are assumptions). */
  defaultProfile: boolean;
  /** Which of this finding's figures the default profile sets, in words; null when none. */
  profileNote: string | null;
  depot: string | null;
  /** The atmospheric pressure the vehicle's boiling point uses, kPa, and where it comes from. */
  atmosphericPressureKpa: number;
  siteSource: SiteSource;
}

/** Severities at or above `min`. */
export function severitiesFrom(min: Severity): Severity[] {
  const order: Severity[] = ['advisory', 'warning', 'critical'];
  return order.slice(order.indexOf(min));
}

const iso = (d: Date | null) => (d ? d.toISOString() : null);

/** Context of a vehicle that is gone (never for a stored finding: findings belong to vehicles). */
const NO_CONTEXT: VehicleContext = {
  depot: null,
  depotName: null,
  atmosphericPressureKpa: SEA_LEVEL_PRESSURE_KPA,
  siteSource: 'sea level',
  defaultProfile: false,
};

export function toFindingView(row: Selectable<FindingsTable>, ctx: VehicleContext = NO_CONTEXT): FindingView {
  const evidence = (
    row.evidence as Array<{
      at: number;
      scope: string;
      metric: string;
      value: number;
      expected: number | null;
      z: number | null;
    }>
  ).map((e) => ({ ...e, at: new Date(e.at).toISOString() }));
  return {
    id: row.finding_id,
    vehicleId: row.vehicle_id,
    fleetId: row.fleet_id,
    key: row.finding_key,
    kind: row.kind,
    subKind: row.sub_kind,
    severity: row.severity,
    confidence: row.confidence,
    status: row.status,
    firstSeen: row.first_seen.toISOString(),
    lastSeen: row.last_seen.toISOString(),
    raisedAt: iso(row.raised_at),
    summary: row.summary,
    recommendedCheck: row.recommended_check,
    troubleCode: row.trouble_code,
    metrics: row.metrics,
    evidence,
    acknowledgedAt: iso(row.acknowledged_at),
    acknowledgedBy: row.acknowledged_by,
    resolvedAt: iso(row.resolved_at),
    resolvedReason: row.resolved_reason,
    deferredUntil: iso(row.deferred_until),
    deferredReason: row.deferred_reason,
    deferredBy: row.deferred_by,
    updatedAt: row.updated_at.toISOString(),
    defaultProfile: ctx.defaultProfile,
    profileNote: defaultProfileNote(row.kind, ctx.defaultProfile),
    depot: ctx.depot,
    atmosphericPressureKpa: ctx.atmosphericPressureKpa,
    siteSource: ctx.siteSource,
  };
}

/** Finding rows as views, with their vehicles' profile and site (one more statement). */
export async function toFindingViews(
  db: Kysely<Database>,
  rows: ReadonlyArray<Selectable<FindingsTable>>,
): Promise<FindingView[]> {
  const contexts = await vehicleContexts(
    db,
    rows.map((r) => r.vehicle_id),
  );
  return rows.map((r) => toFindingView(r, contexts.get(r.vehicle_id)));
}

/** What /v1/findings can be narrowed to; every list is "any of". */
export interface FindingFilter {
  /** null: every fleet (admin keys). */
  fleetId: string | null;
  vehicleIds?: readonly string[];
  statuses?: readonly FindingStatus[];
  kinds?: readonly string[];
  severities?: readonly Severity[];
  /** Findings with evidence at or after this time, ms. */
  sinceMs?: number;
  /** Findings of the vehicles of this depot. */
  depot?: string;
}

/** The columns a planner action changes. */
export interface PlannerState {
  status: Exclude<FindingStatus, 'resolved'>;
  acknowledgedAt: Date | null;
  acknowledgedBy: string | null;
  deferredUntil: Date | null;
  deferredReason: string | null;
  deferredBy: string | null;
}

/** The fleet list's order: most severe, then latest evidence first. */
export const FINDING_ORDER: readonly SortColumn[] = [
  {
    sql: sql`(case severity when 'critical' then 0 when 'warning' then 1 else 2 end)::float8`,
    dir: 'asc',
    type: 'number',
  },
  { sql: epochMs('last_seen'), dir: 'desc', type: 'number' },
  { sql: sql.ref('vehicle_id'), dir: 'asc', type: 'text' },
  { sql: sql.ref('finding_id'), dir: 'asc', type: 'text' },
];

/** A vehicle's list: unresolved first (open, acknowledged, deferred), then latest evidence. */
export const VEHICLE_FINDING_ORDER: readonly SortColumn[] = [
  {
    sql: sql`(case status when 'open' then 0 when 'acknowledged' then 1 when 'deferred' then 2 else 3 end)::float8`,
    dir: 'asc',
    type: 'number',
  },
  { sql: epochMs('last_seen'), dir: 'desc', type: 'number' },
  { sql: sql.ref('finding_id'), dir: 'asc', type: 'text' },
];

/** Findings for the planner: listings, acknowledgement and resolution by repairs. */
export function createFindingsRepository(db: Kysely<Database>) {
  const viewPage = async <R extends Selectable<FindingsTable> & Record<string, unknown>>(
    rows: readonly R[],
    limit: number,
    width: number,
  ): Promise<Page<FindingView>> => {
    const p = pageOf(rows, limit, width, (r) => r);
    return { items: await toFindingViews(db, p.items), nextKey: p.nextKey };
  };
  return {
    async get(findingId: string, executor: Kysely<Database> = db): Promise<FindingView | undefined> {
      const row = await executor
        .selectFrom('findings')
        .selectAll()
        .where('finding_id', '=', findingId)
        .executeTakeFirst();
      return row ? (await toFindingViews(executor, [row]))[0] : undefined;
    },

    /** Every unresolved finding of a vehicle (open, acknowledged, deferred), in the vehicle list's order. */
    async unresolvedOfVehicle(vehicleId: string): Promise<FindingView[]> {
      const rows = await db
        .selectFrom('findings')
        .selectAll()
        .where('vehicle_id', '=', vehicleId)
        .where('status', '!=', 'resolved')
        .orderBy(orderBySql(VEHICLE_FINDING_ORDER))
        .execute();
      return toFindingViews(db, rows);
    },

    /** A page of a vehicle's findings (all statuses), unresolved ones first, then newest. */
    async ofVehicle(vehicleId: string, pageRequest: PageRequest): Promise<Page<FindingView>> {
      const rows = await db
        .selectFrom('findings')
        .selectAll()
        .select(keySelections(VEHICLE_FINDING_ORDER))
        .where('vehicle_id', '=', vehicleId)
        .where(afterKeySql(VEHICLE_FINDING_ORDER, pageRequest.after))
        .orderBy(orderBySql(VEHICLE_FINDING_ORDER))
        .limit(pageRequest.limit + 1)
        .execute();
      return viewPage(rows, pageRequest.limit, VEHICLE_FINDING_ORDER.length);
    },

    /**
     * A page of a fleet's (or, for null, every fleet's) findings, filtered, most severe and
     * newest first. `offset` is the older paging style, kept for existing clients (not with a cursor).
     */
    async list(filter: FindingFilter, pageRequest: PageRequest & { offset?: number }): Promise<Page<FindingView>> {
      let q = db.selectFrom('findings').selectAll().select(keySelections(FINDING_ORDER));
      if (filter.fleetId !== null) q = q.where('fleet_id', '=', filter.fleetId);
      if (filter.vehicleIds?.length) q = q.where('vehicle_id', 'in', [...filter.vehicleIds]);
      if (filter.statuses?.length) q = q.where('status', 'in', [...filter.statuses]);
      if (filter.kinds?.length) q = q.where('kind', 'in', [...filter.kinds]);
      if (filter.severities?.length) q = q.where('severity', 'in', [...filter.severities]);
      if (filter.sinceMs !== undefined) q = q.where('last_seen', '>=', new Date(filter.sinceMs));
      if (filter.depot !== undefined) {
        const depot = filter.depot;
        q = q.where((eb) =>
          eb.exists(
            eb
              .selectFrom('vehicles as v')
              .select('v.vehicle_id')
              .whereRef('v.vehicle_id', '=', 'findings.vehicle_id')
              .where('v.depot', '=', depot),
          ),
        );
      }
      q = q
        .where(afterKeySql(FINDING_ORDER, pageRequest.after))
        .orderBy(orderBySql(FINDING_ORDER))
        .limit(pageRequest.limit + 1);
      if (pageRequest.offset) q = q.offset(pageRequest.offset);
      return viewPage(await q.execute(), pageRequest.limit, FINDING_ORDER.length);
    },

    /** The finding locked for a status change, or undefined. */
    async lockRow(trx: Kysely<Database>, findingId: string): Promise<Selectable<FindingsTable> | undefined> {
      return trx.selectFrom('findings').selectAll().where('finding_id', '=', findingId).forUpdate().executeTakeFirst();
    },

    /** Sets the planner-facing state of a locked finding; returns the updated view. */
    async setState(trx: Kysely<Database>, row: Selectable<FindingsTable>, state: PlannerState): Promise<FindingView> {
      const updated = await trx
        .updateTable('findings')
        .set({
          status: state.status,
          acknowledged_at: state.acknowledgedAt,
          acknowledged_by: state.acknowledgedBy,
          deferred_until: state.deferredUntil,
          deferred_reason: state.deferredReason,
          deferred_by: state.deferredBy,
          updated_at: new Date(),
        })
        .where('vehicle_id', '=', row.vehicle_id)
        .where('finding_id', '=', row.finding_id)
        .returningAll()
        .executeTakeFirstOrThrow();
      return (await toFindingViews(trx, [updated]))[0]!;
    },

    /**
     * Resolves the vehicle's unresolved findings of the kinds a repair addresses that
     * began on or before the repair; returns their ids.
     */
    async resolveByRepair(
      trx: Kysely<Database>,
      vehicleId: string,
      kind: ServiceEventKind,
      atMs: number,
      eventId: string,
    ): Promise<string[]> {
      if (resolvedKinds(kind).length === 0) return [];
      const rows = await sql<{ finding_id: string }>`
        update findings set status = 'resolved', resolved_reason = ${`service-event:${kind}`}, resolved_at = to_timestamp(${atMs}::float8 / 1000),
                            resolved_by_event = ${eventId}, updated_at = now()
        where vehicle_id = ${vehicleId} and status <> 'resolved' and kind = any(${[...resolvedKinds(kind)]}::text[])
          and first_seen <= to_timestamp(${atMs}::float8 / 1000)
        returning finding_id`.execute(trx);
      return rows.rows.map((r) => r.finding_id).sort();
    },
  };
}

export type FindingsRepository = ReturnType<typeof createFindingsRepository>;
