import type { Kysely, Selectable } from 'kysely';
import type { Principal } from '../../db/api-keys-repository.js';
import {
  createFindingsRepository,
  toFindingViews,
  type FindingStatus,
  type FindingView,
  type PlannerState,
} from '../../db/findings-repository.js';
import { createPlannerActionsRepository } from '../../db/planner-actions-repository.js';
import type { Database, FindingsTable } from '../../db/schema.js';
import { refreshVehicleRisk } from '../../db/vehicle-risk.js';
import { BadRequestError, ConflictError, NotFoundError } from '../errors.js';
import { assertFleetAccess } from '../plugins/auth.js';
import { DAY_MS } from '../../time/durations.js';

/** The longest a finding may be deferred, days (a deferral is a booking decision, not a way to hide it). */
export const MAX_DEFERRAL_DAYS = 366;

type CurrentState = Omit<PlannerState, 'status'> & { status: FindingStatus };

const stateOf = (row: Selectable<FindingsTable>): CurrentState => ({
  status: row.status,
  acknowledgedAt: row.acknowledged_at,
  acknowledgedBy: row.acknowledged_by,
  deferredUntil: row.deferred_until,
  deferredReason: row.deferred_reason,
  deferredBy: row.deferred_by,
});

const auditState = (s: CurrentState) => ({
  status: s.status,
  acknowledgedBy: s.acknowledgedBy,
  deferredUntil: s.deferredUntil?.toISOString() ?? null,
  deferredReason: s.deferredReason,
});

type Change = (row: Selectable<FindingsTable>, current: CurrentState) => PlannerState | 'unchanged';

/**
 * The planner's actions on a finding: acknowledge (seen), defer (postponed until a date, with a
 * reason) and reopen (undo an acknowledgement or end a deferral). None of them takes the vehicle
 * out of the at-risk list: only a repair or quiet evidence resolves a finding. Each change is
 * audited in planner_actions and refreshes the vehicle's risk in the same transaction.
 */
export function createFindingActions(db: Kysely<Database>) {
  const findings = createFindingsRepository(db);
  const audit = createPlannerActionsRepository(db);

  async function apply(principal: Principal, findingId: string, action: string, change: Change): Promise<FindingView> {
    const existing = await findings.get(findingId);
    if (!existing) throw new NotFoundError(`no finding '${findingId}'`);
    assertFleetAccess(principal, existing.fleetId);
    return db.transaction().execute(async (trx) => {
      const row = await findings.lockRow(trx, findingId);
      if (!row) throw new NotFoundError(`no finding '${findingId}'`);
      if (row.status === 'resolved') throw new ConflictError('the finding is already resolved');
      const current = stateOf(row);
      const next = change(row, current);
      // The locked row, not a read through `db`: PGlite has one connection, held by this transaction.
      if (next === 'unchanged') return (await toFindingViews(trx, [row]))[0]!;
      const view = await findings.setState(trx, row, next);
      await audit.record(trx, {
        vehicleId: row.vehicle_id,
        fleetId: row.fleet_id,
        subject: 'finding',
        subjectId: findingId,
        action,
        keyId: principal.keyId,
        before: auditState(current),
        after: auditState(next),
      });
      await refreshVehicleRisk(trx, row.vehicle_id);
      return view;
    });
  }

  return {
    /** The finding (404 unknown, 403 another fleet's) with its audit trail, oldest first. */
    async withHistory(principal: Principal, findingId: string) {
      const finding = await findings.get(findingId);
      if (!finding) throw new NotFoundError(`no finding '${findingId}'`);
      assertFleetAccess(principal, finding.fleetId);
      return { ...finding, history: await audit.ofSubject(finding.vehicleId, findingId) };
    },

    /** open → acknowledged; an acknowledged or deferred finding is left as it is (409 when resolved). */
    acknowledge(principal: Principal, findingId: string): Promise<FindingView> {
      return apply(principal, findingId, 'acknowledge', (_row, s) =>
        s.status !== 'open'
          ? 'unchanged'
          : { ...s, status: 'acknowledged', acknowledgedAt: new Date(), acknowledgedBy: principal.keyId },
      );
    },

    /** open or acknowledged (or deferred: a new date) → deferred until `untilMs`, for `reason`. */
    defer(
      principal: Principal,
      findingId: string,
      untilMs: number,
      reason: string,
      nowMs: number,
    ): Promise<FindingView> {
      if (!(untilMs > nowMs)) throw new BadRequestError('until must be in the future', 'validation_failed');
      if (untilMs > nowMs + MAX_DEFERRAL_DAYS * DAY_MS)
        throw new BadRequestError(
          `a finding can be deferred by at most ${MAX_DEFERRAL_DAYS} days`,
          'validation_failed',
        );
      return apply(principal, findingId, 'defer', (_row, s) => ({
        ...s,
        status: 'deferred',
        deferredUntil: new Date(untilMs),
        deferredReason: reason,
        deferredBy: principal.keyId,
      }));
    },

    /** acknowledged or deferred → open (undo); an open finding is left as it is. */
    reopen(principal: Principal, findingId: string): Promise<FindingView> {
      return apply(principal, findingId, 'reopen', (_row, s) =>
        s.status === 'open'
          ? 'unchanged'
          : {
              status: 'open',
              acknowledgedAt: null,
              acknowledgedBy: null,
              deferredUntil: null,
              deferredReason: null,
              deferredBy: null,
            },
      );
    },
  };
}
