import type { Kysely } from 'kysely';
import { resolveConfig } from '../analysis/config.js';
import { SAFETY_CAUTION } from '../analysis/findings/finding.js';
import type { Database } from '../db/schema.js';
import { findingsAsOf } from './as-of-findings.js';
import { summariseDataQuality } from './data-quality.js';
import { reportCoverage } from './report-coverage.js';
import { summariseFindings } from './findings-summary.js';
import { SILENT_LOOKBACK_DAYS, summariseFleet } from './fleet-summary.js';
import { lastCompleteIsoWeek, parseIsoWeek, weekWindow, type WeekWindow } from '../time/iso-week.js';
import { PEAK_CHART_DAYS } from './peak-chart-data.js';
import {
  createReportRepository,
  type ReportRepository,
  type ReportVehicle,
  type StoredFinding,
} from '../db/weekly-report-repository.js';
import { recentWarmupCurves, vehicleChartsOf } from './vehicle-chart-data.js';
import type { VehicleSection, WeeklyReport, WorkItem } from './weekly-report-schema.js';
import { buildWorkList, unresolvedAt, withPlannerStatesAt } from './work-list.js';
import { DAY_MS } from '../time/durations.js';

/** Vehicles (highest risk first) that get chart sections; the rest are on the work list only. */
export const MAX_CHARTED_VEHICLES = 10;
/** Healthy cold starts for the band are taken from this long before the onset, days. */
export const BASELINE_LOOKBACK_DAYS = 60;
/** Recent cold starts are looked for this far back from the report time, days. */
export const RECENT_COLD_START_DAYS = 14;
/** Usual behaviour (breaks in reporting, gaps) is judged over this many days before the week. */
export const HISTORY_DAYS = 28;

/** Findings that say the warm-up itself (or its measurement) is abnormal. */
export const WARMUP_KINDS: ReadonlySet<string> = new Set(['slow-warmup', 'overshoot', 'sensor-fault']);

/** The fleet named does not exist. */
export class UnknownFleetError extends Error {
  constructor(readonly fleetId: string) {
    super(`unknown fleet '${fleetId}'`);
    this.name = 'UnknownFleetError';
  }
}

export interface BuildReportOptions {
  fleetId: string;
  /** ISO week `YYYY-Www`; default: the last complete week in the fleet's time zone. */
  week?: string;
  /** The current time, epoch ms (default Date.now()). */
  now?: number;
}

const dayBefore = (date: string, days: number) => new Date(Date.parse(date) - days * DAY_MS).toISOString().slice(0, 10);

/**
 * Gathers one fleet's ISO week from the analysis tables into the report object (the JSON
 * format). Throws UnknownFleetError, or RangeError for a malformed week.
 * @example await buildWeeklyReport(db, { fleetId: 'quillmoor', week: '2026-W48' })
 */
export async function buildWeeklyReport(db: Kysely<Database>, options: BuildReportOptions): Promise<WeeklyReport> {
  const repo = createReportRepository(db);
  const now = options.now ?? Date.now();
  const fleet = await repo.fleet(options.fleetId);
  if (!fleet) throw new UnknownFleetError(options.fleetId);
  const week = options.week ? parseIsoWeek(options.week) : lastCompleteIsoWeek(now, fleet.timeZone);
  const win = weekWindow(week, fleet.timeZone);
  const asOf = Math.min(win.endMs, now);

  const pastWeek = now >= win.endMs;
  const stored = await repo.vehicles(fleet.fleetId);
  const weekDays = await repo.days(fleet.fleetId, win.dates[0]!, win.dates[6]!);
  const findings = await repo.findings(fleet.fleetId, win.startMs, win.endMs);
  let unresolved = unresolvedAt(findings, asOf);
  let vehicles = stored;
  // A past week is told as of its end throughout: the findings, texts and risk of every vehicle
  // analysed beyond the week are re-derived from what was stored by then. For the others the
  // stored findings already are the state at the week's end.
  const later = new Set(
    stored.filter((v) => pastWeek && (v.lastReadingMs ?? -Infinity) > asOf).map((v) => v.vehicleId),
  );
  if (later.size > 0) {
    const rederive = [...new Set(unresolved.filter((f) => later.has(f.vehicleId)).map((f) => f.vehicleId))];
    const asOfFindings = await findingsAsOf(db, rederive, new Map(stored.map((v) => [v.vehicleId, v])), findings, asOf);
    unresolved = [...unresolved.filter((f) => !later.has(f.vehicleId)), ...asOfFindings.unresolved];
    vehicles = stored.map((v) =>
      later.has(v.vehicleId) ? { ...v, riskScore: asOfFindings.risk.get(v.vehicleId) ?? 0 } : v,
    );
  }
  // Planner decisions as they stood at the week's end: a deferral made later is not shown in a past week.
  if (pastWeek) unresolved = withPlannerStatesAt(unresolved, await repo.plannerStatesAt(fleet.fleetId, asOf), asOf);
  const byId = new Map(vehicles.map((v) => [v.vehicleId, v]));
  const workList = buildWorkList(unresolved, byId);
  const toBook = workList.map((w) => w.vehicleId);
  const lastReadings = await repo.lastReadings(fleet.fleetId, asOf, SILENT_LOOKBACK_DAYS * DAY_MS);
  const sensorEvents = await repo.sensorEvents(fleet.fleetId, win.startMs, win.endMs);
  const priorFirst = dayBefore(win.dates[0]!, HISTORY_DAYS);
  const priorLast = dayBefore(win.dates[0]!, 1);
  // The breaks end on the week's first day, so a break running into the week counts as usual only up to it.
  const usualBreaks = await repo.longestBreaks(fleet.fleetId, priorFirst, win.dates[0]!);
  const usualGaps = await repo.gapTotals(fleet.fleetId, priorFirst, priorLast);
  const weekData = await repo.weekData(fleet.fleetId, win.dates[0]!, win.dates[6]!, win.endMs);

  return {
    formatVersion: 1,
    fleet,
    week: {
      isoWeek: win.isoWeek,
      firstDay: win.dates[0]!,
      lastDay: win.dates[6]!,
      start: new Date(win.startMs).toISOString(),
      end: new Date(win.endMs).toISOString(),
    },
    generatedAt: new Date(now).toISOString(),
    asOf: new Date(asOf).toISOString(),
    coverage: reportCoverage(weekData, vehicles.length, now >= win.endMs),
    summary: summariseFleet(vehicles, weekDays, lastReadings, usualBreaks, asOf, toBook.length),
    findings: summariseFindings(findings, win.startMs, win.endMs),
    workList,
    vehicles: await vehicleSections(
      repo,
      fleet.fleetId,
      toBook.slice(0, MAX_CHARTED_VEHICLES),
      byId,
      workList,
      unresolved,
      win,
      asOf,
    ),
    dataQuality: summariseDataQuality(sensorEvents, unresolved, weekDays, usualGaps),
    caution: SAFETY_CAUTION,
  };
}

