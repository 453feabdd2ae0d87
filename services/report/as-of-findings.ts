import type { Kysely } from 'kysely';
import { resolveConfig } from '../analysis/config.js';
import { deriveFindings } from '../analysis/derive-findings.js';
import type { Finding } from '../analysis/findings/finding.js';
import { riskScore } from '../analysis/risk-score.js';
import type { Database } from '../db/schema.js';
import { createAnalysisStore } from '../db/analysis-results-repository.js';
import { PeerBaselines } from '../db/peer-baselines-repository.js';
import type { ReportVehicle, StoredFinding } from '../db/weekly-report-repository.js';

/** A past week's findings as the analysis saw them at the week's end, and each vehicle's risk then. */
export interface FindingsAsOf {
  unresolved: StoredFinding[];
  risk: Map<string, number>;
}

/**
 * Re-derives the findings of `vehicleIds` at `asOfMs` from their stored runs, days, sensor
 * events and the service events done by then, so a past week's report quotes what was known
 * at its end (not a later reading): summaries, checks, severities, last evidence and risk all
 * come from the same derivation. Each derived finding keeps the id and planner status of the
 * stored finding with the same key (acknowledged only if that happened by `asOfMs`; the report
 * then sets every planner state as it stood at the week's end from the audit, withPlannerStatesAt
 * in work-list.ts). The engine-family peer baseline is the
 * stored one (rebuilt weekly; a past week is judged against the latest, a small approximation).
 */
export async function findingsAsOf(
  db: Kysely<Database>,
  vehicleIds: readonly string[],
  vehicles: ReadonlyMap<string, ReportVehicle>,
  stored: readonly StoredFinding[],
  asOfMs: number,
): Promise<FindingsAsOf> {
  const store = createAnalysisStore(db);
  const peers = new PeerBaselines(db);
  const byKey = new Map(stored.map((f) => [`${f.vehicleId} ${f.key}`, f]));
  const unresolved: StoredFinding[] = [];
  const risk = new Map<string, number>();
  for (const vehicleId of vehicleIds) {
    const v = vehicles.get(vehicleId);
    if (!v) continue;
    const cfg = resolveConfig(v.engineFamily);
    const history = await store.historyBefore(vehicleId, asOfMs);
    const runs = history.runs.filter((r) => !r.open && r.endMs < asOfMs);
    const openStarts = new Set(history.runs.filter((r) => r.open).map((r) => r.startMs));
    const profile = {
      engineFamily: v.engineFamily,
      thermostatOpenC: v.thermostatOpenC,
      capPressureKpa: v.capPressureKpa,
      glycolPercent: v.glycolPercent,
      ...(v.atmosphericPressureKpa != null ? { atmosphericPressureKpa: v.atmosphericPressureKpa } : {}),
    };
    const peer = await peers.forAnalysis(v.engineFamily, asOfMs);
    const derived = deriveFindings(
      { runs, days: history.days, sensorEvents: history.sensorEvents.filter((e) => !openStarts.has(e.runStartMs)) },
      profile,
      { now: asOfMs, peer, serviceEvents: history.serviceEvents.filter((e) => e.at <= asOfMs) },
      cfg,
    );
    risk.set(vehicleId, riskScore(derived, asOfMs, cfg.riskHalfLifeDays));
    for (const f of derived) unresolved.push(asStored(vehicleId, f, byKey.get(`${vehicleId} ${f.key}`), asOfMs));
  }
  return { unresolved, risk };
}

function asStored(vehicleId: string, finding: Finding, row: StoredFinding | undefined, asOfMs: number): StoredFinding {
  const acknowledged =
    row?.acknowledgedMs !== null && row?.acknowledgedMs !== undefined && row.acknowledgedMs <= asOfMs;
  return {
    findingId: row?.findingId ?? finding.key,
    vehicleId,
    kind: finding.kind,
    severity: finding.severity,
    confidence: finding.confidence,
    firstSeenMs: finding.firstSeen,
    lastSeenMs: finding.lastSeen,
    createdMs: row?.createdMs ?? asOfMs,
    status: acknowledged ? 'acknowledged' : 'open',
    summary: finding.summary,
    recommendedCheck: finding.recommendedCheck,
    troubleCode: finding.troubleCode,
    resolvedMs: null,
    resolvedReason: null,
    deferredUntilMs: null,
    deferredReason: null,
    key: finding.key,
    metrics: finding.metrics,
    acknowledgedMs: acknowledged ? row!.acknowledgedMs : null,
  };
}
