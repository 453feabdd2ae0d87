import type { Kysely } from 'kysely';
import type { Database } from '../db/schema.js';
import type { VehicleProfile } from '../db/vehicles-repository.js';
import { BASELINE_LOOKBACK_DAYS, RECENT_COLD_START_DAYS, WARMUP_KINDS } from './build-weekly-report.js';
import { PEAK_CHART_DAYS } from './peak-chart-data.js';
import { createReportRepository } from '../db/weekly-report-repository.js';
import { recentWarmupCurves, vehicleChartsOf } from './vehicle-chart-data.js';
import type { PeakChart, WarmupChart } from './weekly-report-schema.js';
import { DAY_MS } from '../time/durations.js';

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
export async function vehicleCharts(
  db: Kysely<Database>,
  v: Pick<
    VehicleProfile,
    | 'vehicleId'
    | 'fleetId'
    | 'engineFamily'
    | 'thermostatOpenC'
    | 'capPressureKpa'
    | 'glycolPercent'
    | 'atmosphericPressureKpa'
  >,
  unresolved: readonly ChartedFinding[],
  asOfMs: number,
): Promise<{ warmup: WarmupChart; peaks: PeakChart }> {
  const repo = createReportRepository(db);
  const recentFrom = asOfMs - RECENT_COLD_START_DAYS * DAY_MS;
  const onset = unresolved
    .filter((f) => WARMUP_KINDS.has(f.kind))
    .reduce((m, f) => Math.min(m, f.firstSeenMs), recentFrom);
  const lastService = (await repo.lastServiceEvents([v.vehicleId], asOfMs)).get(v.vehicleId) ?? -Infinity;
  const runs = (
    await repo.coldStarts([v.vehicleId], Math.min(onset - BASELINE_LOOKBACK_DAYS * DAY_MS, recentFrom), asOfMs)
  ).map((r) => r.metrics);
  const lastDay = new Date(asOfMs).toISOString().slice(0, 10);
  const firstDay = new Date(asOfMs - (PEAK_CHART_DAYS - 1) * DAY_MS).toISOString().slice(0, 10);
  return vehicleChartsOf(v, {
    onsetMs: onset,
    bandFromMs: Math.max(onset - BASELINE_LOOKBACK_DAYS * DAY_MS, lastService),
    runs,
    curves: await recentWarmupCurves(repo, v.vehicleId, runs, recentFrom),
    days: (await repo.days(v.fleetId, firstDay, lastDay, [v.vehicleId])).map((d) => d.metrics),
    trendFinding: unresolved.find((f) => f.kind === 'overheating-trend'),
  });
}
