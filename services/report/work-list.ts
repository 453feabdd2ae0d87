import { cautionsFor } from '../analysis/findings/cautions.js';
import { defaultProfileNote } from '../analysis/findings/profile-assumptions.js';
import { round, SAFETY_CAUTION, type Severity } from '../analysis/findings/finding.js';
import { utcDay } from '../analysis/sample-arrays.js';
import type { PlannerStateAt, ReportVehicle, StoredFinding } from '../db/weekly-report-repository.js';
import type { Priority, WorkFinding, WorkItem } from './weekly-report-schema.js';

const SEVERITY_RANK: Readonly<Record<Severity, number>> = { critical: 0, warning: 1, advisory: 2 };
export const PRIORITY_OF: Readonly<Record<Severity, Priority>> = {
  critical: 'book now',
  warning: 'book this week',
  advisory: 'at next service',
};

/** The check without the safety caution the analysis appends (the report states the cautions once per vehicle). */
export function checkWithoutCaution(check: string): string {
  return check.endsWith(SAFETY_CAUTION) ? check.slice(0, -SAFETY_CAUTION.length).trim() : check.trim();
}

/** Findings still unresolved at `asOfMs` (a finding resolved later counts as open then). */
export function unresolvedAt(findings: readonly StoredFinding[], asOfMs: number): StoredFinding[] {
  return findings.filter((f) => f.firstSeenMs < asOfMs && (f.resolvedMs === null || f.resolvedMs >= asOfMs));
}

/**
 * The findings with their planner state as it stood at the end of a past week (`states` from
 * plannerStatesAt): a deferral or acknowledgement made after the week ended is not shown, one
 * undone after it is. A finding with no planner action by then was open, unless it was
 * acknowledged by then before the audit existed.
 */
export function withPlannerStatesAt(
  findings: readonly StoredFinding[],
  states: ReadonlyMap<string, PlannerStateAt>,
  asOfMs: number,
): StoredFinding[] {
  return findings.map((f) => {
    const s = states.get(f.findingId);
    if (s)
      return {
        ...f,
        status: s.status,
        deferredUntilMs: s.deferredUntilMs,
        deferredReason: s.deferredReason,
        acknowledgedMs: s.acknowledged ? f.acknowledgedMs : null,
      };
    const acknowledged = f.acknowledgedMs !== null && f.acknowledgedMs <= asOfMs;
    return {
      ...f,
      status: acknowledged ? 'acknowledged' : 'open',
      deferredUntilMs: null,
      deferredReason: null,
      acknowledgedMs: acknowledged ? f.acknowledgedMs : null,
    };
  });
}

const statusOf = (f: StoredFinding): WorkFinding['status'] =>
  f.status === 'acknowledged' || f.status === 'deferred' ? f.status : 'open';

function workFinding(finding: StoredFinding, defaultProfile: boolean): WorkFinding {
  const deferred = finding.status === 'deferred';
  return {
    findingId: finding.findingId,
    kind: finding.kind,
    severity: finding.severity,
    status: statusOf(finding),
    priority: PRIORITY_OF[finding.severity],
    why: finding.summary,
    check: checkWithoutCaution(finding.recommendedCheck),
    since: utcDay(finding.firstSeenMs),
    lastSeen: utcDay(finding.lastSeenMs),
    confidence: round(finding.confidence, 3),
    troubleCode: finding.troubleCode,
    deferredUntil: deferred && finding.deferredUntilMs !== null ? utcDay(finding.deferredUntilMs) : null,
    deferredReason: deferred ? finding.deferredReason : null,
    profileNote: defaultProfileNote(finding.kind, defaultProfile),
  };
}

/**
 * The shop's work list: one row per vehicle (a shop visit covers all of a vehicle's checks),
 * vehicles in order of risk (as the at-risk list). Each row carries the worst priority, every
 * unresolved finding (most severe first), one combined list of checks without repeats, and the
 * cautions those checks call for. The row's finding fields (findingId, kind, why, …) are those of
 * its most severe finding, so clients that read one finding per row still get the first thing to do.
 */
export function buildWorkList(
  unresolved: readonly StoredFinding[],
  vehicles: ReadonlyMap<string, ReportVehicle>,
): WorkItem[] {
  const risk = (id: string) => vehicles.get(id)?.riskScore ?? 0;
  const byVehicle = new Map<string, StoredFinding[]>();
  for (const f of unresolved) byVehicle.set(f.vehicleId, [...(byVehicle.get(f.vehicleId) ?? []), f]);
  const ids = [...byVehicle.keys()].sort((a, b) => risk(b) - risk(a) || a.localeCompare(b));
  return ids.map((vehicleId, i) => {
    const own = byVehicle
      .get(vehicleId)!
      .sort(
        (a, b) =>
          SEVERITY_RANK[a.severity] - SEVERITY_RANK[b.severity] ||
          b.confidence - a.confidence ||
          a.findingId.localeCompare(b.findingId),
      );
    const defaultProfile = vehicles.get(vehicleId)?.defaultProfile ?? false;
    const findings = own.map((f) => workFinding(f, defaultProfile));
    const worst = findings[0]!;
    const checks = [...new Set(findings.map((f) => f.check))];
    const cautions = cautionsFor(findings.map((f) => f.kind));
    return {
      rank: i + 1,
      vehicleId,
      label: vehicles.get(vehicleId)?.label ?? null,
      riskScore: risk(vehicleId),
      defaultProfile,
      depot: vehicles.get(vehicleId)?.depot ?? null,
      priority: worst.priority,
      findingId: worst.findingId,
      kind: worst.kind,
      severity: worst.severity,
      status: worst.status,
      deferredUntil: worst.deferredUntil,
      deferredReason: worst.deferredReason,
      why: worst.why,
      check: checks.join(' '),
      since: findings.reduce((s, f) => (f.since < s ? f.since : s), worst.since),
      lastSeen: findings.reduce((s, f) => (f.lastSeen > s ? f.lastSeen : s), worst.lastSeen),
      confidence: worst.confidence,
      troubleCode: worst.troubleCode,
      caution: cautions.join(' '),
      findings,
      checks,
      cautions,
    };
  });
}

/** The most urgent priority among a vehicle's findings. */
export function vehiclePriority(items: ReadonlyArray<{ severity: Severity }>): Priority {
  const worst = items.reduce<Severity>(
    (w, item) => (SEVERITY_RANK[item.severity] < SEVERITY_RANK[w] ? item.severity : w),
    'advisory',
  );
  return PRIORITY_OF[worst];
}
