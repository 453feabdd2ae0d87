import type { AnalysisConfig } from '../config.js';
import type { DayAggregate } from '../day-aggregates.js';
import { MS_PER_DAY, utcDay } from '../sample-arrays.js';
import { mannKendall, sensSlope } from '../stats/mann-kendall.js';
import { type EvidenceItem, type Finding, findingKey, round, SAFETY_CAUTION, type Severity } from './finding.js';

/** One-sided p-value below which the level's downward trend counts (Mann–Kendall). */
const LEVEL_TREND_MAX_P = 0.05;

/**
 * Coolant loss seen directly on the vehicle bus (SAE J1939-71 SPN 111 coolant level, SPN 109
 * coolant pressure), where a vehicle sends them:
 * - `level-falling`: the daily mean level over the last `coolantLevelWindowDays` falls (Mann–Kendall,
 *   one-sided p < 0.05) by at least `coolantLevelDropPct` along Sen's slope; critical once a
 *   recent day's mean is below `coolantLevelCriticalPct`;
 * - `no-pressure-when-hot`: on at least `hotPressureMinDays` days the coolant was at or above
 *   the thermostat's opening temperature for `hotPressureMinSamples` samples and its pressure
 *   never reached `hotPressureMinKpa`: a sealed system builds pressure as it heats, so the cap
 *   does not hold or the system leaks.
 * @example coolantLossFindings(days, baselineStart, Date.now(), resolveConfig())
 */
export function coolantLossFindings(
  days: readonly DayAggregate[],
  baselineStart: number,
  now: number,
  cfg: AnalysisConfig,
): Finding[] {
  const recent = days.filter(
    (d) => d.bus && d.dayStartMs > now - cfg.coolantLevelWindowDays * MS_PER_DAY && d.dayStartMs <= now,
  );
  const out: Finding[] = [];
  const level = levelFalling(recent, baselineStart, cfg);
  if (level) out.push(level);
  const pressure = noPressureWhenHot(recent, baselineStart, cfg);
  if (pressure) out.push(pressure);
  return out;
}

function levelFalling(recent: readonly DayAggregate[], baselineStart: number, cfg: AnalysisConfig): Finding | null {
  const withLevel = recent.filter((d) => d.bus!.coolantLevelMeanPct !== null);
  if (withLevel.length < cfg.coolantLevelMinDays) return null;
  const levels = withLevel.map((d) => d.bus!.coolantLevelMeanPct!);
  const dayIndex = withLevel.map((d) => (d.dayStartMs - withLevel[0]!.dayStartMs) / MS_PER_DAY);
  const mk = mannKendall(levels);
  const slope = sensSlope(levels, dayIndex);
  const drop = -slope * dayIndex[dayIndex.length - 1]!;
  if (!(mk.z < 0 && mk.pDecreasing < LEVEL_TREND_MAX_P && drop >= cfg.coolantLevelDropPct)) return null;
  const last = withLevel[withLevel.length - 1]!;
  const lastLevel = last.bus!.coolantLevelMeanPct!;
  const severity: Severity = lastLevel < cfg.coolantLevelCriticalPct ? 'critical' : 'warning';
  const evidence: EvidenceItem[] = withLevel.map((d) => ({
    at: d.dayStartMs,
    scope: 'day',
    metric: 'coolantLevelMeanPct',
    value: round(d.bus!.coolantLevelMeanPct!, 1),
    expected: null,
    z: null,
  }));
  return {
    key: findingKey('coolant-loss', 'level-falling', baselineStart),
    kind: 'coolant-loss',
    subKind: 'level-falling',
    severity,
    confidence: round(Math.min(1, 0.6 + 0.4 * (1 - mk.pDecreasing / LEVEL_TREND_MAX_P)), 3),
    firstSeen: withLevel[0]!.dayStartMs,
    lastSeen: last.dayStartMs,
    summary: `The coolant level reported by the engine fell by about ${round(drop, 0)} % of full over ${round(dayIndex[dayIndex.length - 1]!, 0)} days, to ${round(lastLevel, 0)} % on ${utcDay(last.dayStartMs)}: the cooling system is losing coolant.`,
    recommendedCheck:
      'Look for external leaks (hoses, radiator, water pump weep hole, heater core) and for coolant in the oil or exhaust; pressure-test the system when cold. ' +
      SAFETY_CAUTION,
    troubleCode: null,
    metrics: {
      slopePctPerDay: round(slope, 3),
      dropPct: round(drop, 1),
      lastLevelPct: round(lastLevel, 1),
      mannKendallZ: round(mk.z, 2),
      days: withLevel.length,
    },
    evidence,
  };
}

function noPressureWhenHot(
  recent: readonly DayAggregate[],
  baselineStart: number,
  cfg: AnalysisConfig,
): Finding | null {
  const judged = recent.filter((d) => d.bus!.hotPressureSamples >= cfg.hotPressureMinSamples);
  const flat = judged.filter((d) => d.bus!.hotPressureMaxKpa! < cfg.hotPressureMinKpa);
  if (flat.length < cfg.hotPressureMinDays) return null;
  const highest = Math.max(...flat.map((d) => d.bus!.hotPressureMaxKpa!));
  return {
    key: findingKey('coolant-loss', 'no-pressure-when-hot', baselineStart),
    kind: 'coolant-loss',
    subKind: 'no-pressure-when-hot',
    severity: 'warning',
    confidence: round(Math.min(1, 0.5 + 0.5 * (flat.length / judged.length)), 3),
    firstSeen: flat[0]!.dayStartMs,
    lastSeen: flat[flat.length - 1]!.dayStartMs,
    summary: `On ${flat.length} of ${judged.length} recent days with the engine hot, the coolant pressure never rose above ${round(highest, 0)} kPa: the pressure cap does not hold or the system leaks, which lowers the boiling point.`,
    recommendedCheck:
      'Pressure-test the radiator cap and the cooling system when cold, and check hoses and clamps for leaks. ' +
      SAFETY_CAUTION,
    troubleCode: null,
    metrics: {
      daysWithoutPressure: flat.length,
      daysJudged: judged.length,
      highestHotPressureKpa: round(highest, 1),
      thresholdKpa: cfg.hotPressureMinKpa,
    },
    evidence: flat.map((d) => ({
      at: d.dayStartMs,
      scope: 'day' as const,
      metric: 'hotPressureMaxKpa',
      value: round(d.bus!.hotPressureMaxKpa!, 1),
      expected: cfg.hotPressureMinKpa,
      z: null,
    })),
  };
}
