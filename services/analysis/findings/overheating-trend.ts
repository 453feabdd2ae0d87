import type { AnalysisConfig } from '../config.js';
import type { DayAggregate } from '../day-aggregates.js';
import { upperCusum } from '../stats/cusum.js';
import { mannKendall, sensSlope } from '../stats/mann-kendall.js';
import { normalCdf } from '../stats/normal-cdf.js';
import { median } from '../stats/robust.js';
import { badZ, type BaselineModel, expected, fitBaseline, type ModelRow } from './baseline-model.js';
import {
  clamp01,
  type EvidenceItem,
  type Finding,
  findingKey,
  MAX_EVIDENCE_ITEMS,
  round,
  SAFETY_CAUTION,
  type Severity,
} from './finding.js';
import { utcDay } from '../sample-arrays.js';
import { DAY_MS } from '../../time/durations.js';

/** Days with less running than this are too thin to judge, h. */
const MIN_ENGINE_HOURS = 0.25;
const DEFAULT_AMBIENT_C = 15;
const RECENT_DAYS = 5;
/** Projected days to boiling at or below which the finding is critical. */
const CRITICAL_DAYS_TO_BOIL = 14;

type DayMetric = 'peakCoolantC' | 'warmP95CoolantC' | 'hotSeconds' | 'warmMedianCoolantC';
/**
 * Daily quantities judged: the overall peak (standing or moving: fan, coolant) and the 95th
 * percentile while moving (radiator). The standing-only peak is too dependent on whether
 * the day happened to include warm idling to be judged on its own.
 */
const DAY_METRICS: readonly DayMetric[] = ['peakCoolantC', 'warmP95CoolantC'];

/** Where a daily quantity shifted up, and by how much (median since), in its own unit. */
interface DayShift {
  startMs: number;
  rise: number;
}

/**
 * A hotter day never cools the coolant: a daily model whose ambient slope comes out negative
 * (noise in 6–10 baseline days) falls back to the median. Such a slope expected the cooler days
 * after a hot baseline to run warmer and hid a rise on them (seed 13, EV-079: fouling found
 * 11.9 → 8.9 d after its onset), and expected hot days to run cooler.
 */
const AMBIENT_NEVER_COOLS = { nonNegativeSlopes: true } as const;

interface ScoredDay {
  day: DayAggregate;
  metric: DayMetric;
  z: number;
  value: number;
  expected: number;
}

function dayRow(d: DayAggregate, metric: DayMetric): ModelRow | null {
  const y = d[metric];
  if (y === null) return null;
  return { x: [d.ambientMaxC ?? d.ambientMeanC ?? DEFAULT_AMBIENT_C], y, censored: false };
}

/** The model of a daily quantity over the baseline days, explained by the day's ambient. */
function dayModel(base: readonly DayAggregate[], metric: DayMetric): BaselineModel | null {
  return fitBaseline(
    base.map((d) => dayRow(d, metric)).filter((r): r is ModelRow => r !== null),
    AMBIENT_NEVER_COOLS,
  );
}

/**
 * A daily quantity against what the baseline days predict for the day's ambient: an upper CUSUM
 * of its robust z (with the quantity's own scale floor), reported when the median rise since
 * the change reaches `minRise`. Days without the quantity are skipped.
 */
function dayShift(
  days: readonly DayAggregate[],
  base: readonly DayAggregate[],
  metric: DayMetric,
  floor: number,
  minRise: number,
  cfg: AnalysisConfig,
): DayShift | null {
  const model = dayModel(base, metric);
  if (!model) return null;
  const judged = days.filter((d) => d[metric] !== null);
  const rows = judged.map((d) => dayRow(d, metric)!);
  const c = upperCusum(
    rows.map((r) => badZ(model, r, 1, floor, cfg.zCap)!),
    cfg.cusumK,
    cfg.dayCusumH,
  );
  if (c.alarmIndex < 0) return null;
  const rise = median(rows.slice(c.changeIndex).map((r) => r.y - expected(model, r)));
  return rise >= minRise ? { startMs: judged[c.changeIndex]!.dayStartMs, rise } : null;
}

/**
 * The projection in words, from the same rounded numbers the report's chart caption prints
 * (days to boiling to 0.1 day), so sentence and chart never disagree.
 * @example boilWords(12.4, 121) // 'boiling point 121 °C in about 12 days at this rate'
 */
export function boilWords(daysToBoil: number, boilingPointC: number): string {
  const days = Math.round(daysToBoil);
  if (days < 1) return `peaks already reach the boiling point of ${round(boilingPointC, 0)} °C at cap pressure`;
  return `boiling point ${round(boilingPointC, 0)} °C in about ${days} day${days === 1 ? '' : 's'} at this rate`;
}

