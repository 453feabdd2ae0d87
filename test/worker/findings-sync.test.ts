import { sql } from 'kysely';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Finding } from '../../services/analysis/findings/finding.js';
import { refreshVehicleRisk } from '../../services/db/vehicle-risk.js';
import { EVIDENCE_STOPPED, syncFindings } from '../../services/db/findings-sync.js';
import { createTestDatabase, type TestDatabase } from '../helpers/test-database.js';
import { DAY_MS } from '../../services/time/durations.js';

const QUIET_MS = 14 * DAY_MS;
const T = Date.UTC(2026, 10, 1);
let tdb: TestDatabase;

beforeAll(async () => {
  tdb = await createTestDatabase();
  await sql`insert into vehicles (vehicle_id, fleet_id) values ('S-1', 'f'), ('S-2', 'f')`.execute(tdb.handle.db);
  await sql`insert into vehicle_analysis (vehicle_id, fleet_id, last_reading_at) values ('S-1', 'f', to_timestamp(${T / 1000})), ('S-2', 'f', to_timestamp(${T / 1000}))`.execute(
    tdb.handle.db,
  );
});
afterAll(async () => tdb.drop());

function finding(over: Partial<Finding> = {}): Finding {
  return {
    key: 'overshoot@2026-09-01T00:00:00.000Z',
    kind: 'overshoot',
    subKind: null,
    severity: 'warning',
    confidence: 0.8,
    firstSeen: T - 10 * DAY_MS,
    lastSeen: T - DAY_MS,
    summary: 'overshoots',
    recommendedCheck: 'check',
    troubleCode: null,
    metrics: { medianZ: 3.1 },
    evidence: [{ at: T - DAY_MS, scope: 'run', metric: 'overshootC', value: 9, expected: 3, z: 3.1 }],
    ...over,
  };
}

const stored = (vehicleId: string) =>
  tdb.handle.db.selectFrom('findings').selectAll().where('vehicle_id', '=', vehicleId).orderBy('finding_key').execute();
const sync = (vehicleId: string, asOfMs: number, derived: Finding[]) =>
  tdb.handle.db
    .transaction()
    .execute((trx) => syncFindings(trx, { vehicleId, fleetId: 'f', asOfMs, derived, quietPeriodMs: QUIET_MS }));

describe('syncing derived findings into the findings table', () => {
  it('inserts a new finding as open, raised at the analysis time, and leaves an unchanged one untouched on a re-run', async () => {
    await sync('S-1', T, [finding()]);
    const [first] = await stored('S-1');
    expect(first).toMatchObject({ status: 'open', kind: 'overshoot', severity: 'warning', confidence: 0.8 });
    expect(first!.raised_at?.getTime()).toBe(T);
    await sync('S-1', T, [finding()]);
    const [again] = await stored('S-1');
    expect(again!.finding_id).toBe(first!.finding_id);
    expect(again!.updated_at.getTime()).toBe(first!.updated_at.getTime());
  });

  it('updates the content of a finding by its key and keeps its acknowledgement', async () => {
    await sql`update findings set status = 'acknowledged', acknowledged_by = 'planner' where vehicle_id = 'S-1'`.execute(
      tdb.handle.db,
    );
    await sync('S-1', T + DAY_MS, [finding({ severity: 'critical', lastSeen: T, confidence: 0.9 })]);
    const rows = await stored('S-1');
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({ status: 'acknowledged', acknowledged_by: 'planner', severity: 'critical' });
    expect(rows[0]!.last_seen.getTime()).toBe(T);
  });

  it('keeps a finding that is no longer derived until its evidence has been quiet for the quiet period, then resolves it', async () => {
    await sync('S-1', T + 10 * DAY_MS, []);
    expect((await stored('S-1'))[0]!.status).toBe('acknowledged');
    const resolvedAt = T + QUIET_MS + 2 * DAY_MS;
    await sync('S-1', resolvedAt, []);
    const [row] = await stored('S-1');
    expect(row).toMatchObject({ status: 'resolved', resolved_reason: EVIDENCE_STOPPED });
    expect(row!.resolved_at?.getTime()).toBe(resolvedAt);
  });

  it('reopens a finding that resolved itself when its evidence returns', async () => {
    await sync('S-1', T + 40 * DAY_MS, [finding({ lastSeen: T + 39 * DAY_MS })]);
    const [row] = await stored('S-1');
    expect(row).toMatchObject({ status: 'open', resolved_reason: null, resolved_at: null });
  });

  it('keeps a finding resolved by a repair resolved even when derived again', async () => {
    await sync('S-2', T, [finding()]);
    await sql`update findings set status = 'resolved', resolved_reason = 'service-event:thermostat-replaced' where vehicle_id = 'S-2'`.execute(
      tdb.handle.db,
    );
    await sync('S-2', T + DAY_MS, [finding({ lastSeen: T })]);
    expect((await stored('S-2'))[0]).toMatchObject({
      status: 'resolved',
      resolved_reason: 'service-event:thermostat-replaced',
    });
  });

  it("scores risk from open findings only, at the vehicle's latest reading", async () => {
    await sync('S-2', T, [
      finding({ key: 'boil-margin@x', kind: 'boil-margin', severity: 'critical', confidence: 1, lastSeen: T }),
    ]);
    const risk = await tdb.handle.db.transaction().execute((trx) => refreshVehicleRisk(trx, 'S-2'));
    // risk-score.ts: one certain, current critical finding weighs 0.95 → 95 (its JSDoc example).
    expect(risk).toBe(95);
    const row = await tdb.handle.db
      .selectFrom('vehicle_analysis')
      .selectAll()
      .where('vehicle_id', '=', 'S-2')
      .executeTakeFirstOrThrow();
    expect(row).toMatchObject({ risk_score: 95, open_findings: 1, max_severity: 'critical' });
  });
});
