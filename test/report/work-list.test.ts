import { describe, expect, it } from 'vitest';
import { COOLANT_DISPOSAL_CAUTION, ENGINE_RUNNING_CAUTION } from '../../services/analysis/findings/cautions.js';
import { SAFETY_CAUTION } from '../../services/analysis/findings/finding.js';
import type { ReportVehicle, StoredFinding } from '../../services/db/weekly-report-repository.js';
import { buildWorkList } from '../../services/report/work-list.js';
import { DAY_MS } from '../../services/time/durations.js';

const T = Date.UTC(2026, 10, 20);

function stored(over: Partial<StoredFinding>): StoredFinding {
  return {
    findingId: 'f',
    vehicleId: 'V',
    kind: 'slow-warmup',
    severity: 'advisory',
    confidence: 0.5,
    firstSeenMs: T - 10 * DAY_MS,
    lastSeenMs: T,
    createdMs: T,
    status: 'open',
    summary: 'summary',
    recommendedCheck: `Check the thermostat. ${SAFETY_CAUTION}`,
    troubleCode: null,
    resolvedMs: null,
    resolvedReason: null,
    deferredUntilMs: null,
    deferredReason: null,
    key: 'k',
    metrics: {},
    acknowledgedMs: null,
    ...over,
  };
}

const vehicle = (vehicleId: string, riskScore: number): [string, ReportVehicle] => [
  vehicleId,
  {
    vehicleId,
    label: null,
    engineFamily: 'default',
    thermostatOpenC: 88,
    capPressureKpa: 100,
    glycolPercent: 50,
    riskScore,
  },
];

describe('the work list', () => {
  const vehicles = new Map([vehicle('A', 90), vehicle('B', 40)]);
  const list = buildWorkList(
    [
      stored({
        findingId: 'a-warm',
        vehicleId: 'A',
        kind: 'slow-warmup',
        severity: 'advisory',
        firstSeenMs: T - 20 * DAY_MS,
      }),
      stored({
        findingId: 'a-trend',
        vehicleId: 'A',
        kind: 'overheating-trend',
        severity: 'critical',
        confidence: 0.9,
        recommendedCheck: `Check the fan. ${SAFETY_CAUTION}`,
      }),
      stored({
        findingId: 'a-boil',
        vehicleId: 'A',
        kind: 'boil-margin',
        severity: 'warning',
        status: 'acknowledged',
        recommendedCheck: `Check the fan. ${SAFETY_CAUTION}`,
      }),
      stored({
        findingId: 'b-sensor',
        vehicleId: 'B',
        kind: 'sensor-fault',
        severity: 'warning',
        status: 'deferred',
        deferredUntilMs: T + 7 * DAY_MS,
        deferredReason: 'parts on order',
        recommendedCheck: `Check the sensor wiring. ${SAFETY_CAUTION}`,
      }),
    ],
    vehicles,
  );

  it('has one row per vehicle, in order of risk, with the worst priority and every unresolved finding most severe first', () => {
    expect(list.map((w) => [w.rank, w.vehicleId, w.priority])).toEqual([
      [1, 'A', 'book now'],
      [2, 'B', 'book this week'],
    ]);
    expect(list[0]!.findings.map((f) => [f.findingId, f.status])).toEqual([
      ['a-trend', 'open'],
      ['a-boil', 'acknowledged'],
      ['a-warm', 'open'],
    ]);
    expect(list[0]).toMatchObject({ findingId: 'a-trend', kind: 'overheating-trend', since: '2026-10-31' });
  });

  it('combines the checks of one vehicle into one list without repeats, the caution split off', () => {
    expect(list[0]!.checks).toEqual(['Check the fan.', 'Check the thermostat.']);
    expect(list[0]!.check).toBe('Check the fan. Check the thermostat.');
  });

  it('gives the cautions the checks call for: the general one always, engine running and coolant disposal where needed', () => {
    expect(list[0]!.cautions).toEqual([SAFETY_CAUTION, ENGINE_RUNNING_CAUTION, COOLANT_DISPOSAL_CAUTION]);
    expect(list[1]!.cautions).toEqual([SAFETY_CAUTION]);
    expect(ENGINE_RUNNING_CAUTION).toMatch(/fan/);
    expect(COOLANT_DISPOSAL_CAUTION).toMatch(/toxic.*local rules/);
  });

  it('shows a deferral with its date and reason', () => {
    expect(list[1]!.findings[0]).toMatchObject({
      status: 'deferred',
      deferredUntil: '2026-11-27',
      deferredReason: 'parts on order',
    });
    expect(list[1]).toMatchObject({ status: 'deferred', deferredUntil: '2026-11-27' });
  });
});
