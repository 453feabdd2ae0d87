import { DEFAULT_ANALYSIS_CONFIG } from './config.js';
import type { Finding, Severity } from './findings/finding.js';
import { DAY_MS } from '../time/durations.js';

/** How much one certain, current finding of each severity adds to the risk (0..1). */
export const SEVERITY_WEIGHT: Readonly<Record<Severity, number>> = Object.freeze({
  advisory: 0.2,
  warning: 0.55,
  critical: 0.95,
});

/**
 * Risk 0–100 of a vehicle from its unresolved findings: each contributes
 * weight(severity) · confidence · 0.5^(age of lastSeen / half-life), combined as
 * independent chances (100·(1 − Π(1 − cᵢ))), so more findings raise risk without passing 100.
 * Resolved findings (`status: 'resolved'`) are ignored; open, acknowledged and deferred ones count.
 * @example riskScore([{ severity: 'critical', confidence: 1, lastSeen: now }], now) // 95
 */
export function riskScore(
  findings: ReadonlyArray<Pick<Finding, 'severity' | 'confidence' | 'lastSeen'> & { status?: string }>,
  now: number,
  halfLifeDays = DEFAULT_ANALYSIS_CONFIG.riskHalfLifeDays,
): number {
  let calm = 1;
  for (const f of findings) {
    if (f.status === 'resolved') continue;
    const ageDays = Math.max(0, now - f.lastSeen) / DAY_MS;
    const c = SEVERITY_WEIGHT[f.severity] * Math.min(Math.max(f.confidence, 0), 1) * 0.5 ** (ageDays / halfLifeDays);
    calm *= 1 - c;
  }
  return Math.round(1000 * (1 - calm)) / 10;
}
