import { describe, expect, it } from 'vitest';
import { EXPECTED_FINDINGS } from '../../services/evaluation/expected-findings.js';
import { FindingsLedger } from '../../services/evaluation/findings-ledger.js';
import { riskAveragePrecision, scoreRun, type Alarm, type ScoredVehicle } from '../../services/evaluation/scoring.js';
import { DAY_MS } from '../../services/time/durations.js';

const ONSET = Date.UTC(2026, 5, 10);

function alarm(kind: string, seenDay: number, o: Partial<Alarm> = {}): Alarm {
  return {
    id: `${kind}@${seenDay}`,
    kind,
    maxSeverity: 'warning',
    seenAtMs: ONSET + seenDay * DAY_MS,
    datedMs: ONSET + seenDay * DAY_MS,
    ...o,
  };
}
function faulty(id: string, kind: string, alarms: Alarm[], riskScore = 0): ScoredVehicle {
  return { vehicleId: id, cohort: 'others', fault: { kind, onsetMs: ONSET, visible: true }, alarms, riskScore };
}
function healthy(
  id: string,
  alarms: Alarm[],
  riskScore = 0,
  cohort: ScoredVehicle['cohort'] = 'others',
): ScoredVehicle {
  return { vehicleId: id, cohort, fault: null, alarms, riskScore };
}

