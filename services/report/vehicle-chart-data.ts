import { resolveConfig } from '../analysis/config.js';
import type { DayAggregate } from '../analysis/day-aggregates.js';
import { coolantBoilingPointC } from '../analysis/physics/boiling-point.js';
import type { RunMetrics } from '../analysis/run-metrics.js';
import { peakChart } from './peak-chart-data.js';
import type { ReportRepository, StoredFinding } from '../db/weekly-report-repository.js';
import { baselineBand, drawableColdStarts, WARMUP_CHART_MIN, warmupCurve } from './warmup-chart-data.js';
import type { PeakChart, WarmupChart } from './weekly-report-schema.js';
import { DAY_MS } from '../time/durations.js';

/** What the two charts need of a vehicle's profile (the site's atmospheric pressure resolved). */
export interface ChartProfile {
  engineFamily: string;
  thermostatOpenC: number;
  capPressureKpa: number;
  glycolPercent: number;
  atmosphericPressureKpa: number;
}

/** One vehicle's gathered data for its charts. */
export interface ChartInput {
  /** The band uses healthy cold starts before this (onset of the earliest warm-up finding, or the recent window), ms. */
  onsetMs: number;
  /** … and not before this (a repair restarts the baseline), ms. */
  bandFromMs: number;
  /** The vehicle's cold starts, in time order. */
  runs: readonly RunMetrics[];
  curves: WarmupChart['curves'];
  days: readonly DayAggregate[];
  /** The vehicle's unresolved overheating-trend finding, if any. */
  trendFinding: Pick<StoredFinding, 'metrics'> | undefined;
}

/** The latest drawable cold starts since `recentFromMs` as curves: measured readings where still kept, else the stored fit. */
export async function recentWarmupCurves(
  repo: ReportRepository,
  vehicleId: string,
  runs: readonly RunMetrics[],
  recentFromMs: number,
): Promise<WarmupChart['curves']> {
  const curves = [];
  for (const run of drawableColdStarts(runs.filter((r) => r.startMs >= recentFromMs))) {
    const readings = await repo.coolant(
      vehicleId,
      run.startMs,
      Math.min(run.startMs + WARMUP_CHART_MIN * 60_000 + 1, run.endMs + 1),
    );
    const curve = warmupCurve(run, readings);
    if (curve) curves.push(curve);
  }
  return curves;
}

/**
 * The weekly report's two charts of a vehicle (also the web view's): cold starts against the
 * band of its healthy ones, daily peaks with the trend and the boiling point at cap pressure.
 */
export function vehicleChartsOf(profile: ChartProfile, input: ChartInput): { warmup: WarmupChart; peaks: PeakChart } {
  const cfg = resolveConfig(profile.engineFamily);
  const boilingPointC = coolantBoilingPointC(
    profile.capPressureKpa,
    profile.glycolPercent,
    profile.atmosphericPressureKpa,
  );
  return {
    warmup: {
      warmupTargetC: Math.round((profile.thermostatOpenC - cfg.obdWarmupMarginC) * 10) / 10,
      thermostatOpenC: profile.thermostatOpenC,
      baselineUntil: new Date(input.onsetMs).toISOString().slice(0, 10),
      ...baselineBand(input.runs.filter((r) => r.startMs >= input.bandFromMs && r.startMs < input.onsetMs)),
      curves: input.curves,
    },
    peaks: withFindingTrend(
      peakChart(input.days, cfg.trendWindowDays, boilingPointC, profile.thermostatOpenC + cfg.hotMarginC),
      input.trendFinding,
    ),
  };
}

/**
 * The chart's trend numbers taken from the vehicle's overheating-trend finding when it has one,
 * so the work-list sentence and the chart caption quote one computation (slope, level, days to
 * boiling, boiling point); the line is drawn from the chart's last day with data.
 */
export function withFindingTrend(chart: PeakChart, finding: Pick<StoredFinding, 'metrics'> | undefined): PeakChart {
  const m = finding?.metrics;
  if (!chart.trend || !m || m.rawSlopeCPerDay === undefined || m.levelC === undefined || m.daysToBoil === undefined)
    return chart;
  const daysToBoil = m.daysToBoil < 0 ? null : m.daysToBoil;
  const anchorMs = Date.parse(chart.trend.anchorDay);
  return {
    ...chart,
    boilingPointC: m.boilingPointC ?? chart.boilingPointC,
    trend: {
      ...chart.trend,
      senSlopeCPerDay: m.rawSlopeCPerDay,
      levelC: m.levelC,
      daysToBoil,
      projectedBoilDate:
        daysToBoil === null ? null : new Date(anchorMs + Math.ceil(daysToBoil) * DAY_MS).toISOString().slice(0, 10),
    },
  };
}
