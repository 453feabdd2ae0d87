import type { Kysely } from 'kysely';
import { resolveConfig } from '../analysis/config.js';
import { coolantBoilingPointC } from '../analysis/physics/boiling-point.js';
import type { Database } from '../db/schema.js';
import { BASELINE_LOOKBACK_DAYS, RECENT_COLD_START_DAYS, WARMUP_KINDS, withFindingTrend } from './build-weekly-report.js';
import { PEAK_CHART_DAYS, peakChart } from './peak-chart-data.js';
import { createReportRepository } from './report-repository.js';
import { baselineBand, drawableColdStarts, WARMUP_CHART_MIN, warmupCurve } from './warmup-chart-data.js';
import type { PeakChart, WarmupChart } from './weekly-report-schema.js';

const DAY_MS = 86_400_000;

/** What the charts need of a vehicle's profile. */
export interface ChartedVehicle {
  vehicleId: string;
  fleetId: string;
  engineFamily: string;
  thermostatOpenC: number;
  capPressureKpa: number;
  glycolPercent: number;
  atmosphericPressureKpa: number;
}

/** An unresolved finding as the charts use it (onset and, for the trend, its metrics). */
export interface ChartedFinding {
  kind: string;
  firstSeenMs: number;
  metrics: Record<string, number>;
}

/**
 * One vehicle's two charts as the weekly report draws them, as of `asOfMs` (its latest
 * analysed reading): the latest cold starts against the band of its healthy ones before the
 * onset of its earliest warm-up finding (or before the recent cold starts), and the daily peaks
 * against ambient with the trend and the boiling point (the trend numbers of its
 * overheating-trend finding when it has one, as the report's caption).
 * @example await vehicleCharts(db, vehicle, unresolved, Date.parse('2026-11-29T23:00:00Z'))
 */
export async function vehicleCharts(db: Kysely<Database>, v: ChartedVehicle, unresolved: readonly ChartedFinding[], asOfMs: number): Promise<{ warmup: WarmupChart; peaks: PeakChart }> {
  const repo = createReportRepository(db);
  const cfg = resolveConfig(v.engineFamily);
  const recentFrom = asOfMs - RECENT_COLD_START_DAYS * DAY_MS;
  const onset = unresolved.filter((f) => WARMUP_KINDS.has(f.kind)).reduce((m, f) => Math.min(m, f.firstSeenMs), recentFrom);
  const lastService = (await repo.lastServiceEvents([v.vehicleId], asOfMs)).get(v.vehicleId) ?? -Infinity;
  const bandFrom = Math.max(onset - BASELINE_LOOKBACK_DAYS * DAY_MS, lastService);
  const runs = (await repo.coldStarts([v.vehicleId], Math.min(onset - BASELINE_LOOKBACK_DAYS * DAY_MS, recentFrom), asOfMs)).map((r) => r.metrics);
  const curves = [];
  for (const run of drawableColdStarts(runs.filter((r) => r.startMs >= recentFrom))) {
    const readings = await repo.coolant(v.vehicleId, run.startMs, Math.min(run.startMs + WARMUP_CHART_MIN * 60_000 + 1, run.endMs + 1));
    const curve = warmupCurve(run, readings);
    if (curve) curves.push(curve);
  }
  const lastDay = new Date(asOfMs).toISOString().slice(0, 10);
  const firstDay = new Date(asOfMs - (PEAK_CHART_DAYS - 1) * DAY_MS).toISOString().slice(0, 10);
  const days = (await repo.days(v.fleetId, firstDay, lastDay, [v.vehicleId])).map((d) => d.metrics);
  const boilingPointC = coolantBoilingPointC(v.capPressureKpa, v.glycolPercent, v.atmosphericPressureKpa);
  return {
    warmup: {
      warmupTargetC: Math.round((v.thermostatOpenC - cfg.obdWarmupMarginC) * 10) / 10,
      thermostatOpenC: v.thermostatOpenC,
      baselineUntil: new Date(onset).toISOString().slice(0, 10),
      ...baselineBand(runs.filter((r) => r.startMs >= bandFrom && r.startMs < onset)),
      curves,
    },
    peaks: withFindingTrend(
      peakChart(days, cfg.trendWindowDays, boilingPointC, v.thermostatOpenC + cfg.hotMarginC),
      unresolved.find((f) => f.kind === 'overheating-trend'),
    ),
  };
}
