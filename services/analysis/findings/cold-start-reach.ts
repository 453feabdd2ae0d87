import type { AnalysisConfig } from '../config.js';
import type { RunMetrics } from '../run-metrics.js';
import { median } from '../stats/robust.js';
import { type EvidenceItem, MAX_EVIDENCE_ITEMS, round } from './finding.js';
import { DAY_MS } from '../../time/durations.js';

/** Ambient assumed when the gateway sends none, °C (as in run-features.ts). */
const DEFAULT_AMBIENT_C = 15;
/** Baseline cold starts count as comparable when they started at most this much warmer than the recent ones, °C. */
const COMPARABLE_AMBIENT_C = 5;

/** Cold starts that never reached the warm-up target although the vehicle's own history says they should have. */
export interface ColdReachShift {
  firstSeen: number;
  lastSeen: number;
  /** Long cold starts since `firstSeen` that never reached the target. */
  neverReached: number;
  /** Long cold starts judged since `firstSeen`. */
  judged: number;
  /** Share of the comparable baseline cold starts that reached the target. */
  baselineReachShare: number;
  evidence: EvidenceItem[];
}

const ambientOf = (r: RunMetrics) => r.startAmbientC ?? r.ambientMeanC ?? DEFAULT_AMBIENT_C;

/** A cold start long enough, and driven enough, that a working thermostat brings the coolant to its target. */
function judgeable(engineRun: RunMetrics, cfg: AnalysisConfig): boolean {
  return (
    engineRun.startKind === 'cold' &&
    !engineRun.excludedForSensor &&
    !engineRun.open &&
    engineRun.durationS >= cfg.coldReachMinRunS &&
    engineRun.warmupIdleFraction <= cfg.obdMaxIdleFraction
  );
}

/**
 * A thermostat stuck open in the cold, judged against the vehicle's own cold-weather history
 * instead of being suspended (the OBD-II monitor stops below −6.7 °C, and the plateau is not
 * judged in frost): at least `coldReachMinRuns` cold starts of `coldReachMinRunS` or longer on
 * `coldReachMinDays` distinct days since the baseline never reached the warm-up target, most of
 * the recent such starts did not, while at least `coldReachBaseShare` of the baseline's
 * comparable cold starts (as cold or colder, within `COMPARABLE_AMBIENT_C`) did. A healthy light
 * van whose heater keeps it below its target in the cold did so in its baseline too, and is not
 * judged. Null when the own baseline has too few comparable starts.
 * @example coldStartReachShift(runs, baselineStart, now, cfg)?.neverReached
 */
export function coldStartReachShift(
  runs: readonly RunMetrics[],
  baselineStart: number,
  now: number,
  cfg: AnalysisConfig,
): ColdReachShift | null {
  const baselineEnd = baselineStart + cfg.baselineDays * DAY_MS;
  if (now < baselineEnd) return null;
  const long = runs.filter((r) => r.startMs <= now && judgeable(r, cfg));
  const recent = long.filter((r) => r.startMs >= baselineEnd && r.startMs > now - cfg.findingStaleDays * DAY_MS);
  const missed = recent.filter((r) => r.timeToTargetS === null);
  if (missed.length < cfg.coldReachMinRuns) return null;
  const missedDays = new Set(missed.map((r) => Math.floor(r.startMs / DAY_MS))).size;
  if (missedDays < cfg.coldReachMinDays) return null;
  // Most of the latest such starts must miss: a fault that is there stays there.
  const latest = recent.slice(-cfg.coldReachMinRuns);
  if (2 * latest.filter((r) => r.timeToTargetS === null).length <= latest.length) return null;
  const recentAmbient = median(missed.map(ambientOf));
  const comparable = long.filter(
    (r) => r.startMs < baselineEnd && ambientOf(r) <= recentAmbient + COMPARABLE_AMBIENT_C,
  );
  if (comparable.length < cfg.coldReachMinRuns) return null;
  const reachShare = comparable.filter((r) => r.timeToTargetS !== null).length / comparable.length;
  if (reachShare < cfg.coldReachBaseShare) return null;
  // Dated at the first miss from which on the misses are the majority (reached starts before it are the healthy past).
  let firstSeen = missed[0]!.startMs;
  for (let i = 0; i < recent.length; i++) {
    const rest = recent.slice(i);
    if (recent[i]!.timeToTargetS === null && 2 * rest.filter((r) => r.timeToTargetS === null).length > rest.length) {
      firstSeen = recent[i]!.startMs;
      break;
    }
  }
  return {
    firstSeen,
    lastSeen: missed[missed.length - 1]!.startMs,
    neverReached: missed.filter((r) => r.startMs >= firstSeen).length,
    judged: recent.filter((r) => r.startMs >= firstSeen).length,
    baselineReachShare: reachShare,
    evidence: missed.slice(-MAX_EVIDENCE_ITEMS).map((r) => ({
      at: r.startMs,
      scope: 'run' as const,
      metric: 'peakCoolantC',
      value: round(r.peakCoolantC ?? r.coolantAtCheckC ?? 0),
      expected: round(r.warmupTargetC),
      z: null,
    })),
  };
}
