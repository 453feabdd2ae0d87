import { randomUUID } from 'node:crypto';
import type { Kysely } from 'kysely';
import type { Database } from './schema.js';

/** One audited planner action (table planner_actions, migrations/0006). */
export interface PlannerActionInput {
  vehicleId: string;
  fleetId: string;
  subject: 'finding' | 'service-event';
  subjectId: string;
  /** What was done: acknowledge, defer, reopen, correct, delete. */
  action: string;
  keyId: string;
  before: Record<string, unknown> | null;
  after: Record<string, unknown> | null;
}

/** An audited action as the API shows it. */
export interface PlannerActionView {
  id: string;
  action: string;
  keyId: string;
  at: string;
  before: Record<string, unknown> | null;
  after: Record<string, unknown> | null;
}

/** The audit trail of planner actions on findings and service events. */
export function createPlannerActionsRepository(db: Kysely<Database>) {
  return {
    /** Appends one action; call inside the transaction that makes the change. */
    async record(trx: Kysely<Database>, a: PlannerActionInput): Promise<void> {
      await trx
        .insertInto('planner_actions')
        .values({
          vehicle_id: a.vehicleId,
          action_id: randomUUID(),
          fleet_id: a.fleetId,
          subject: a.subject,
          subject_id: a.subjectId,
          action: a.action,
          key_id: a.keyId,
          before: a.before === null ? null : JSON.stringify(a.before),
          after: a.after === null ? null : JSON.stringify(a.after),
        })
        .execute();
    },

    /** The actions on one subject of a vehicle, oldest first. */
    async ofSubject(vehicleId: string, subjectId: string): Promise<PlannerActionView[]> {
      const rows = await db
        .selectFrom('planner_actions')
        .selectAll()
        .where('vehicle_id', '=', vehicleId)
        .where('subject_id', '=', subjectId)
        .orderBy('at')
        .orderBy('action_id')
        .execute();
      return rows.map((r) => ({
        id: r.action_id,
        action: r.action,
        keyId: r.key_id,
        at: r.at.toISOString(),
        before: r.before,
        after: r.after,
      }));
    },
  };
}

export type PlannerActionsRepository = ReturnType<typeof createPlannerActionsRepository>;
