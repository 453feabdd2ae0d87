import type { AnalysisConfig } from '../config.js';
import { upperCusum } from '../stats/cusum.js';
import { normalCdf } from '../stats/normal-cdf.js';
import { median } from '../stats/robust.js';
import {
  clamp01, type EvidenceItem, type Finding, type FindingKind, findingKey, MAX_EVIDENCE_ITEMS, round, type Severity,
} from './finding.js';
import type { ScoredRun } from './run-shift.js';

const DAY_MS = 86_400_000;
/** A run supports a finding when its z is at least this. */
const SUPPORT_Z = 1;
/** Median z after the change point that makes a run-based finding a warning. */
const WARNING_MEDIAN_Z = 3;

/** What a run-based detector found, before wording. */
export interface RunShift {
  changeRun: ScoredRun;
  after: ScoredRun[];
  supporting: ScoredRun[];
  medianZ: number;
  maxStatistic: number;
  confidence: number;
  severity: Severity;
  firstSeen: number;
  lastSeen: number;
}

/**
 * Upper CUSUM over the runs' z-scores; returns the shift when it alarmed and its latest
 * evidence is not older than `findingStaleDays`, else null. The onset is the first run of
 * the excursion that alarmed.
 */
export function detectRunShift(scored: readonly ScoredRun[], now: number, cfg: AnalysisConfig): RunShift | null {
  const c = upperCusum(scored.map((s) => s.z), cfg.cusumK, cfg.cusumH);
  if (c.alarmIndex < 0) return null;
  const after = scored.slice(c.changeIndex);
  const supporting = after.filter((s) => s.z >= SUPPORT_Z);
  const lastSeen = supporting.length > 0 ? supporting[supporting.length - 1]!.run.startMs : scored[c.alarmIndex]!.run.startMs;
  if (now - lastSeen > cfg.findingStaleDays * DAY_MS) return null;
  const medianZ = median(after.map((s) => s.z));
  const confidence = clamp01(normalCdf(medianZ - 1) * (1 - 0.5 ** supporting.length));
  return {
    changeRun: scored[c.changeIndex]!, after, supporting, medianZ, maxStatistic: c.maxStatistic, confidence,
    severity: medianZ >= WARNING_MEDIAN_Z ? 'warning' : 'advisory',
    firstSeen: scored[c.changeIndex]!.run.startMs, lastSeen,
  };
}

/** Evidence items of the latest supporting runs. */
export function runEvidence(supporting: readonly ScoredRun[]): EvidenceItem[] {
  return supporting.slice(-MAX_EVIDENCE_ITEMS).map((s) => ({
    at: s.run.startMs, scope: 'run' as const, metric: String(s.feature.metric),
    value: round(s.value), expected: round(s.expected), z: round(s.z),
  }));
}

/** Assembles a finding from a run shift and its wording. */
export function runShiftFinding(
  kind: FindingKind, shift: RunShift, baselineStart: number, source: string,
  words: { summary: string; recommendedCheck: string; troubleCode: string | null; severity?: Severity },
): Finding {
  return {
    key: findingKey(kind, null, baselineStart),
    kind,
    subKind: null,
    severity: words.severity ?? shift.severity,
    confidence: round(shift.confidence, 3),
    firstSeen: shift.firstSeen,
    lastSeen: shift.lastSeen,
    summary: words.summary,
    recommendedCheck: words.recommendedCheck,
    troubleCode: words.troubleCode,
    metrics: {
      medianZ: round(shift.medianZ), cusumMax: round(shift.maxStatistic),
      runsJudged: shift.after.length, runsSupporting: shift.supporting.length, ownBaseline: source === 'own' ? 1 : 0,
    },
    evidence: runEvidence(shift.supporting),
  };
}
