import { randomUUID } from 'node:crypto';
import { sql, type Kysely, type Selectable } from 'kysely';
import type { ServiceEventKind } from '../analysis/findings/service-events.js';
import { afterKeySql, epochMs, keySelections, orderBySql, pageOf, type Page, type PageRequest, type SortColumn } from './keyset.js';
import type { Database, ServiceEventsTable } from './schema.js';

/** A vehicle's repair history: newest first. */
export const SERVICE_EVENT_ORDER: readonly SortColumn[] = [
  { sql: epochMs('at'), dir: 'desc', type: 'number' },
  { sql: sql.ref('event_id'), dir: 'asc', type: 'text' },
];

/** A service event as the API shows it (times ISO 8601). */
export interface ServiceEventView {
  id: string;
  vehicleId: string;
  kind: string;
  at: string;
  notes: string | null;
  recordedBy: string | null;
  createdAt: string;
  updatedAt: string | null;
  /** Findings this event resolved. */
  resolvedFindings: string[];
  /** Findings an inspection looked at (not resolved by it). */
  inspectedFindings: string[];
}

export function toServiceEventView(r: Selectable<ServiceEventsTable>): ServiceEventView {
  return {
    id: r.event_id, vehicleId: r.vehicle_id, kind: r.kind, at: r.at.toISOString(), notes: r.notes, recordedBy: r.recorded_by,
    createdAt: r.created_at.toISOString(), updatedAt: r.updated_at?.toISOString() ?? null,
    resolvedFindings: r.resolved_findings, inspectedFindings: r.finding_ids,
  };
}

export interface NewServiceEvent {
  vehicleId: string; fleetId: string; kind: ServiceEventKind; atMs: number; notes: string | null; recordedBy: string; findingIds: readonly string[];
}

/** The repair history of vehicles (table service_events; deleted events are kept but never listed). */
export function createServiceEventsRepository(db: Kysely<Database>) {
  return {
    async insert(trx: Kysely<Database>, e: NewServiceEvent): Promise<Selectable<ServiceEventsTable>> {
      return trx.insertInto('service_events').values({
        vehicle_id: e.vehicleId, event_id: randomUUID(), fleet_id: e.fleetId, kind: e.kind, at: new Date(e.atMs),
        notes: e.notes, recorded_by: e.recordedBy, finding_ids: JSON.stringify(e.findingIds),
      }).returningAll().executeTakeFirstOrThrow();
    },

    /** The event (not deleted), locked for a correction. */
    async lock(trx: Kysely<Database>, vehicleId: string, eventId: string): Promise<Selectable<ServiceEventsTable> | undefined> {
      return trx.selectFrom('service_events').selectAll().where('vehicle_id', '=', vehicleId).where('event_id', '=', eventId)
        .where('deleted_at', 'is', null).forUpdate().executeTakeFirst();
    },

    async get(vehicleId: string, eventId: string): Promise<Selectable<ServiceEventsTable> | undefined> {
      return db.selectFrom('service_events').selectAll().where('vehicle_id', '=', vehicleId).where('event_id', '=', eventId)
        .where('deleted_at', 'is', null).executeTakeFirst();
    },

    /** A page of the vehicle's events, newest first. */
    async list(vehicleId: string, pageRequest: PageRequest): Promise<Page<ServiceEventView>> {
      const rows = await db.selectFrom('service_events').selectAll().select(keySelections(SERVICE_EVENT_ORDER))
        .where('vehicle_id', '=', vehicleId).where('deleted_at', 'is', null)
        .where(afterKeySql(SERVICE_EVENT_ORDER, pageRequest.after)).orderBy(orderBySql(SERVICE_EVENT_ORDER)).limit(pageRequest.limit + 1).execute();
      return pageOf(rows, pageRequest.limit, SERVICE_EVENT_ORDER.length, toServiceEventView);
    },

    /** Sets kind, time and notes after a correction, with the findings it now resolves. */
    async correct(trx: Kysely<Database>, row: Selectable<ServiceEventsTable>, kind: ServiceEventKind, atMs: number, notes: string | null, resolved: readonly string[]) {
      return trx.updateTable('service_events')
        .set({ kind, at: new Date(atMs), notes, updated_at: new Date(), resolved_findings: JSON.stringify(resolved) })
        .where('vehicle_id', '=', row.vehicle_id).where('event_id', '=', row.event_id).returningAll().executeTakeFirstOrThrow();
    },

    async setResolved(trx: Kysely<Database>, vehicleId: string, eventId: string, resolved: readonly string[]) {
      return trx.updateTable('service_events').set({ resolved_findings: JSON.stringify(resolved) })
        .where('vehicle_id', '=', vehicleId).where('event_id', '=', eventId).returningAll().executeTakeFirstOrThrow();
    },

    async softDelete(trx: Kysely<Database>, row: Selectable<ServiceEventsTable>, keyId: string): Promise<void> {
      await trx.updateTable('service_events').set({ deleted_at: new Date(), deleted_by: keyId })
        .where('vehicle_id', '=', row.vehicle_id).where('event_id', '=', row.event_id).execute();
    },

    /**
     * Reopens the findings the event resolved, to the planner state they had (deferred while the
     * date is ahead, acknowledged if they had been, else open); returns their ids.
     */
    async reopenResolvedBy(trx: Kysely<Database>, vehicleId: string, eventId: string): Promise<string[]> {
      const r = await sql<{ finding_id: string }>`
        update findings set status = case when deferred_until > now() then 'deferred' when acknowledged_at is not null then 'acknowledged' else 'open' end,
                            resolved_at = null, resolved_reason = null, resolved_by_event = null, updated_at = now()
        where vehicle_id = ${vehicleId} and resolved_by_event = ${eventId} and status = 'resolved'
        returning finding_id`.execute(trx);
      return r.rows.map((x) => x.finding_id).sort();
    },
  };
}

export type ServiceEventsRepository = ReturnType<typeof createServiceEventsRepository>;
