import { sql } from 'kysely';
import { beforeAll, describe, expect, it } from 'vitest';
import { DEFAULT_ANALYSIS_CONFIG } from '../../services/analysis/config.js';
import type { Finding } from '../../services/analysis/findings/finding.js';
import { refreshVehicleRisk } from '../../services/db/vehicle-risk.js';
import { syncFindings } from '../../services/db/findings-sync.js';
import { useTestApp } from '../helpers/test-app.js';
import { DAY_MS } from '../../services/time/durations.js';

// Regression: deleting or correcting a service event must not leave the findings it resolved
// resolved (they reopen where their evidence is still there), nor keep the findings derived
// under the baseline it started; and the audit of each finding says why it changed.
const t = useTestApp();
const T = Date.UTC(2026, 10, 20);
const QUIET_MS = DEFAULT_ANALYSIS_CONFIG.findingStaleDays * DAY_MS;
const HISTORY = '2026-08-01T00:00:00.000Z';
const EVENT_AT = T - 40 * DAY_MS;
let key: string;

const api = (method: 'GET' | 'POST' | 'PATCH' | 'DELETE', url: string, body?: Record<string, unknown>) =>
  t.app.inject({ method, url, headers: t.auth(key), ...(body ? { payload: body } : {}) });

function finding(kind: Finding['kind'], baseline: string, firstSeen: number, lastSeen: number): Finding {
  return {
    key: `${kind}@${baseline}`,
    kind,
    subKind: null,
    severity: 'warning',
    confidence: 0.8,
    firstSeen,
    lastSeen,
    summary: `${kind} seen`,
    recommendedCheck: 'Check it.',
    troubleCode: null,
    metrics: {},
    evidence: [],
  };
}

async function sync(vehicleId: string, derived: Finding[]): Promise<void> {
  await t.tdb.handle.db.transaction().execute(async (trx) => {
    await syncFindings(trx, { vehicleId, fleetId: 'fleet-undo', asOfMs: T, derived, quietPeriodMs: QUIET_MS });
    await refreshVehicleRisk(trx, vehicleId);
  });
}

type View = { id: string; key: string; kind: string; status: string; resolvedReason: string | null };
const findingsOf = async (vehicleId: string) =>
  (await api('GET', `/v1/vehicles/${vehicleId}/findings`)).json().findings as View[];
const byKey = async (vehicleId: string) => Object.fromEntries((await findingsOf(vehicleId)).map((f) => [f.key, f]));
/** The finding's audit trail through the API. */
const auditOf = async (findingId: string) => {
  const res = await api('GET', `/v1/findings/${findingId}`);
  expect(res.statusCode, res.body).toBe(200);
  return res.json().history as Array<{ action: string; after: Record<string, unknown> }>;
};

beforeAll(async () => {
  key = await t.createKey('fleet-undo', ['read']);
  const db = t.tdb.handle.db;
  for (const id of ['UN-1', 'UN-2']) {
    await sql`insert into vehicles (vehicle_id, fleet_id) values (${id}, 'fleet-undo')`.execute(db);
    await sql`insert into vehicle_analysis (vehicle_id, fleet_id, last_reading_at) values (${id}, 'fleet-undo', to_timestamp(${T / 1000}))`.execute(
      db,
    );
    // The trend is still seen at T; the boil margin was last seen long before (its evidence has stopped).
    await sync(id, [
      finding('overheating-trend', HISTORY, T - 60 * DAY_MS, T),
      finding('boil-margin', HISTORY, T - 70 * DAY_MS, T - QUIET_MS - 5 * DAY_MS),
    ]);
  }
});

async function recordCapRepair(vehicleId: string): Promise<string> {
  const res = await api('POST', `/v1/vehicles/${vehicleId}/service-events`, {
    kind: 'pressure-cap-replaced',
    at: new Date(EVENT_AT).toISOString(),
  });
  expect(res.statusCode, res.body).toBe(201);
  expect(res.json().resolvedFindings).toHaveLength(2);
  // The worker's next pass: the trend shows again under the baseline the repair started.
  await sync(vehicleId, [finding('overheating-trend', new Date(EVENT_AT).toISOString(), EVENT_AT + 2 * DAY_MS, T)]);
  return res.json().event.id as string;
}

