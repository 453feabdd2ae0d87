import type { Kysely, Selectable } from 'kysely';
import { resolveConfig } from '../../analysis/config.js';
import { resolvedKinds } from '../../analysis/findings/service-events.js';
import type { ServiceEventKind } from '../../analysis/findings/service-events.js';
import type { Principal } from '../../db/api-keys-repository.js';
import { createFindingsRepository } from '../../db/findings-repository.js';
import { createPlannerActionsRepository } from '../../db/planner-actions-repository.js';
import type { Database, ServiceEventsTable } from '../../db/schema.js';
import {
  createServiceEventsRepository,
  toServiceEventView,
  type ServiceEventView,
} from '../../db/service-events-repository.js';
import { refreshVehicleRisk } from '../../db/vehicle-risk.js';
import { createQueueRepository } from '../../db/analysis-queue-repository.js';
import { NotFoundError } from '../errors.js';
import { lastAnalysedReadingAt } from '../../db/analysis-results-repository.js';
import { DAY_MS } from '../../time/durations.js';

export interface ServiceEventInput {
  kind: ServiceEventKind;
  atMs: number;
  notes: string | null;
  /** For an inspection: the findings it looked at. */
  findingIds: readonly string[];
}

const auditOf = (r: Selectable<ServiceEventsTable>) => ({
  kind: r.kind,
  at: r.at.toISOString(),
  notes: r.notes,
  resolvedFindings: r.resolved_findings,
});

type Vehicle = { vehicleId: string; fleetId: string; engineFamily: string };

