import { round } from '../analysis/findings/finding.js';
import type { DayAggregate } from '../analysis/day-aggregates.js';
import { sensSlope } from '../analysis/stats/mann-kendall.js';
import { median } from '../analysis/stats/robust.js';
import type { PeakChart } from './weekly-report-schema.js';
import { DAY_MS } from '../time/durations.js';

/** Days of daily peaks shown (the trend window plus the weeks before it for context). */
export const PEAK_CHART_DAYS = 42;
/** Days with less running than this are too thin to judge, h (as the overheating-trend finding). */
export const MIN_ENGINE_HOURS = 0.25;
/** The trend level is the median of this many latest daily peaks (as the overheating-trend finding). */
export const LEVEL_DAYS = 5;
/** Fewest days in the trend window for a slope. */
export const TREND_MIN_DAYS = 3;
/** A crossing further away than this is not projected, days. */
export const MAX_PROJECTION_DAYS = 365;

/**
 * The daily-peak trend the overheating-trend finding uses, as of `lastDay`: Sen's slope of the
 * daily peak coolant over the last `windowDays` days, drawn through the median of the last
 * five peaks on the last day, and the days until that line reaches `boilingPointC`.
 * @example peakTrend(days, 21, 125.6)?.daysToBoil // e.g. 38.5
 */
export function peakTrend(
  days: readonly DayAggregate[],
  windowDays: number,
  boilingPointC: number,
): PeakChart['trend'] {
  const usable = judgeableDays(days);
  const last = usable[usable.length - 1];
  if (!last) return null;
  const window = usable.filter((d) => d.dayStartMs > last.dayStartMs - windowDays * DAY_MS);
  if (window.length < TREND_MIN_DAYS) return null;
  const slope = sensSlope(
    window.map((d) => d.peakCoolantC!),
    window.map((d) => d.dayStartMs / DAY_MS),
  );
  const level = median(usable.slice(-LEVEL_DAYS).map((d) => d.peakCoolantC!));
  const toBoil = slope > 0 ? Math.max(0, (boilingPointC - level) / slope) : null;
  const projected = toBoil !== null && toBoil <= MAX_PROJECTION_DAYS ? toBoil : null;
  return {
    senSlopeCPerDay: round(slope, 3),
    windowDays,
    levelC: round(level, 1),
    anchorDay: last.day,
    daysToBoil: projected === null ? null : round(projected, 1),
    projectedBoilDate:
      projected === null ? null : new Date(last.dayStartMs + Math.ceil(projected) * DAY_MS).toISOString().slice(0, 10),
  };
}

/** Days with enough running and a plausible peak, in date order. */
export function judgeableDays(days: readonly DayAggregate[]): DayAggregate[] {
  return days
    .filter((d) => d.engineHours >= MIN_ENGINE_HOURS && d.peakCoolantC !== null)
    .sort((a, b) => a.dayStartMs - b.dayStartMs);
}

/** The chart's data: the days' peaks and ambient maxima, the trend and the limits. */
export function peakChart(
  days: readonly DayAggregate[],
  windowDays: number,
  boilingPointC: number,
  hotThresholdC: number,
): PeakChart {
  return {
    boilingPointC: round(boilingPointC, 1),
    hotThresholdC: round(hotThresholdC, 1),
    days: judgeableDays(days).map((d) => ({
      day: d.day,
      peakCoolantC: round(d.peakCoolantC!, 1),
      ambientMaxC: d.ambientMaxC === null ? null : round(d.ambientMaxC, 1),
      engineHours: round(d.engineHours, 2),
    })),
    trend: peakTrend(days, windowDays, boilingPointC),
  };
}
