import type { AnalysisConfig } from '../config.js';
import type { DayAggregate } from '../day-aggregates.js';
import type { RunMetrics } from '../run-metrics.js';
import type { SensorEvent, SensorEventKind } from '../sensor-events.js';
import { MAD_TO_SIGMA, mad, median } from '../stats/robust.js';
import {
  clamp01,
  type EvidenceItem,
  type Finding,
  findingKey,
  MAX_EVIDENCE_ITEMS,
  round,
  SAFETY_CAUTION,
} from './finding.js';
import { utcDay } from '../sample-arrays.js';
import { DAY_MS } from '../../time/durations.js';

/** Fewest long-soak starts to judge a bias. */
const BIAS_MIN_STARTS = 3;
/** Recent long-soak starts whose median offset is judged. */
const BIAS_RECENT_STARTS = 5;
/** A run with more than this many flagged samples counts as a strong sensor event day. */
const STRONG_EVENT_COUNT = 3;
/** The bias tolerance is at least this many robust σ of the vehicle's own baseline soak offsets. */
const BIAS_SPREAD_FACTOR = 3;

type SensorSubKind = 'out-of-range' | 'implausible-rate' | 'stuck' | 'bias';

const WORDS: Record<SensorSubKind, { what: string; code: string; check: string }> = {
  'out-of-range': {
    what: "reported values outside the sensor's range (open or shorted circuit)",
    code: 'P0117/P0118',
    check: 'Check the coolant temperature sensor connector and wiring for corrosion, chafing or an open circuit.',
  },
  'implausible-rate': {
    what: 'jumped faster than an engine can heat or cool (spikes)',
    code: 'P0119',
    check: 'Check the coolant temperature sensor connector and wiring for a loose or intermittent contact.',
  },
  stuck: {
    what: 'stayed flat while the engine was running and should have been warming',
    code: 'P0116',
    check: 'Compare the coolant temperature sensor with a reference thermometer and replace it if it does not follow.',
  },
  bias: {
    what: 'disagrees with the air temperature after long cold soaks, so it reads off by a fixed amount',
    code: 'P0116',
    check: 'Compare the coolant temperature sensor with a reference thermometer on a fully cold engine.',
  },
};

function sensorFinding(
  sub: SensorSubKind,
  baselineStart: number,
  firstSeen: number,
  lastSeen: number,
  confidence: number,
  warning: boolean,
  metrics: Record<string, number>,
  evidence: EvidenceItem[],
): Finding {
  const w = WORDS[sub];
  return {
    key: findingKey('sensor-fault', sub, baselineStart),
    kind: 'sensor-fault',
    subKind: sub,
    severity: warning ? 'warning' : 'advisory',
    confidence: round(clamp01(confidence), 3),
    firstSeen,
    lastSeen,
    summary: `Since ${utcDay(firstSeen)} the coolant temperature reading ${w.what}; until it is fixed, warm-up and overheating findings are not raised from its readings.`,
    recommendedCheck: `${w.check} ${SAFETY_CAUTION}`,
    troubleCode: w.code,
    metrics,
    evidence: evidence.slice(-MAX_EVIDENCE_ITEMS),
  };
}

/** Earliest evidence time of the trailing streak (no gap longer than the window). */
function streakStart(times: readonly number[], windowMs: number): number {
  let start = times[times.length - 1]!;
  for (let i = times.length - 2; i >= 0 && start - times[i]! <= windowMs; i--) start = times[i]!;
  return start;
}

/** Evidence on enough distinct days of the recent window raises a finding. */
function fromDatedEvidence(
  sub: SensorSubKind,
  items: EvidenceItem[],
  baselineStart: number,
  now: number,
  cfg: AnalysisConfig,
): Finding | null {
  const windowMs = cfg.sensorWindowDays * DAY_MS;
  const recent = items.filter((e) => e.at > now - windowMs && e.at <= now);
  const days = new Set(recent.map((e) => Math.floor(e.at / DAY_MS))).size;
  const strong = recent.filter((e) => e.value >= STRONG_EVENT_COUNT).length;
  if (days < cfg.sensorMinDays && strong < cfg.sensorMinDays) return null;
  const times = items.map((e) => e.at).sort((a, b) => a - b);
  return sensorFinding(
    sub,
    baselineStart,
    streakStart(times, windowMs),
    times[times.length - 1]!,
    0.5 + 0.1 * days + 0.05 * strong,
    sub === 'stuck' || days >= 2 * cfg.sensorMinDays,
    { daysWithEvidence: days, eventsInWindow: recent.length },
    items,
  );
}

