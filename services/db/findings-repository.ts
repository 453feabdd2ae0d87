import { sql, type Kysely, type Selectable } from 'kysely';
import type { Severity } from '../analysis/findings/finding.js';
import { resolvedKinds, type ServiceEventKind } from '../analysis/findings/service-events.js';
import type { Database, FindingsTable } from './schema.js';

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
  evidence: Array<{ at: string; scope: string; metric: string; value: number; expected: number | null; z: number | null }>;
  acknowledgedAt: string | null;
  acknowledgedBy: string | null;
  resolvedAt: string | null;
  resolvedReason: string | null;
  deferredUntil: string | null;
  deferredReason: string | null;
  deferredBy: string | null;
  updatedAt: string;
}

/** Severities at or above `min`. */
export function severitiesFrom(min: Severity): Severity[] {
  const order: Severity[] = ['advisory', 'warning', 'critical'];
  return order.slice(order.indexOf(min));
}

const iso = (d: Date | null) => (d ? d.toISOString() : null);

export function toFindingView(row: Selectable<FindingsTable>): FindingView {
  const evidence = (row.evidence as Array<{ at: number; scope: string; metric: string; value: number; expected: number | null; z: number | null }>)
    .map((e) => ({ ...e, at: new Date(e.at).toISOString() }));
  return {
    id: row.finding_id, vehicleId: row.vehicle_id, fleetId: row.fleet_id, key: row.finding_key, kind: row.kind, subKind: row.sub_kind,
    severity: row.severity, confidence: row.confidence, status: row.status, firstSeen: row.first_seen.toISOString(),
    lastSeen: row.last_seen.toISOString(), raisedAt: iso(row.raised_at), summary: row.summary, recommendedCheck: row.recommended_check,
    troubleCode: row.trouble_code, metrics: row.metrics, evidence, acknowledgedAt: iso(row.acknowledged_at), acknowledgedBy: row.acknowledged_by,
    resolvedAt: iso(row.resolved_at), resolvedReason: row.resolved_reason,
    deferredUntil: iso(row.deferred_until), deferredReason: row.deferred_reason, deferredBy: row.deferred_by, updatedAt: row.updated_at.toISOString(),
  };
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

/** Severity order for listings: critical first. */
const SEVERITY_ORDER = sql`case severity when 'critical' then 0 when 'warning' then 1 else 2 end`;

/** Findings for the planner: listings, acknowledgement and resolution by repairs. */
export function createFindingsRepository(db: Kysely<Database>) {
  return {
    async get(findingId: string): Promise<FindingView | undefined> {
      const row = await db.selectFrom('findings').selectAll().where('finding_id', '=', findingId).executeTakeFirst();
      return row ? toFindingView(row) : undefined;
    },

    /** Every finding of a vehicle (all statuses), open ones first, then newest. */
    async ofVehicle(vehicleId: string): Promise<FindingView[]> {
      const rows = await db.selectFrom('findings').selectAll().where('vehicle_id', '=', vehicleId)
        .orderBy(sql`case status when 'open' then 0 when 'acknowledged' then 1 when 'deferred' then 2 else 3 end`).orderBy('last_seen', 'desc').orderBy('finding_id').execute();
      return rows.map(toFindingView);
    },

    /** A fleet's (or, for null, every fleet's) findings, filtered, most severe and newest first. */
    async list(o: { fleetId: string | null; status?: FindingStatus; kind?: string; limit: number; offset: number }): Promise<FindingView[]> {
      let q = db.selectFrom('findings').selectAll();
      if (o.fleetId !== null) q = q.where('fleet_id', '=', o.fleetId);
      if (o.status) q = q.where('status', '=', o.status);
      if (o.kind) q = q.where('kind', '=', o.kind);
      const rows = await q.orderBy(SEVERITY_ORDER).orderBy('last_seen', 'desc').orderBy('vehicle_id').orderBy('finding_id').limit(o.limit).offset(o.offset).execute();
      return rows.map(toFindingView);
    },

    /** The finding locked for a status change, or undefined. */
    async lockRow(trx: Kysely<Database>, findingId: string): Promise<Selectable<FindingsTable> | undefined> {
      return trx.selectFrom('findings').selectAll().where('finding_id', '=', findingId).forUpdate().executeTakeFirst();
    },

    /** Sets the planner-facing state of a locked finding; returns the updated view. */
    async setState(trx: Kysely<Database>, row: Selectable<FindingsTable>, state: PlannerState): Promise<FindingView> {
      const updated = await trx.updateTable('findings')
        .set({
          status: state.status, acknowledged_at: state.acknowledgedAt, acknowledged_by: state.acknowledgedBy,
          deferred_until: state.deferredUntil, deferred_reason: state.deferredReason, deferred_by: state.deferredBy, updated_at: new Date(),
        })
        .where('vehicle_id', '=', row.vehicle_id).where('finding_id', '=', row.finding_id).returningAll().executeTakeFirstOrThrow();
      return toFindingView(updated);
    },

    /**
     * Resolves the vehicle's unresolved findings of the kinds a repair addresses that
     * began on or before the repair; returns their ids.
     */
    async resolveByRepair(trx: Kysely<Database>, vehicleId: string, kind: ServiceEventKind, atMs: number, eventId: string): Promise<string[]> {
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