/** Chart data of each charted vehicle: warm-ups against its healthy band, daily peaks with the trend. */
async function vehicleSections(
  repo: ReportRepository,
  fleetId: string,
  ids: readonly string[],
  byId: ReadonlyMap<string, ReportVehicle>,
  workList: readonly WorkItem[],
  unresolved: readonly StoredFinding[],
  win: WeekWindow,
  asOf: number,
): Promise<VehicleSection[]> {
  if (ids.length === 0) return [];
  // The band ends where warm-ups stopped being healthy; an overheating finding leaves warm-ups alone, so
  // without a warm-up finding the band is the history before the recent curves.
  const recentFrom = asOf - RECENT_COLD_START_DAYS * DAY_MS;
  const onsets = new Map<string, number>(ids.map((id) => [id, recentFrom]));
  for (const f of unresolved)
    if (WARMUP_KINDS.has(f.kind)) onsets.set(f.vehicleId, Math.min(onsets.get(f.vehicleId) ?? Infinity, f.firstSeenMs));
  const earliestOnset = Math.min(...onsets.values());
  const services = await repo.lastServiceEvents(ids, asOf);
  const runs = await repo.coldStarts(ids, Math.min(earliestOnset - BASELINE_LOOKBACK_DAYS * DAY_MS, recentFrom), asOf);
  const lastDay = win.dates[6]!;
  const days = await repo.days(fleetId, dayBefore(lastDay, PEAK_CHART_DAYS - 1), lastDay, ids);

  const sections: VehicleSection[] = [];
  for (const id of ids) {
    const v = byId.get(id)!;
    const cfg = resolveConfig(v.engineFamily);
    const onset = onsets.get(id)!;
    const bandFrom = Math.max(onset - BASELINE_LOOKBACK_DAYS * DAY_MS, services.get(id) ?? -Infinity);
    const own = runs.filter((r) => r.vehicleId === id).map((r) => r.metrics);
    const curves = await recentWarmupCurves(repo, id, own, recentFrom);
    const row = workList.find((w) => w.vehicleId === id)!;
    const atmosphericPressureKpa = v.atmosphericPressureKpa ?? cfg.atmosphericPressureKpa;
    sections.push({
      vehicleId: id,
      label: v.label,
      engineFamily: v.engineFamily,
      riskScore: v.riskScore,
      priority: row.priority,
      capPressureKpa: v.capPressureKpa,
      glycolPercent: v.glycolPercent,
      atmosphericPressureKpa,
      defaultProfile: v.defaultProfile ?? false,
      depot: v.depot ?? null,
      siteSource: v.siteSource ?? 'sea level',
      findingIds: row.findings.map((f) => f.findingId),
      headline: row.why,
      ...vehicleChartsOf(
        { ...v, atmosphericPressureKpa },
        {
          onsetMs: onset,
          bandFromMs: bandFrom,
          runs: own,
          curves,
          days: days.filter((d) => d.vehicleId === id).map((d) => d.metrics),
          trendFinding: unresolved.find((f) => f.vehicleId === id && f.kind === 'overheating-trend'),
        },
      ),
    });
  }
  return sections;
}