/**
 * Coolant-sensor plausibility findings: out-of-range values, impossible rates (spikes),
 * flat lines while warming, repeated dropouts, and a bias shown by long cold soaks.
 */
export function sensorFaultFindings(
  runs: readonly RunMetrics[],
  days: readonly DayAggregate[],
  events: readonly SensorEvent[],
  baselineStart: number,
  now: number,
  cfg: AnalysisConfig,
): Finding[] {
  const out: Finding[] = [];
  const eventItems = (kind: SensorEventKind): EvidenceItem[] =>
    events
      .filter((e) => e.kind === kind)
      .map((e) => ({ at: e.runStartMs, scope: 'run' as const, metric: kind, value: e.count, expected: 0, z: null }));
  const subs: [SensorSubKind, EvidenceItem[]][] = [
    ['out-of-range', eventItems('out-of-range')],
    ['implausible-rate', eventItems('implausible-rate')],
    ['stuck', eventItems('stuck')],
  ];
  for (const [sub, items] of subs) {
    if (items.length === 0) continue;
    const f = fromDatedEvidence(sub, items, baselineStart, now, cfg);
    if (f) out.push(f);
  }
  const bias = biasFinding(runs, baselineStart, now, cfg);
  if (bias) out.push(bias);
  return out;
}

/**
 * Cold-soak bias, judged as a change: the median offset (coolant − air after a long soak) of
 * the recent soaks against the vehicle's own established offset over its first `baselineDays`.
 * A constant offset from the first day on is that vehicle's normal (its sensor, where it sits,
 * a depot hall, a block heater, residual heat of a large block), not a fault: the issue-14 field
 * fleet raised 15 bias findings on 33 healthy vehicles against the peers' offset. The tolerance
 * widens with the own offsets' robust spread (`BIAS_SPREAD_FACTOR`), so a vehicle whose key-on
 * temperature swings with a block heater is not judged finer than its soaks allow. Before the
 * own baseline is established nothing is judged; sensor range and impossible rates stay absolute.
 */
function biasFinding(
  runs: readonly RunMetrics[],
  baselineStart: number,
  now: number,
  cfg: AnalysisConfig,
): Finding | null {
  const soaks = runs.filter((r) => r.coldSoakOffsetC !== null && !r.stuck && r.startMs <= now);
  const baselineEnd = baselineStart + cfg.baselineDays * DAY_MS;
  if (now < baselineEnd) return null;
  const own = soaks.filter((r) => r.startMs < baselineEnd).map((r) => r.coldSoakOffsetC!);
  const after = soaks.filter((r) => r.startMs >= baselineEnd);
  if (own.length < BIAS_MIN_STARTS || after.length < BIAS_MIN_STARTS) return null;
  const reference = median(own);
  const tolerance = Math.max(cfg.sensorBiasToleranceC, BIAS_SPREAD_FACTOR * MAD_TO_SIGMA * mad(own, reference));
  const recent = after.slice(-BIAS_RECENT_STARTS);
  if (now - recent[recent.length - 1]!.startMs > cfg.findingStaleDays * DAY_MS) return null;
  const shift = median(recent.map((r) => r.coldSoakOffsetC! - reference));
  if (Math.abs(shift) < tolerance) return null;
  let first = after.length - 1;
  while (
    first > 0 &&
    Math.sign(after[first - 1]!.coldSoakOffsetC! - reference) === Math.sign(shift) &&
    Math.abs(after[first - 1]!.coldSoakOffsetC! - reference) >= tolerance / 2
  )
    first--;
  // The streak's first start that is itself out by the tolerance dates the change.
  while (first < after.length - 1 && Math.abs(after[first]!.coldSoakOffsetC! - reference) < tolerance) first++;
  const evidence = after.slice(first).map((r) => ({
    at: r.startMs,
    scope: 'run' as const,
    metric: 'coldSoakOffsetC',
    value: round(r.coldSoakOffsetC!),
    expected: round(reference),
    z: null,
  }));
  return sensorFinding(
    'bias',
    baselineStart,
    after[first]!.startMs,
    recent[recent.length - 1]!.startMs,
    0.4 + 0.1 * recent.length + 0.02 * Math.abs(shift),
    true,
    {
      offsetShiftC: round(shift),
      ownOffsetC: round(reference),
      toleranceC: round(tolerance),
      startsJudged: recent.length,
    },
    evidence,
  );
}
