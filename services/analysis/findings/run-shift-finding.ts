import type { AnalysisConfig } from '../config.js';
import { upperCusum } from '../stats/cusum.js';
import { normalCdf } from '../stats/normal-cdf.js';
import { median } from '../stats/robust.js';
import {
  clamp01,
  type EvidenceItem,
  type Finding,
  type FindingKind,
  findingKey,
  MAX_EVIDENCE_ITEMS,
  round,
  type Severity,
} from './finding.js';
import type { ScoredRun } from './run-shift.js';
import { DAY_MS } from '../../time/durations.js';

/** A run supports a finding when its z is at least this. */
const SUPPORT_Z = 1;
/** Runs beyond the repeat threshold that raise a finding without a CUSUM alarm. */
const REPEAT_MIN_RUNS = 2;
/**
 * Fewest supporting runs for any run-based finding: one odd trip (a short, easy run in the
 * cold that never reached the rating) is not yet a change. Tuned: one such trip raised a
 * slow-warmup on healthy light-duty vans in the cold depot.
 */
const MIN_SUPPORTING_RUNS = 2;
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
 * Upper CUSUM over daily z-scores (the median of each day's runs, so one cold or hot day
 * counts once however many runs it had); returns the shift when it alarmed and its latest
 * evidence is not older than `findingStaleDays`, else null. The onset is the first run of
 * the first day of the excursion that alarmed. With `repeatZ`, at least two runs at or above
 * it within `findingStaleDays` also raise the shift (a fault that shows only on some runs).
 * The runs since the change must sit at least `minMedianZ` out (median).
 */
export function detectRunShift(
  scored: readonly ScoredRun[],
  now: number,
  cfg: AnalysisConfig,
  h = cfg.cusumH,
  repeatZ = Infinity,
  minMedianZ = cfg.minShiftMedianZ,
): RunShift | null {
  const days: ScoredRun[][] = [];
  for (const s of scored) {
    const last = days[days.length - 1];
    if (last && Math.floor(last[0]!.run.startMs / DAY_MS) === Math.floor(s.run.startMs / DAY_MS)) last.push(s);
    else days.push([s]);
  }
  const dayZ = days.map((d) => median(d.map((s) => s.z)));
  // The first excursion that alarms and is large enough; a small drift that alarmed earlier
  // must not hide a real change that follows it, so later starts are tried in turn.
  let maxStatistic = 0;
  for (let from = 0; from < days.length;) {
    const c = upperCusum(dayZ.slice(from), cfg.cusumK, h);
    if (c.alarmIndex < 0) break;
    maxStatistic = Math.max(maxStatistic, c.maxStatistic);
    const shift = shiftFrom(scored, days[from + c.changeIndex]![0]!, now, cfg, maxStatistic, minMedianZ);
    if (shift) return shift;
    from += c.changeIndex + 1;
  }
  // Rare but strong: repeated runs far outside what is expected within the stale window.
  const strong = scored.filter((s) => s.z >= repeatZ && s.run.startMs > now - cfg.findingStaleDays * DAY_MS);
  return strong.length >= REPEAT_MIN_RUNS ? shiftFrom(scored, strong[0]!, now, cfg, maxStatistic, minMedianZ) : null;
}

/** The shift starting at `changeRun`, or null when stale or too small. */
function shiftFrom(
  scored: readonly ScoredRun[],
  changeRun: ScoredRun,
  now: number,
  cfg: AnalysisConfig,
  maxStatistic: number,
  minMedianZ: number,
): RunShift | null {
  const after = scored.filter((s) => s.run.startMs >= changeRun.run.startMs);
  const supporting = after.filter((s) => s.z >= SUPPORT_Z);
  if (supporting.length < MIN_SUPPORTING_RUNS) return null;
  const lastSeen = supporting.length > 0 ? supporting[supporting.length - 1]!.run.startMs : changeRun.run.startMs;
  if (now - lastSeen > cfg.findingStaleDays * DAY_MS) return null;
  const medianZ = median(after.map((s) => s.z));
  // A long run of small deviations (weather drifting out of the baseline's range) is not a fault.
  if (medianZ < minMedianZ) return null;
  const confidence = clamp01(normalCdf(medianZ - 1) * (1 - 0.5 ** supporting.length));
  return {
    changeRun,
    after,
    supporting,
    medianZ,
    maxStatistic,
    confidence,
    severity: medianZ >= WARNING_MEDIAN_Z ? 'warning' : 'advisory',
    firstSeen: changeRun.run.startMs,
    lastSeen,
  };
}

/** Evidence items of the latest supporting runs. */
export function runEvidence(supporting: readonly ScoredRun[]): EvidenceItem[] {
  return supporting.slice(-MAX_EVIDENCE_ITEMS).map((s) => ({
    at: s.run.startMs,
    scope: 'run' as const,
    metric: String(s.feature.metric),
    value: round(s.value),
    expected: round(s.expected),
    z: round(s.z),
  }));
}

/** Assembles a finding from a run shift and its wording. */
export function runShiftFinding(
  kind: FindingKind,
  shift: RunShift,
  baselineStart: number,
  source: string,
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
      medianZ: round(shift.medianZ),
      cusumMax: round(shift.maxStatistic),
      runsJudged: shift.after.length,
      runsSupporting: shift.supporting.length,
      ownBaseline: source === 'own' ? 1 : 0,
    },
    evidence: runEvidence(shift.supporting),
  };
}
