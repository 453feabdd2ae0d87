import { DAY_MS } from '../time/durations.js';
/**
 * Scores what a planner saw against the ground truth of simulated fleets. Pure: the alarms may
 * be the service's findings read over HTTP, or a baseline rule's hits.
 *
 * Definitions (services/evaluation/README.md):
 * - An alarm is every finding a planner could have seen, resolved or superseded ones included,
 *   with the most severe severity it was ever shown at and the time it was first seen.
 * - A fault is found when any alarm on its vehicle was first seen on or after onset, and found
 *   with the right kind when such an alarm is of a kind expected for the fault; the delay is
 *   from onset to the first right-kind alarm. Alarms seen before onset are false alarms.
 * - Precision: alarms of an expected kind seen on or after onset on a vehicle whose fault is
 *   visible, over all alarms; vehicles whose fault never showed are left out (their alarms are
 *   neither right nor wrong).
 * - Average precision of the risk ordering, per fleet: vehicles with a visible fault are the
 *   positives, healthy vehicles the negatives; ties in risk are broken pessimistically (the
 *   healthy first); the run's figure is the mean over fleets.
 */

export type Severity = 'advisory' | 'warning' | 'critical';
export type Cohort = 'cold climate' | 'hot heavy duty' | 'others';
export const COHORTS: readonly Cohort[] = ['cold climate', 'hot heavy duty', 'others'];

export interface Alarm {
  id: string;
  kind: string;
  /** The most severe severity it was ever shown at. */
  maxSeverity: Severity;
  /** When a planner could first see it, epoch ms (true time). */
  seenAtMs: number;
  /** When its evidence dates it from (firstSeen), epoch ms. */
  datedMs: number;
}

export interface ScoredVehicle {
  vehicleId: string;
  cohort: Cohort;
  fault: { kind: string; onsetMs: number; visible: boolean } | null;
  alarms: readonly Alarm[];
  /** Risk at the end of the period (0 when not listed). */
  riskScore: number;
}

export interface FaultKindScore {
  kind: string;
  n: number;
  visible: number;
  found: number;
  rightKind: number;
  medianDelayDays: number | null;
  worstDelayDays: number | null;
}

export interface CohortScore {
  cohort: Cohort;
  n: number;
  anyFinding: number;
  warningOrAbove: number;
}

export interface RunScore {
  faults: FaultKindScore[];
  healthy: CohortScore[];
  /** All faults together. */
  visibleFaults: number;
  found: number;
  rightKind: number;
  alarms: number;
  correctAlarms: number;
  precision: number | null;
  /** Mean over fleets of the average precision of the risk ordering; null when no fleet has a positive. */
  riskAveragePrecision: number | null;
  /** Alarms on faulty vehicles first seen before onset (false alarms). */
  seenBeforeOnset: number;
  /** Right-kind alarms seen on or after onset whose evidence dates them before onset. */
  datedBeforeOnset: number;
  /** Alarms on healthy vehicles by kind and the most severe severity each was shown at, most frequent first. */
  healthyAlarms: Array<{ kind: string; severity: Severity; count: number }>;
}

const RANK: Readonly<Record<Severity, number>> = { advisory: 0, warning: 1, critical: 2 };

/** True when severity `s` is `min` or above. */
export function atLeast(s: Severity, min: Severity): boolean {
  return RANK[s] >= RANK[min];
}

function median(xs: number[]): number | null {
  if (xs.length === 0) return null;
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? (s[m] as number) : ((s[m - 1] as number) + (s[m] as number)) / 2;
}

/**
 * Average precision of a ranking by risk, ties broken pessimistically: within a tie the
 * negatives rank first. Null when there is no positive.
 * @example riskAveragePrecision([{ risk: 50, positive: true }, { risk: 50, positive: false }]) // 0.5
 */
export function riskAveragePrecision(items: ReadonlyArray<{ risk: number; positive: boolean }>): number | null {
  const sorted = [...items].sort((a, b) => b.risk - a.risk || Number(a.positive) - Number(b.positive));
  const positives = sorted.filter((x) => x.positive).length;
  if (positives === 0) return null;
  let hits = 0;
  let sum = 0;
  sorted.forEach((x, i) => {
    if (!x.positive) return;
    hits++;
    sum += hits / (i + 1);
  });
  return sum / positives;
}

