import { round, SAFETY_CAUTION, type Severity } from '../analysis/findings/finding.js';
import { utcDay } from '../analysis/sample-arrays.js';
import type { ReportVehicle, StoredFinding } from './report-repository.js';
import type { Priority, WorkItem } from './weekly-report-schema.js';

const SEVERITY_RANK: Readonly<Record<Severity, number>> = { critical: 0, warning: 1, advisory: 2 };
export const PRIORITY_OF: Readonly<Record<Severity, Priority>> = { critical: 'book now', warning: 'book this week', advisory: 'at next service' };

/** The check without the safety caution the analysis appends (the report states it once per item, in `caution`). */
export function checkWithoutCaution(check: string): string {
  return check.endsWith(SAFETY_CAUTION) ? check.slice(0, -SAFETY_CAUTION.length).trim() : check.trim();
}

/** Findings still unresolved at `asOfMs` (a finding resolved later counts as open then). */
export function unresolvedAt(findings: readonly StoredFinding[], asOfMs: number): StoredFinding[] {
  return findings.filter((f) => f.firstSeenMs < asOfMs && (f.resolvedMs === null || f.resolvedMs >= asOfMs));
}

/**
 * The shop's work list: every unresolved finding, vehicles in order of risk (as the at-risk
 * list), each vehicle's findings by severity then confidence.
 */
export function buildWorkList(unresolved: readonly StoredFinding[], vehicles: ReadonlyMap<string, ReportVehicle>): WorkItem[] {
  const risk = (id: string) => vehicles.get(id)?.riskScore ?? 0;
  const sorted = [...unresolved].sort((a, b) =>
    risk(b.vehicleId) - risk(a.vehicleId) || a.vehicleId.localeCompare(b.vehicleId)
    || SEVERITY_RANK[a.severity] - SEVERITY_RANK[b.severity] || b.confidence - a.confidence || a.findingId.localeCompare(b.findingId));
  return sorted.map((f, i) => ({
    rank: i + 1,
    vehicleId: f.vehicleId,
    label: vehicles.get(f.vehicleId)?.label ?? null,
    riskScore: risk(f.vehicleId),
    priority: PRIORITY_OF[f.severity],
    findingId: f.findingId,
    kind: f.kind,
    severity: f.severity,
    status: f.status === 'acknowledged' || f.status === 'deferred' ? f.status : 'open',
    deferredUntil: f.status === 'deferred' && f.deferredUntilMs !== null ? utcDay(f.deferredUntilMs) : null,
    deferredReason: f.status === 'deferred' ? f.deferredReason : null,
    why: f.summary,
    check: checkWithoutCaution(f.recommendedCheck),
    since: utcDay(f.firstSeenMs),
    lastSeen: utcDay(f.lastSeenMs),
    confidence: round(f.confidence, 3),
    troubleCode: f.troubleCode,
    caution: SAFETY_CAUTION,
  }));
}

/** The most urgent priority among a vehicle's items. */
export function vehiclePriority(items: readonly WorkItem[]): Priority {
  const worst = items.reduce<Severity>((w, item) => (SEVERITY_RANK[item.severity] < SEVERITY_RANK[w] ? item.severity : w), 'advisory');
  return PRIORITY_OF[worst];
}