/**
 * Overheating trend: daily peaks (overall, standing, moving 95th percentile) rising above
 * what the vehicle's own baseline days predict for the day's ambient temperature — by
 * CUSUM (a shift, e.g. a dead fan), by a CUSUM of the daily time above the hot threshold
 * (healthy engines: none or a minute on the hottest days; a fouling radiator's fan pulls the
 * coolant back more slowly each day), by a CUSUM of the median coolant temperature while
 * driving warm (a radiator losing capacity settles higher before its peaks rise), or by
 * Mann–Kendall with Sen's slope on the ambient-corrected peaks (a creeping fault, e.g.
 * fouling or coolant loss) — once the engine has overheated at least once within
 * `trendHotWindowDays`. Projects the days until peaks reach the boiling point at cap pressure.
 *
 * The driving median follows the season, so it is judged against a baseline that grows with
 * the vehicle's history: every day from the baseline start to `warmMedianBaselineLagDays`
 * before now. Against the first `baselineDays` alone, a hot-depot vehicle's cooler autumn days
 * fall outside the ambient range learned in the heat and are compared with its hottest days.
 */
export function overheatingTrendFinding(
  allDays: readonly DayAggregate[],
  baselineStart: number,
  boilingPointC: number,
  now: number,
  cfg: AnalysisConfig,
): Finding | null {
  const days = allDays.filter((d) => d.engineHours >= MIN_ENGINE_HOURS && d.peakCoolantC !== null);
  const baselineEnd = baselineStart + cfg.baselineDays * DAY_MS;
  const base = days.filter((d) => d.dayStartMs < baselineEnd);
  if (now < baselineEnd || base.length < cfg.baselineMinDays) return null;
  const perDay = new Map<number, ScoredDay>();
  let peakResiduals: { t: number; r: number }[] = [];
  for (const metric of DAY_METRICS) {
    const model = dayModel(base, metric);
    if (!model) continue;
    for (const d of days) {
      const row = dayRow(d, metric);
      if (!row) continue;
      const z = badZ(model, row, 1, cfg.dayScaleFloorC, cfg.zCap)!;
      const e = expected(model, row);
      const cur = perDay.get(d.dayStartMs);
      if (!cur || z > cur.z) perDay.set(d.dayStartMs, { day: d, metric, z, value: row.y, expected: e });
      if (metric === 'peakCoolantC') peakResiduals.push({ t: d.dayStartMs, r: row.y - e });
    }
  }
  const scored = [...perDay.values()].sort((a, b) => a.day.dayStartMs - b.day.dayStartMs);
  if (scored.length === 0) return null;
  const cusum = upperCusum(
    scored.map((s) => s.z),
    cfg.cusumK,
    cfg.dayCusumH,
  );
  peakResiduals = peakResiduals.filter((p) => p.t > now - cfg.trendWindowDays * DAY_MS);
  let trend = false;
  let slope = 0;
  if (peakResiduals.length >= cfg.trendMinDays) {
    const r = peakResiduals.map((p) => p.r);
    const mk = mannKendall(r);
    slope = sensSlope(
      r,
      peakResiduals.map((p) => p.t / DAY_MS),
    );
    const rise = median(r.slice(-RECENT_DAYS));
    trend = mk.pIncreasing < cfg.trendAlpha && slope >= cfg.trendMinSlopeCPerDay && rise >= cfg.trendMinRiseC;
  }
  const peaksShifted =
    cusum.alarmIndex >= 0 &&
    median(scored.slice(cusum.changeIndex).map((s) => s.value - s.expected)) >= cfg.trendMinRiseC;
  const hot = dayShift(days, base, 'hotSeconds', cfg.hotTimeScaleFloorS, cfg.hotTimeMinRiseS, cfg);
  const grownBase = days.filter(
    (d) => d.dayStartMs < Math.max(baselineEnd, now - cfg.warmMedianBaselineLagDays * DAY_MS),
  );
  const warm = dayShift(days, grownBase, 'warmMedianCoolantC', cfg.warmMedianScaleFloorC, cfg.warmMedianMinRiseC, cfg);
  const shifted = peaksShifted || hot !== null || warm !== null;
  if (!shifted && !trend) return null;
  // A rise within the band the thermostat and fan still hold is not yet overheating.
  // Persistence: overheating on at least `trendHotMinDays` separate days of the window (one hot climb is not a trend).
  const hotDays = days.filter((d) => d.dayStartMs > now - cfg.trendHotWindowDays * DAY_MS && d.overheatEpisodes > 0);
  if (hotDays.length < cfg.trendHotMinDays) return null;
  const shiftStartMs = Math.min(
    peaksShifted ? scored[cusum.changeIndex]!.day.dayStartMs : Infinity,
    hot?.startMs ?? Infinity,
    warm?.startMs ?? Infinity,
  );
  const onsetIdx = shifted
    ? Math.max(
        0,
        scored.findIndex((s) => s.day.dayStartMs >= shiftStartMs),
      )
    : Math.max(
        0,
        scored.findIndex((s) => s.day.dayStartMs > now - cfg.trendWindowDays * DAY_MS && s.z >= 1),
      );
  const after = scored.slice(onsetIdx);
  const supporting = after.filter((s) => s.z >= 1);
  const lastSeen = (supporting[supporting.length - 1] ?? scored[scored.length - 1]!).day.dayStartMs;
  if (now - lastSeen > cfg.findingStaleDays * DAY_MS) return null;
  const recentPeaks = days.slice(-RECENT_DAYS).map((d) => d.peakCoolantC!);
  const level = median(recentPeaks);
  const window = days.filter((d) => d.dayStartMs > now - cfg.trendWindowDays * DAY_MS);
  const rawSlope =
    window.length >= 3
      ? sensSlope(
          window.map((d) => d.peakCoolantC!),
          window.map((d) => d.dayStartMs / DAY_MS),
        )
      : 0;
  const daysToBoil = rawSlope > 0 ? Math.max(0, (boilingPointC - level) / rawSlope) : null;
  const recentEpisodes = days.slice(-RECENT_DAYS * 2).reduce((n, d) => n + d.overheatEpisodes, 0);
  const medianZ = median(after.map((s) => s.z));
  let severity: Severity = 'advisory';
  if (
    (daysToBoil !== null && daysToBoil <= CRITICAL_DAYS_TO_BOIL) ||
    boilingPointC - Math.max(...recentPeaks) <= cfg.boilMarginCriticalC
  )
    severity = 'critical';
  else if (
    medianZ >= 3 ||
    median(after.map((s) => s.value - s.expected)) >= cfg.trendWarnRiseC ||
    (hot?.rise ?? 0) >= cfg.trendWarnHotRiseS ||
    (warm?.rise ?? 0) >= cfg.trendWarnWarmRiseC
  )
    // A warning needs an effect a workshop would find, not merely overheating episodes: healthy
    // heavy engines in heat have those every hot day.
    severity = 'warning';
  const evidence: EvidenceItem[] = supporting.slice(-MAX_EVIDENCE_ITEMS).map((s) => ({
    at: s.day.dayStartMs,
    scope: 'day' as const,
    metric: s.metric,
    value: round(s.value),
    expected: round(s.expected),
    z: round(s.z),
  }));
  const firstSeen = scored[onsetIdx]!.day.dayStartMs;
  const riseC = median(after.map((s) => s.value - s.expected));
  return {
    key: findingKey('overheating-trend', null, baselineStart),
    kind: 'overheating-trend',
    subKind: null,
    severity,
    confidence: round(clamp01(normalCdf(medianZ - 1) * (1 - 0.5 ** supporting.length) * (trend ? 1 : 0.9)), 3),
    firstSeen,
    lastSeen,
    summary:
      `Since ${utcDay(firstSeen)} peak coolant temperatures run about ${round(riseC, 1)} °C above what the weather explains` +
      (daysToBoil !== null
        ? `, rising ${round(round(rawSlope, 3), 2)} °C a day (${boilWords(round(daysToBoil, 1), boilingPointC)})`
        : '') +
      (warm
        ? `; while driving the coolant runs about ${round(warm.rise, 1)} °C warmer than on earlier days in similar weather`
        : '') +
      (hot
        ? `${warm ? ',' : ''} and the engine spends about ${Math.max(1, Math.round(hot.rise / 60))} min a day longer above its hot threshold (${cfg.hotMarginC} °C over its thermostat rating)`
        : '') +
      '; likely a fouled radiator, a failing fan or coolant loss.',
    recommendedCheck:
      'Check the coolant level and look for leaks with the engine cold, inspect the radiator core for blockage, ' +
      'check that the cooling fan engages when the engine is hot, and pressure-test the cap. ' +
      SAFETY_CAUTION,
    troubleCode: recentEpisodes > 0 ? 'P0217' : null,
    metrics: {
      medianZ: round(medianZ),
      riseC: round(riseC),
      senSlopeCPerDay: round(slope, 3),
      rawSlopeCPerDay: round(rawSlope, 3),
      levelC: round(level, 1),
      daysToBoil: daysToBoil === null ? -1 : round(daysToBoil, 1),
      boilingPointC: round(boilingPointC, 1),
      recentOverheatEpisodes: recentEpisodes,
      trendSignificant: trend ? 1 : 0,
      cusumAlarm: peaksShifted ? 1 : 0,
      hotTimeAlarm: hot ? 1 : 0,
      hotTimeRiseS: hot ? round(hot.rise, 0) : 0,
      warmMedianAlarm: warm ? 1 : 0,
      warmMedianRiseC: warm ? round(warm.rise, 1) : 0,
    },
    evidence,
  };
}