/** What undoing an event did to the findings. */
export interface UndoneEvent {
  /** Resolved by the event, evidence still there: open (or acknowledged/deferred) again. */
  reopened: string[];
  /** Resolved by the event, evidence had stopped anyway: resolved as evidence-stopped. */
  evidenceStopped: string[];
  /** Derived under the baseline the event started: superseded by the reopened findings. */
  superseded: string[];
}

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
    const lastReadingAt = await lastAnalysedReadingAt(trx, vehicleId);
    if (lastReadingAt) await queue.enqueue(vehicleId, fleetId, lastReadingAt.getTime(), trx);
  }

  /**
   * Takes back what an event did before it is corrected or deleted: what it resolved is reopened
   * when its evidence is still there (else closed as evidence-stopped), and findings derived
   * under the baseline it started are superseded. Every finding touched gets an audit entry
   * naming the event and the action, so its history shows why it changed.
   */
  async function undo(
    trx: Kysely<Database>,
    principal: Principal,
    vehicle: Vehicle,
    row: Selectable<ServiceEventsTable>,
    action: 'correct' | 'delete',
    keepKinds: readonly string[] = [],
  ): Promise<UndoneEvent> {
    const quietMs = resolveConfig(vehicle.engineFamily).findingStaleDays * DAY_MS;
    const staleBeforeMs = ((await lastAnalysedReadingAt(trx, vehicle.vehicleId))?.getTime() ?? Date.now()) - quietMs;
    const { reopened, evidenceStopped } = await events.reopenResolvedBy(
      trx,
      vehicle.vehicleId,
      row.event_id,
      staleBeforeMs,
    );
    // Baselines that still start at the event's time (another event then, or the corrected kind) stay.
    const kept = new Set([
      ...keepKinds,
      ...(await events.kindsRestartedAt(trx, vehicle.vehicleId, row.event_id, row.at.getTime())).flatMap((k) =>
        resolvedKinds(k as ServiceEventKind),
      ),
    ]);
    const withdrawn = resolvedKinds(row.kind as ServiceEventKind).filter((k) => !kept.has(k));
    const superseded = await events.supersedeBaseline(trx, vehicle.vehicleId, withdrawn, row.at.getTime());
    const because = { serviceEvent: row.event_id, eventAction: action, eventKind: row.kind };
    for (const [ids, status, reason] of [
      [reopened, 'reopened', null],
      [evidenceStopped, 'resolved', 'evidence-stopped'],
      [superseded, 'resolved', 'superseded'],
    ] as const) {
      for (const findingId of ids) {
        await audit.record(trx, {
          vehicleId: vehicle.vehicleId,
          fleetId: vehicle.fleetId,
          subject: 'finding',
          subjectId: findingId,
          action: `service-event-${action}`,
          keyId: principal.keyId,
          before:
            reason === 'superseded'
              ? { status: 'unresolved' }
              : { status: 'resolved', resolvedReason: `service-event:${row.kind}` },
          after: { ...because, status, ...(reason ? { resolvedReason: reason } : {}) },
        });
      }
    }
    return { reopened, evidenceStopped, superseded };
  }

  return {
    async record(
      principal: Principal,
      vehicle: { vehicleId: string; fleetId: string },
      input: ServiceEventInput,
    ): Promise<ServiceEventView> {
      return db.transaction().execute(async (trx) => {
        const row = await events.insert(trx, { ...vehicle, ...input, recordedBy: principal.keyId });
        const resolved = await findings.resolveByRepair(trx, vehicle.vehicleId, input.kind, input.atMs, row.event_id);
        const stored = await events.setResolved(trx, vehicle.vehicleId, row.event_id, resolved);
        await afterChange(trx, vehicle.vehicleId, vehicle.fleetId);
        return toServiceEventView(stored);
      });
    },

    async correct(
      principal: Principal,
      vehicle: Vehicle,
      eventId: string,
      change: Partial<Pick<ServiceEventInput, 'kind' | 'atMs'>> & { notes?: string | null },
    ): Promise<ServiceEventView> {
      return db.transaction().execute(async (trx) => {
        const row = await events.lock(trx, vehicle.vehicleId, eventId);
        if (!row) throw new NotFoundError(`no service event '${eventId}' on vehicle '${vehicle.vehicleId}'`);
        const kind = change.kind ?? (row.kind as ServiceEventKind);
        const atMs = change.atMs ?? row.at.getTime();
        // Only the notes changed: what the event resolved and the baseline it started stay as they are.
        const analysed = kind !== row.kind || atMs !== row.at.getTime();
        const keep = atMs === row.at.getTime() ? resolvedKinds(kind) : [];
        const undone = analysed
          ? await undo(trx, principal, vehicle, row, 'correct', keep)
          : { reopened: [], evidenceStopped: [], superseded: [] };
        const resolved = analysed
          ? await findings.resolveByRepair(trx, vehicle.vehicleId, kind, atMs, eventId)
          : row.resolved_findings;
        const notes = change.notes === undefined ? row.notes : change.notes;
        const updated = await events.correct(trx, row, kind, atMs, notes, resolved);
        await audit.record(trx, {
          vehicleId: vehicle.vehicleId,
          fleetId: vehicle.fleetId,
          subject: 'service-event',
          subjectId: eventId,
          action: 'correct',
          keyId: principal.keyId,
          before: auditOf(row),
          after: {
            ...auditOf(updated),
            reopenedFindings: undone.reopened,
            evidenceStoppedFindings: undone.evidenceStopped,
            supersededFindings: undone.superseded,
          },
        });
        await afterChange(trx, vehicle.vehicleId, vehicle.fleetId);
        return toServiceEventView(updated);
      });
    },

    /** Deletes the event (kept, marked deleted) and takes back what it did to the findings (undo). */
    async remove(principal: Principal, vehicle: Vehicle, eventId: string): Promise<UndoneEvent> {
      return db.transaction().execute(async (trx) => {
        const row = await events.lock(trx, vehicle.vehicleId, eventId);
        if (!row) throw new NotFoundError(`no service event '${eventId}' on vehicle '${vehicle.vehicleId}'`);
        const undone = await undo(trx, principal, vehicle, row, 'delete');
        await events.softDelete(trx, row, principal.keyId);
        await audit.record(trx, {
          vehicleId: vehicle.vehicleId,
          fleetId: vehicle.fleetId,
          subject: 'service-event',
          subjectId: eventId,
          action: 'delete',
          keyId: principal.keyId,
          before: auditOf(row),
          after: {
            reopenedFindings: undone.reopened,
            evidenceStoppedFindings: undone.evidenceStopped,
            supersededFindings: undone.superseded,
          },
        });
        await afterChange(trx, vehicle.vehicleId, vehicle.fleetId);
        return undone;
      });
    },
  };
}