describe('deleting a service event', () => {
  it('reopens what it resolved where the evidence is still there, closes the rest as evidence-stopped, supersedes the findings of its baseline, and audits each', async () => {
    const eventId = await recordCapRepair('UN-1');
    const before = await byKey('UN-1');
    const trend = before[`overheating-trend@${HISTORY}`]!;
    const margin = before[`boil-margin@${HISTORY}`]!;
    const underRepair = before[`overheating-trend@${new Date(EVENT_AT).toISOString()}`]!;
    expect([trend.status, margin.status, underRepair.status]).toEqual(['resolved', 'resolved', 'open']);

    const res = await api('DELETE', `/v1/vehicles/UN-1/service-events/${eventId}`);
    expect(res.statusCode, res.body).toBe(200);
    expect(res.json()).toEqual({
      deleted: eventId,
      reopenedFindings: [trend.id],
      evidenceStoppedFindings: [margin.id],
      supersededFindings: [underRepair.id],
    });

    const after = await byKey('UN-1');
    expect(after[trend.key]).toMatchObject({ status: 'open', resolvedReason: null });
    expect(after[margin.key]).toMatchObject({ status: 'resolved', resolvedReason: 'evidence-stopped' });
    expect(after[underRepair.key]).toMatchObject({ status: 'resolved', resolvedReason: 'superseded' });
    // Nothing the deleted repair did is left standing as resolved by it.
    expect(Object.values(after).some((f) => f.resolvedReason?.startsWith('service-event:'))).toBe(false);

    for (const [f, status] of [
      [trend, 'reopened'],
      [margin, 'resolved'],
      [underRepair, 'resolved'],
    ] as const) {
      const audit = await auditOf(f.id);
      expect(audit).toHaveLength(1);
      expect(audit[0]).toMatchObject({
        action: 'service-event-delete',
        after: { serviceEvent: eventId, eventAction: 'delete', status },
      });
    }
    const history = await t.tdb.handle.db
      .selectFrom('planner_actions')
      .select(['action', 'after'])
      .where('subject_id', '=', eventId)
      .execute();
    expect(history).toEqual([
      {
        action: 'delete',
        after: {
          reopenedFindings: [trend.id],
          evidenceStoppedFindings: [margin.id],
          supersededFindings: [underRepair.id],
        },
      },
    ]);
    const other = await t.createKey('fleet-undo-other', ['read']);
    expect(
      (await t.app.inject({ method: 'GET', url: `/v1/findings/${trend.id}`, headers: t.auth(other) })).statusCode,
    ).toBe(403);
    expect((await api('GET', '/v1/findings/no-such-finding')).statusCode).toBe(404);
  });

  it('keeps the reopened finding open at the next analysis pass while its evidence continues, and opens a superseded one again if it is derived again', async () => {
    const before = await byKey('UN-1');
    const underRepairKey = `overheating-trend@${new Date(EVENT_AT).toISOString()}`;
    await sync('UN-1', [finding('overheating-trend', HISTORY, T - 60 * DAY_MS, T)]);
    expect((await byKey('UN-1'))[`overheating-trend@${HISTORY}`]!.status).toBe('open');
    expect((await byKey('UN-1'))[underRepairKey]!.status).toBe('resolved');
    await sync('UN-1', [finding('overheating-trend', new Date(EVENT_AT).toISOString(), EVENT_AT + 2 * DAY_MS, T)]);
    expect((await byKey('UN-1'))[underRepairKey]).toMatchObject({ id: before[underRepairKey]!.id, status: 'open' });
    const risk = (await api('GET', '/v1/fleet/at-risk')).json().vehicles.map((v: { vehicleId: string }) => v.vehicleId);
    expect(risk).toContain('UN-1');
  });
});

describe('correcting a service event', () => {
  it('moving it in time reopens what it resolved and supersedes the findings of the withdrawn baseline; a notes-only correction changes no finding', async () => {
    const eventId = await recordCapRepair('UN-2');
    const underRepairKey = `overheating-trend@${new Date(EVENT_AT).toISOString()}`;
    const notes = await api('PATCH', `/v1/vehicles/UN-2/service-events/${eventId}`, { notes: 'cap held 60 kPa' });
    expect(notes.statusCode).toBe(200);
    expect(
      Object.values(await byKey('UN-2'))
        .map((f) => `${f.kind} ${f.status}`)
        .sort(),
    ).toEqual(['boil-margin resolved', 'overheating-trend open', 'overheating-trend resolved']);

    // Recorded 40 days too early: the repair was done after the trend began, and after the margin's evidence had stopped.
    const moved = await api('PATCH', `/v1/vehicles/UN-2/service-events/${eventId}`, {
      at: new Date(T - 2 * DAY_MS).toISOString(),
    });
    expect(moved.statusCode, moved.body).toBe(200);
    const after = await byKey('UN-2');
    expect(after[underRepairKey]).toMatchObject({ status: 'resolved', resolvedReason: 'superseded' });
    expect(after[`boil-margin@${HISTORY}`]).toMatchObject({ status: 'resolved' });
    // The trend began before the corrected time: the corrected repair resolves it again.
    expect(after[`overheating-trend@${HISTORY}`]).toMatchObject({
      status: 'resolved',
      resolvedReason: 'service-event:pressure-cap-replaced',
    });
    const audit = await auditOf(after[underRepairKey]!.id);
    expect(audit.map((a) => a.action)).toEqual(['service-event-correct']);
    const eventAudit = await t.tdb.handle.db
      .selectFrom('planner_actions')
      .select(['action', 'after'])
      .where('subject_id', '=', eventId)
      .orderBy('at')
      .execute();
    expect(eventAudit.map((a) => a.action)).toEqual(['correct', 'correct']);
    expect(eventAudit[1]!.after).toMatchObject({ supersededFindings: [after[underRepairKey]!.id] });
  });
});
