import type { AnalysisConfig } from '../config.js';
import type { PeerBaseline } from '../peer-baseline.js';
import type { RunMetrics } from '../run-metrics.js';
import { clamp01, type Finding, findingKey, round, SAFETY_CAUTION } from './finding.js';
import { utcDay } from '../sample-arrays.js';
import { OVERSHOOT, PLATEAU, RUN_PEAK, WARMUP_TIME } from './run-features.js';
import { combineByRun, scoreFeature } from './run-shift.js';
import { detectRunShift, runShiftFinding } from './run-shift-finding.js';
import { coldStartReachShift } from './cold-start-reach.js';

const STUCK_OPEN_CHECK =
  'Check that the thermostat closes (a stuck-open thermostat is the usual cause) and compare the coolant ' +
  'temperature reading with a reference thermometer on a cold engine. ' +
  SAFETY_CAUTION;

/** Slow warm-up from cold starts in the cold that no longer reach the target (`coldStartReachShift`). */
function coldReachFinding(
  runs: readonly RunMetrics[],
  baselineStart: number,
  now: number,
  cfg: AnalysisConfig,
): Finding | null {
  const c = coldStartReachShift(runs, baselineStart, now, cfg);
  if (!c) return null;
  const target = runs[runs.length - 1]?.warmupTargetC ?? 0;
  return {
    key: findingKey('slow-warmup', null, baselineStart),
    kind: 'slow-warmup',
    subKind: null,
    severity: 'warning',
    confidence: round(clamp01(1 - 0.5 ** c.neverReached), 3),
    firstSeen: c.firstSeen,
    lastSeen: c.lastSeen,
    summary:
      `Since ${utcDay(c.firstSeen)} ${c.neverReached} of ${c.judged} cold starts of half an hour or more never reached ` +
      `${round(target, 0)} °C, where ${Math.round(100 * c.baselineReachShare)} % of its earlier ones in weather as cold did, ` +
      'which points to a thermostat stuck open.',
    recommendedCheck: STUCK_OPEN_CHECK,
    troubleCode: 'P0128',
    metrics: {
      neverReached: c.neverReached,
      runsJudged: c.judged,
      baselineReachShare: round(c.baselineReachShare, 2),
      ownBaseline: 1,
    },
    evidence: c.evidence,
  };
}

/**
 * Slow warm-up: cold starts take longer than history and peers predict for their ambient,
 * start temperature and idling (OBD-II suspensions applied), or the steady-driving plateau
 * or the highest temperature of longer runs sits lower than expected (a CUSUM over days, or
 * two runs at `slowWarmupRepeatZ` or beyond). The classic sign of a thermostat stuck open (P0128).
 */
export function slowWarmupFinding(
  runs: readonly RunMetrics[],
  baselineStart: number,
  peer: PeerBaseline | null,
  now: number,
  cfg: AnalysisConfig,
): Finding | null {
  const warm = scoreFeature(runs, WARMUP_TIME, baselineStart, peer, now, cfg, cfg.warmupLogScaleFloor);
  const plateau = scoreFeature(runs, PLATEAU, baselineStart, peer, now, cfg, cfg.coolScaleFloorC);
  const runPeak = scoreFeature(runs, RUN_PEAK, baselineStart, peer, now, cfg, cfg.coolScaleFloorC);
  const shift = detectRunShift(combineByRun([warm, plateau, runPeak]), now, cfg, cfg.cusumH, cfg.slowWarmupRepeatZ);
  if (!shift) return coldReachFinding(runs, baselineStart, now, cfg);
  const cold = shift.supporting.filter((s) => s.feature === WARMUP_TIME);
  const neverReached = cold.filter((s) => s.run.timeToTargetS === null).length;
  const plateauDrops = shift.supporting.filter((s) => s.feature !== WARMUP_TIME).map((s) => s.expected - s.value);
  const target = runs[runs.length - 1]?.warmupTargetC ?? 0;
  const parts: string[] = [];
  if (cold.length > 0) {
    parts.push(
      `${cold.length} cold start${cold.length > 1 ? 's' : ''} warmed up slower than expected` +
        (neverReached > 0 ? ` (${neverReached} never reached ${round(target, 0)} °C)` : ''),
    );
  }
  if (plateauDrops.length > 0) {
    const drop = [...plateauDrops].sort((a, b) => a - b)[plateauDrops.length >> 1]!;
    parts.push(
      `the engine ran about ${round(drop, 1)} °C cooler than usual on ${plateauDrops.length} trip${plateauDrops.length > 1 ? 's' : ''}`,
    );
  }
  return runShiftFinding('slow-warmup', shift, baselineStart, warm.source ?? plateau.source ?? 'none', {
    summary: `Since ${utcDay(shift.firstSeen)} ${parts.join(' and ')}, which points to a thermostat stuck open.`,
    recommendedCheck: STUCK_OPEN_CHECK,
    troubleCode: 'P0128',
    severity: neverReached * 2 >= Math.max(cold.length, 1) && cold.length >= 2 ? 'warning' : undefined,
  });
}

/**
 * Overshoot: after the thermostat opens, the coolant peaks further past its rating (and
 * above the temperature it then settles at) than history and peers predict. The sign of a
 * sticking thermostat that opens late.
 */
export function overshootFinding(
  runs: readonly RunMetrics[],
  baselineStart: number,
  peer: PeerBaseline | null,
  now: number,
  cfg: AnalysisConfig,
): Finding | null {
  const scored = scoreFeature(runs, OVERSHOOT, baselineStart, peer, now, cfg, cfg.overshootScaleFloorC);
  const shift = detectRunShift(
    scored.scored,
    now,
    cfg,
    cfg.overshootCusumH,
    cfg.overshootRepeatZ,
    cfg.overshootMinShiftMedianZ,
  );
  if (!shift) return null;
  const above = (xs: number[]) => xs.sort((a, b) => a - b)[xs.length >> 1] ?? 0;
  const typical = above(shift.supporting.map((s) => s.value - s.run.thermostatOpenC));
  const normal = above(shift.supporting.map((s) => s.expected - s.run.thermostatOpenC));
  const overshoots = shift.supporting.map((s) => s.run.overshootC).filter((v): v is number => v !== null);
  return runShiftFinding('overshoot', shift, baselineStart, scored.source ?? 'none', {
    summary:
      `Since ${utcDay(shift.firstSeen)} the coolant climbs about ${round(typical, 0)} °C past the thermostat's rating before it ` +
      `takes control (usually ${round(normal, 0)} °C) and then drops back by about ${round(above(overshoots), 0)} °C, a sign of a sticking thermostat.`,
    recommendedCheck:
      'Check the thermostat for sticking (replace it if it opens late) and bleed any trapped air from the ' +
      'cooling system. ' +
      SAFETY_CAUTION,
    troubleCode: null,
  });
}
