/** What the analysis tells a planner: the types shared by every finding detector. */

export type FindingKind =
  'slow-warmup' | 'overshoot' | 'overheating-trend' | 'sensor-fault' | 'boil-margin' | 'freeze-risk' | 'coolant-loss';
export type Severity = 'advisory' | 'warning' | 'critical';

/** One number behind a finding, tied to the run (by start) or day it came from. */
export interface EvidenceItem {
  /** Run start (ms) or day start (ms, UTC midnight). */
  at: number;
  /** 'run' or 'day'. */
  scope: 'run' | 'day';
  /** What was measured, e.g. 'timeToTargetS', 'peakCoolantC'. */
  metric: string;
  value: number;
  /** What history and peers led us to expect (same unit); null when not applicable. */
  expected: number | null;
  /** Robust z-score against the expectation; null when not applicable. */
  z: number | null;
}

/** A derived finding (JSON-serialisable). The worker upserts it by `key`. */
export interface Finding {
  /** Stable identity: kind, optional sub-kind and the start of the baseline it was found in. */
  key: string;
  kind: FindingKind;
  /** Finer cause where the kind has several (e.g. 'bias' for sensor-fault); else null. */
  subKind: string | null;
  severity: Severity;
  /** 0..1. */
  confidence: number;
  /** Onset as dated by the evidence (change point), epoch ms. */
  firstSeen: number;
  /** Latest supporting evidence, epoch ms. */
  lastSeen: number;
  /** One sentence a maintenance planner understands. */
  summary: string;
  /** What to check, always ending with the safety caution. */
  recommendedCheck: string;
  /** Standard trouble code given as context (SAE J2012), or null. */
  troubleCode: string | null;
  /** Key numbers (flat), e.g. { medianZ: 4.1, runsJudged: 5 }. */
  metrics: Record<string, number>;
  evidence: EvidenceItem[];
}

/** Appended to every recommended check (design: safety wording where the tool suggests work). */
export const SAFETY_CAUTION =
  "Never open a hot pressurised cooling system; let it cool first and follow the manufacturer's service procedure and local rules. " +
  'This tool advises; a qualified technician decides.';

/** Most evidence items kept per finding (the latest ones). */
export const MAX_EVIDENCE_ITEMS = 12;

/** The stable key of a finding: kind[:subKind]@baseline start (ISO). */
export function findingKey(kind: FindingKind, subKind: string | null, baselineStartMs: number): string {
  return `${kind}${subKind ? `:${subKind}` : ''}@${new Date(baselineStartMs).toISOString()}`;
}

/** Rounds for display and storage (evidence is for people, not for refitting). */
export function round(value: number, digits = 2): number {
  const f = 10 ** digits;
  return Math.round(value * f) / f;
}

/** Clamps to 0..1. */
export function clamp01(v: number): number {
  return v < 0 ? 0 : v > 1 ? 1 : v;
}