describe('scoring a field evaluation', () => {
  it("counts a finding seen before its fault's onset as a false alarm, not as the fault found", () => {
    const s = scoreRun([[faulty('A', 'thermostat-stuck-open', [alarm('slow-warmup', -2)])]], EXPECTED_FINDINGS);
    expect(s.faults[0]).toMatchObject({ kind: 'thermostat-stuck-open', visible: 1, found: 0, rightKind: 0 });
    expect(s.seenBeforeOnset).toBe(1);
    expect(s.precision).toBe(0);
  });

  it('finds a fault with the right kind from the first right-kind finding on or after onset, with median and worst delay', () => {
    const s = scoreRun(
      [
        [
          faulty('A', 'thermostat-stuck-open', [alarm('overshoot', 0.5), alarm('slow-warmup', 1)]),
          faulty('B', 'thermostat-stuck-open', [alarm('slow-warmup', 3), alarm('slow-warmup', 5)]),
          faulty('C', 'thermostat-stuck-open', [alarm('overshoot', 2)]),
        ],
      ],
      EXPECTED_FINDINGS,
    );
    expect(s.faults[0]).toMatchObject({
      n: 3,
      visible: 3,
      found: 3,
      rightKind: 2,
      medianDelayDays: 2,
      worstDelayDays: 3,
    });
    // 3 right-kind findings of 5 (the overshoots point at the wrong check).
    expect(s.precision).toBeCloseTo(3 / 5, 12);
  });

  it('counts right-kind findings that their evidence dates before onset, while still counting the fault as found', () => {
    const s = scoreRun(
      [[faulty('A', 'sensor-bias', [alarm('sensor-fault', 1, { datedMs: ONSET - 3 * DAY_MS })])]],
      EXPECTED_FINDINGS,
    );
    expect(s.datedBeforeOnset).toBe(1);
    expect(s.rightKind).toBe(1);
  });

  it('counts the alarms on healthy vehicles by kind and the most severe severity each reached', () => {
    const s = scoreRun(
      [
        [
          healthy('H1', [alarm('sensor-fault', 1), alarm('overshoot', 2, { maxSeverity: 'advisory' })]),
          healthy('H2', [alarm('sensor-fault', 3)]),
          faulty('A', 'fan-failure', [alarm('overheating-trend', 1)]),
        ],
      ],
      EXPECTED_FINDINGS,
    );
    expect(s.healthyAlarms).toEqual([
      { kind: 'sensor-fault', severity: 'warning', count: 2 },
      { kind: 'overshoot', severity: 'advisory', count: 1 },
    ]);
  });

  it('leaves vehicles whose fault never showed out of found, precision and the risk ordering', () => {
    const hidden: ScoredVehicle = {
      ...faulty('A', 'fan-failure', [alarm('overheating-trend', 1)], 90),
      fault: { kind: 'fan-failure', onsetMs: ONSET, visible: false },
    };
    const s = scoreRun([[hidden, healthy('H', [], 0)]], EXPECTED_FINDINGS);
    expect(s.faults[0]).toMatchObject({ n: 1, visible: 0, found: 0 });
    expect(s.alarms).toBe(0);
    expect(s.riskAveragePrecision).toBeNull();
  });

  it('counts healthy vehicles with any finding and with a warning or above, per cohort', () => {
    const s = scoreRun(
      [
        [
          healthy('H1', [alarm('overshoot', 1, { maxSeverity: 'advisory' })], 0, 'cold climate'),
          healthy('H2', [], 0, 'cold climate'),
          healthy('H3', [alarm('overheating-trend', 1, { maxSeverity: 'critical' })], 0, 'hot heavy duty'),
        ],
      ],
      EXPECTED_FINDINGS,
    );
    expect(s.healthy).toEqual([
      { cohort: 'cold climate', n: 2, anyFinding: 1, warningOrAbove: 0 },
      { cohort: 'hot heavy duty', n: 1, anyFinding: 1, warningOrAbove: 1 },
      { cohort: 'others', n: 0, anyFinding: 0, warningOrAbove: 0 },
    ]);
  });

  it('still counts a finding on a healthy vehicle that was resolved later, at the most severe it was ever shown', () => {
    const ledger = new FindingsLedger();
    const day = (d: number) => ONSET + d * DAY_MS;
    ledger.observe(
      [
        {
          id: 'f1',
          vehicleId: 'H',
          kind: 'overheating-trend',
          severity: 'warning',
          firstSeen: new Date(day(2)).toISOString(),
        },
      ],
      day(3),
    );
    // Later polls show it downgraded, then it is gone from the open list (resolved): still seen once.
    ledger.observe(
      [
        {
          id: 'f1',
          vehicleId: 'H',
          kind: 'overheating-trend',
          severity: 'advisory',
          firstSeen: new Date(day(2)).toISOString(),
        },
      ],
      day(4),
    );
    ledger.observe([], day(5));
    const alarms = ledger.alarmsOf('H');
    expect(alarms).toEqual([
      { id: 'f1', kind: 'overheating-trend', maxSeverity: 'warning', seenAtMs: day(3), datedMs: day(2) },
    ]);
    const s = scoreRun([[healthy('H', alarms)]], EXPECTED_FINDINGS);
    expect(s.healthy.find((c) => c.cohort === 'others')).toMatchObject({ n: 1, anyFinding: 1, warningOrAbove: 1 });
    expect(s.precision).toBe(0);
  });

  it('breaks ties in the risk order pessimistically: the healthy vehicle ranks above the faulty one it ties with', () => {
    expect(
      riskAveragePrecision([
        { risk: 50, positive: true },
        { risk: 50, positive: false },
      ]),
    ).toBe(0.5);
    // Ranks: healthy(50), faulty(50) -> 1/2; faulty(0) -> 2/3 (hand computation).
    expect(
      riskAveragePrecision([
        { risk: 0, positive: true },
        { risk: 50, positive: true },
        { risk: 50, positive: false },
      ]),
    ).toBeCloseTo((1 / 2 + 2 / 3) / 2, 12);
    expect(
      riskAveragePrecision([
        { risk: 80, positive: true },
        { risk: 10, positive: false },
      ]),
    ).toBe(1);
    expect(riskAveragePrecision([{ risk: 0, positive: false }])).toBeNull();
  });

  it('averages the risk-order precision over fleets', () => {
    const s = scoreRun(
      [
        [faulty('A', 'coolant-loss', [], 80), healthy('H', [], 10)],
        [faulty('B', 'coolant-loss', [], 0), healthy('I', [], 0)],
      ],
      EXPECTED_FINDINGS,
    );
    expect(s.riskAveragePrecision).toBeCloseTo((1 + 0.5) / 2, 12);
  });
});
