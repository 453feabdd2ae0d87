import type { Kysely, Selectable } from 'kysely';
import type { ServiceEventKind } from '../../analysis/findings/service-events.js';
import type { Principal } from '../../db/api-keys-repository.js';
import { createFindingsRepository } from '../../db/findings-repository.js';
import { createPlannerActionsRepository } from '../../db/planner-actions-repository.js';
import type { Database, ServiceEventsTable } from '../../db/schema.js';
import { createServiceEventsRepository, toServiceEventView, type ServiceEventView } from '../../db/service-events-repository.js';
import { refreshVehicleRisk } from '../../db/vehicle-risk.js';
import { createQueueRepository } from '../../db/analysis-queue-repository.js';
import { NotFoundError } from '../errors.js';

export interface ServiceEventInput {
  kind: ServiceEventKind;
  atMs: number;
  notes: string | null;
  /** For an inspection: the findings it looked at. */
  findingIds: readonly string[];
}

const auditOf = (r: Selectable<ServiceEventsTable>) => ({ kind: r.kind, at: r.at.toISOString(), notes: r.notes, resolvedFindings: r.resolved_findings });

/**
 * Recording, correcting and deleting repairs. A repair resolves the vehicle's unresolved findings
 * of the kinds it addresses that began on or before it, and the vehicle is queued so the worker
 * re-derives its findings with the new baseline start (from the stored history; no readings are
 * re-read). A correction first reopens what the event had resolved, then applies the corrected
 * event; a deletion only reopens. Corrections and deletions are audited in planner_actions.
 */
export function createServiceEventActions(db: Kysely<Database>) {
  const events = createServiceEventsRepository(db);
  const findings = createFindingsRepository(db);
  const audit = createPlannerActionsRepository(db);
  const queue = createQueueRepository(db);

  /** Risk refresh and a re-analysis of the vehicle, inside the transaction of the change. */
  async function afterChange(trx: Kysely<Database>, vehicleId: string, fleetId: string): Promise<void> {
    await refreshVehicleRisk(trx, vehicleId);
    const state = await trx.selectFrom('vehicle_analysis').select('last_reading_at').where('vehicle_id', '=', vehicleId).executeTakeFirst();
    if (state?.last_reading_at) await queue.enqueue(vehicleId, fleetId, state.last_reading_at.getTime(), trx);
  }

  return {
    async record(principal: Principal, vehicle: { vehicleId: string; fleetId: string }, input: ServiceEventInput): Promise<ServiceEventView> {
      return db.transaction().execute(async (trx) => {
        const row = await events.insert(trx, { ...vehicle, ...input, recordedBy: principal.keyId });
        const resolved = await findings.resolveByRepair(trx, vehicle.vehicleId, input.kind, input.atMs, row.event_id);
        const stored = await events.setResolved(trx, vehicle.vehicleId, row.event_id, resolved);
        await afterChange(trx, vehicle.vehicleId, vehicle.fleetId);
        return toServiceEventView(stored);
      });
    },

    async correct(principal: Principal, vehicle: { vehicleId: string; fleetId: string }, eventId: string,
      change: Partial<Pick<ServiceEventInput, 'kind' | 'atMs'>> & { notes?: string | null }): Promise<ServiceEventView> {
      return db.transaction().execute(async (trx) => {
        const row = await events.lock(trx, vehicle.vehicleId, eventId);
        if (!row) throw new NotFoundError(`no service event '${eventId}' on vehicle '${vehicle.vehicleId}'`);
        await events.reopenResolvedBy(trx, vehicle.vehicleId, eventId);
        const kind = change.kind ?? (row.kind as ServiceEventKind);
        const atMs = change.atMs ?? row.at.getTime();
        const resolved = await findings.resolveByRepair(trx, vehicle.vehicleId, kind, atMs, eventId);
        const notes = change.notes === undefined ? row.notes : change.notes;
        const updated = await events.correct(trx, row, kind, atMs, notes, resolved);
        await audit.record(trx, {
          vehicleId: vehicle.vehicleId, fleetId: vehicle.fleetId, subject: 'service-event', subjectId: eventId, action: 'correct',
          keyId: principal.keyId, before: auditOf(row), after: auditOf(updated),
        });
        await afterChange(trx, vehicle.vehicleId, vehicle.fleetId);
        return toServiceEventView(updated);
      });
    },

    /** Deletes the event (kept, marked deleted) and reopens the findings it resolved; returns their ids. */
    async remove(principal: Principal, vehicle: { vehicleId: string; fleetId: string }, eventId: string): Promise<string[]> {
      return db.transaction().execute(async (trx) => {
        const row = await events.lock(trx, vehicle.vehicleId, eventId);
        if (!row) throw new NotFoundError(`no service event '${eventId}' on vehicle '${vehicle.vehicleId}'`);
        const reopened = await events.reopenResolvedBy(trx, vehicle.vehicleId, eventId);
        await events.softDelete(trx, row, principal.keyId);
        await audit.record(trx, {
          vehicleId: vehicle.vehicleId, fleetId: vehicle.fleetId, subject: 'service-event', subjectId: eventId, action: 'delete',
          keyId: principal.keyId, before: auditOf(row), after: { reopenedFindings: reopened },
        });
        await afterChange(trx, vehicle.vehicleId, vehicle.fleetId);
        return reopened;
      });
    },
  };
}
