import { randomUUID } from 'node:crypto';
import { sql, type Kysely, type Selectable } from 'kysely';
import type { ServiceEventKind } from '../analysis/findings/service-events.js';
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
import type { Database, ServiceEventsTable } from './schema.js';
import { EVIDENCE_STOPPED, SUPERSEDED } from './finding-resolutions.js';

/** Length of a finding key's "@<ISO time>" suffix (findingKey). */
const BASELINE_SUFFIX_LENGTH = '@2026-01-01T00:00:00.000Z'.length;

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

export function toServiceEventView(row: Selectable<ServiceEventsTable>): ServiceEventView {
  return {
    id: row.event_id,
    vehicleId: row.vehicle_id,
    kind: row.kind,
    at: row.at.toISOString(),
    notes: row.notes,
    recordedBy: row.recorded_by,
    createdAt: row.created_at.toISOString(),
    updatedAt: row.updated_at?.toISOString() ?? null,
    resolvedFindings: row.resolved_findings,
    inspectedFindings: row.finding_ids,
  };
}

export interface NewServiceEvent {
  vehicleId: string;
  fleetId: string;
  kind: ServiceEventKind;
  atMs: number;
  notes: string | null;
  recordedBy: string;
  findingIds: readonly string[];
}

/** The repair history of vehicles (table service_events; deleted events are kept but never listed). */
export function createServiceEventsRepository(db: Kysely<Database>) {
  return {
    async insert(trx: Kysely<Database>, e: NewServiceEvent): Promise<Selectable<ServiceEventsTable>> {
      return trx
        .insertInto('service_events')
        .values({
          vehicle_id: e.vehicleId,
          event_id: randomUUID(),
          fleet_id: e.fleetId,
          kind: e.kind,
          at: new Date(e.atMs),
          notes: e.notes,
          recorded_by: e.recordedBy,
          finding_ids: JSON.stringify(e.findingIds),
        })
        .returningAll()
        .executeTakeFirstOrThrow();
    },

    /** The event (not deleted), locked for a correction. */
    async lock(
      trx: Kysely<Database>,
      vehicleId: string,
      eventId: string,
    ): Promise<Selectable<ServiceEventsTable> | undefined> {
      return trx
        .selectFrom('service_events')
        .selectAll()
        .where('vehicle_id', '=', vehicleId)
        .where('event_id', '=', eventId)
        .where('deleted_at', 'is', null)
        .forUpdate()
        .executeTakeFirst();
    },

    async get(vehicleId: string, eventId: string): Promise<Selectable<ServiceEventsTable> | undefined> {
      return db
        .selectFrom('service_events')
        .selectAll()
        .where('vehicle_id', '=', vehicleId)
        .where('event_id', '=', eventId)
        .where('deleted_at', 'is', null)
        .executeTakeFirst();
    },

    /** A page of the vehicle's events, newest first. */
    async list(vehicleId: string, pageRequest: PageRequest): Promise<Page<ServiceEventView>> {
      const rows = await db
        .selectFrom('service_events')
        .selectAll()
        .select(keySelections(SERVICE_EVENT_ORDER))
        .where('vehicle_id', '=', vehicleId)
        .where('deleted_at', 'is', null)
        .where(afterKeySql(SERVICE_EVENT_ORDER, pageRequest.after))
        .orderBy(orderBySql(SERVICE_EVENT_ORDER))
        .limit(pageRequest.limit + 1)
        .execute();
      return pageOf(rows, pageRequest.limit, SERVICE_EVENT_ORDER.length, toServiceEventView);
    },

    /** Sets kind, time and notes after a correction, with the findings it now resolves. */
    async correct(
      trx: Kysely<Database>,
      row: Selectable<ServiceEventsTable>,
      kind: ServiceEventKind,
      atMs: number,
      notes: string | null,
      resolved: readonly string[],
    ) {
      return trx
        .updateTable('service_events')
        .set({ kind, at: new Date(atMs), notes, updated_at: new Date(), resolved_findings: JSON.stringify(resolved) })
        .where('vehicle_id', '=', row.vehicle_id)
        .where('event_id', '=', row.event_id)
        .returningAll()
        .executeTakeFirstOrThrow();
    },

    async setResolved(trx: Kysely<Database>, vehicleId: string, eventId: string, resolved: readonly string[]) {
      return trx
        .updateTable('service_events')
        .set({ resolved_findings: JSON.stringify(resolved) })
        .where('vehicle_id', '=', vehicleId)
        .where('event_id', '=', eventId)
        .returningAll()
        .executeTakeFirstOrThrow();
    },

    async softDelete(trx: Kysely<Database>, row: Selectable<ServiceEventsTable>, keyId: string): Promise<void> {
      await trx
        .updateTable('service_events')
        .set({ deleted_at: new Date(), deleted_by: keyId })
        .where('vehicle_id', '=', row.vehicle_id)
        .where('event_id', '=', row.event_id)
        .execute();
    },

    /**
     * Undoes what the event resolved. A finding whose evidence is still there (last seen at or
     * after `staleBeforeMs`: within the quiet period before the vehicle's latest reading) is
     * reopened to the planner state it had (deferred while the date is ahead, acknowledged if it
     * had been, else open); one whose evidence had stopped anyway stays resolved, now as
     * `evidence-stopped`. Returns the ids of both.
     */
    async reopenResolvedBy(
      trx: Kysely<Database>,
      vehicleId: string,
      eventId: string,
      staleBeforeMs: number,
    ): Promise<{ reopened: string[]; evidenceStopped: string[] }> {
      const r = await sql<{ finding_id: string; status: string }>`
        update findings set status = case when last_seen < to_timestamp(${staleBeforeMs}::float8 / 1000) then 'resolved'
                                          when deferred_until > now() then 'deferred' when acknowledged_at is not null then 'acknowledged' else 'open' end,
                            resolved_at = case when last_seen < to_timestamp(${staleBeforeMs}::float8 / 1000) then now() end,
                            resolved_reason = case when last_seen < to_timestamp(${staleBeforeMs}::float8 / 1000) then ${EVIDENCE_STOPPED} end,
                            resolved_by_event = null, updated_at = now()
        where vehicle_id = ${vehicleId} and resolved_by_event = ${eventId} and status = 'resolved'
        returning finding_id, status`.execute(trx);
      const ids = (resolved: boolean) =>
        r.rows
          .filter((x) => (x.status === 'resolved') === resolved)
          .map((x) => x.finding_id)
          .sort();
      return { reopened: ids(false), evidenceStopped: ids(true) };
    },

    /** Kinds other live events of the vehicle at exactly `atMs` restart (so their baselines stay). */
    async kindsRestartedAt(
      trx: Kysely<Database>,
      vehicleId: string,
      exceptEventId: string,
      atMs: number,
    ): Promise<string[]> {
      const rows = await trx
        .selectFrom('service_events')
        .select('kind')
        .where('vehicle_id', '=', vehicleId)
        .where('event_id', '<>', exceptEventId)
        .where('deleted_at', 'is', null)
        .where('at', '=', new Date(atMs))
        .execute();
      return rows.map((r) => r.kind);
    },

    /**
     * Resolves as `superseded` the unresolved findings of `kinds` derived under a baseline that
     * started at `atMs` (key …@<atMs>): the event that started it was deleted or moved, and the
     * next analysis pass shows the same evidence under the earlier baseline (the reopened
     * finding) instead. Returns their ids.
     */
    async supersedeBaseline(
      trx: Kysely<Database>,
      vehicleId: string,
      kinds: readonly string[],
      atMs: number,
    ): Promise<string[]> {
      if (kinds.length === 0) return [];
      const r = await sql<{ finding_id: string }>`
        update findings set status = 'resolved', resolved_reason = ${SUPERSEDED}, resolved_at = now(), updated_at = now()
        where vehicle_id = ${vehicleId} and status <> 'resolved' and kind = any(${[...kinds]}::text[])
          and right(finding_key, ${BASELINE_SUFFIX_LENGTH}) = ${`@${new Date(atMs).toISOString()}`}
        returning finding_id`.execute(trx);
      return r.rows.map((x) => x.finding_id).sort();
    },
  };
}

export type ServiceEventsRepository = ReturnType<typeof createServiceEventsRepository>;
