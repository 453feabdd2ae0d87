import { round } from '../analysis/findings/finding.js';
import type { StoredDay, StoredFinding, StoredSensorEvent } from '../db/weekly-report-repository.js';
import type { WeeklyReport } from './weekly-report-schema.js';

type DataQuality = WeeklyReport['dataQuality'];
/** Vehicles missing at least this share of their running time are listed under gaps… */
export const GAP_LIST_MIN_FRACTION = 0.02;
/** …when that is this much more than their own share over the weeks before (short engine-off stops inside a run count as missing, so each duty has its own normal level). */
export const GAP_EXCESS_FRACTION = 0.05;

/**
 * Sensor faults (the week's sensor events by kind, open sensor-fault findings) and gaps
 * (dropouts inside engine runs) per vehicle.
 */
export function summariseDataQuality(
  events: readonly StoredSensorEvent[],
  unresolved: readonly StoredFinding[],
  weekDays: readonly StoredDay[],
  usualGaps: ReadonlyMap<string, { missingS: number; runningS: number }>,
): DataQuality {
  const sensor = new Map<string, DataQuality['sensorFaults'][number]>();
  const row = (vehicleId: string) => {
    let r = sensor.get(vehicleId);
    if (!r) sensor.set(vehicleId, (r = { vehicleId, events: {}, openFinding: null }));
    return r;
  };
  // Dropouts are gaps, listed below; here only what the sensor itself got wrong.
  for (const e of events)
    if (e.kind !== 'dropout') row(e.vehicleId).events[e.kind] = (row(e.vehicleId).events[e.kind] ?? 0) + 1;
  for (const f of unresolved) if (f.kind === 'sensor-fault') row(f.vehicleId).openFinding = f.summary;

  const gaps = new Map<string, { days: number; dropouts: number; missingS: number; runningS: number }>();
  for (const { vehicleId, metrics: d } of weekDays) {
    const g = gaps.get(vehicleId) ?? { days: 0, dropouts: 0, missingS: 0, runningS: 0 };
    g.days++;
    g.dropouts += d.dropoutCount;
    g.missingS += d.missingS;
    g.runningS += d.engineHours * 3600;
    gaps.set(vehicleId, g);
  }
  const share = (x: { missingS: number; runningS: number }) =>
    x.runningS + x.missingS > 0 ? x.missingS / (x.runningS + x.missingS) : 0;
  const gapRows = [...gaps.entries()]
    .map(([vehicleId, g]) => {
      const usual = usualGaps.get(vehicleId);
      return {
        vehicleId,
        daysWithData: g.days,
        dropouts: g.dropouts,
        missingHours: round(g.missingS / 3600, 2),
        missingFraction: round(share(g), 3),
        usualMissingFraction: usual && usual.runningS > 0 ? round(share(usual), 3) : null,
      };
    })
    .filter(
      (g) =>
        g.missingFraction >= GAP_LIST_MIN_FRACTION &&
        g.missingFraction - (g.usualMissingFraction ?? 0) >= GAP_EXCESS_FRACTION,
    )
    .sort((a, b) => b.missingFraction - a.missingFraction || a.vehicleId.localeCompare(b.vehicleId));
  return {
    sensorFaults: [...sensor.values()].sort((a, b) => a.vehicleId.localeCompare(b.vehicleId)),
    gaps: gapRows,
  };
}
