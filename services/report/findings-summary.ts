import type { StoredFinding } from '../db/weekly-report-repository.js';
import type { WeeklyReport } from './weekly-report-schema.js';

type Summary = WeeklyReport['findings'];
type Phase = 'new' | 'ongoing' | 'resolved';
const SEVERITIES = ['critical', 'warning', 'advisory'] as const;

/**
 * Where a finding stood in the week [startMs, endMs): resolved within it, new (first evidence
 * within it) or ongoing (first evidence before it, unresolved at its end); null otherwise.
 * Dated by evidence, not by when the worker stored the finding, so back-filled data lands in
 * the week it describes.
 */
export function phaseInWeek(finding: StoredFinding, startMs: number, endMs: number): Phase | null {
  if (finding.firstSeenMs >= endMs) return null;
  if (finding.resolvedMs !== null && finding.resolvedMs < endMs)
    return finding.resolvedMs >= startMs ? 'resolved' : null;
  return finding.firstSeenMs >= startMs ? 'new' : 'ongoing';
}

/** Counts of new, ongoing and resolved findings by kind and severity, and the week's resolutions. */
export function summariseFindings(findings: readonly StoredFinding[], startMs: number, endMs: number): Summary {
  const counts = new Map<string, Summary['byKindSeverity'][number]>();
  const totals = { new: 0, ongoing: 0, resolved: 0 };
  const resolvedThisWeek: Summary['resolvedThisWeek'] = [];
  for (const f of findings) {
    const phase = phaseInWeek(f, startMs, endMs);
    if (!phase) continue;
    const key = `${f.kind}|${f.severity}`;
    let row = counts.get(key);
    if (!row) counts.set(key, (row = { kind: f.kind, severity: f.severity, new: 0, ongoing: 0, resolved: 0 }));
    row[phase]++;
    totals[phase]++;
    if (phase === 'resolved') {
      resolvedThisWeek.push({
        findingId: f.findingId,
        vehicleId: f.vehicleId,
        kind: f.kind,
        severity: f.severity,
        resolvedAt: new Date(f.resolvedMs!).toISOString(),
        reason: f.resolvedReason,
      });
    }
  }
  const byKindSeverity = [...counts.values()].sort(
    (a, b) => a.kind.localeCompare(b.kind) || SEVERITIES.indexOf(a.severity) - SEVERITIES.indexOf(b.severity),
  );
  return { totals, byKindSeverity, resolvedThisWeek };
}