/**
 * Scores a run over several fleets (one array of vehicles each) against the finding kinds
 * expected for each fault kind.
 * @example scoreRun([fleetA, fleetB], EXPECTED_FINDINGS).precision
 */
export function scoreRun(
  fleets: ReadonlyArray<readonly ScoredVehicle[]>,
  expected: Readonly<Record<string, readonly string[]>>,
): RunScore {
  const kinds = new Map<string, { n: number; visible: number; found: number; right: number; delays: number[] }>();
  const cohorts = new Map<Cohort, CohortScore>(
    COHORTS.map((c) => [c, { cohort: c, n: 0, anyFinding: 0, warningOrAbove: 0 }]),
  );
  let alarms = 0;
  let correct = 0;
  let seenBefore = 0;
  let datedBefore = 0;
  const healthyAlarms = new Map<string, { kind: string; severity: Severity; count: number }>();
  const aps: number[] = [];
  for (const fleet of fleets) {
    const ranking: Array<{ risk: number; positive: boolean }> = [];
    for (const v of fleet) {
      const f = v.fault;
      if (f === null) {
        const c = cohorts.get(v.cohort) as CohortScore;
        c.n++;
        if (v.alarms.length > 0) c.anyFinding++;
        if (v.alarms.some((a) => atLeast(a.maxSeverity, 'warning'))) c.warningOrAbove++;
        alarms += v.alarms.length;
        for (const a of v.alarms) {
          const key = `${a.kind} ${a.maxSeverity}`;
          const line = healthyAlarms.get(key) ?? { kind: a.kind, severity: a.maxSeverity, count: 0 };
          line.count++;
          healthyAlarms.set(key, line);
        }
        ranking.push({ risk: v.riskScore, positive: false });
        continue;
      }
      const line = kinds.get(f.kind) ?? { n: 0, visible: 0, found: 0, right: 0, delays: [] };
      kinds.set(f.kind, line);
      line.n++;
      if (!f.visible) continue;
      line.visible++;
      ranking.push({ risk: v.riskScore, positive: true });
      const expectedKinds = expected[f.kind] ?? [];
      const after = v.alarms.filter((a) => a.seenAtMs >= f.onsetMs);
      const right = after.filter((a) => expectedKinds.includes(a.kind));
      alarms += v.alarms.length;
      correct += right.length;
      seenBefore += v.alarms.length - after.length;
      datedBefore += right.filter((a) => a.datedMs < f.onsetMs).length;
      if (after.length > 0) line.found++;
      if (right.length > 0) {
        line.right++;
        line.delays.push((Math.min(...right.map((a) => a.seenAtMs)) - f.onsetMs) / DAY_MS);
      }
    }
    const ap = riskAveragePrecision(ranking);
    if (ap !== null) aps.push(ap);
  }
  const faults = [...kinds.entries()]
    .sort(([a], [b]) => a.localeCompare(b))
    .map(([kind, l]) => ({
      kind,
      n: l.n,
      visible: l.visible,
      found: l.found,
      rightKind: l.right,
      medianDelayDays: median(l.delays),
      worstDelayDays: l.delays.length > 0 ? Math.max(...l.delays) : null,
    }));
  return {
    faults,
    healthy: [...cohorts.values()],
    visibleFaults: faults.reduce((s, f) => s + f.visible, 0),
    found: faults.reduce((s, f) => s + f.found, 0),
    rightKind: faults.reduce((s, f) => s + f.rightKind, 0),
    alarms,
    correctAlarms: correct,
    precision: alarms > 0 ? correct / alarms : null,
    riskAveragePrecision: aps.length > 0 ? aps.reduce((s, x) => s + x, 0) / aps.length : null,
    seenBeforeOnset: seenBefore,
    datedBeforeOnset: datedBefore,
    healthyAlarms: [...healthyAlarms.values()].sort(
      (a, b) => b.count - a.count || a.kind.localeCompare(b.kind) || RANK[b.severity] - RANK[a.severity],
    ),
  };
}
