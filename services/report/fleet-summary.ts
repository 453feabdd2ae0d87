import { round } from '../analysis/findings/finding.js';
import type { ReportVehicle, StoredDay } from '../db/weekly-report-repository.js';
import type { WeeklyReport } from './weekly-report-schema.js';
import { HOUR_MS } from '../time/durations.js';

/** A gateway with no data for this long at the report time is listed as silent, h. */
export const SILENT_GATEWAY_H = 48;
/** How far back the last reading of a silent gateway is looked for, days. */
export const SILENT_LOOKBACK_DAYS = 60;

/**
 * The fleet's week in numbers, from the week's vehicle-days and each gateway's last reading
 * (null: none in the look-back window).
 */
export function summariseFleet(
  vehicles: readonly ReportVehicle[],
  weekDays: readonly StoredDay[],
  lastReadings: ReadonlyMap<string, number | null>,
  usualBreaksMs: ReadonlyMap<string, number>,
  asOfMs: number,
  vehiclesToBook: number,
): WeeklyReport['summary'] {
  const reporting = new Set<string>();
  let engineHours = 0,
    engineRuns = 0,
    coldStarts = 0;
  for (const { vehicleId, metrics: d } of weekDays) {
    if (d.sampleCount > 0) reporting.add(vehicleId);
    engineHours += d.engineHours;
    engineRuns += d.runCount;
    coldStarts += d.coldStartCount;
  }
  const silentGateways = vehicles
    .flatMap((v) => {
      const last = lastReadings.get(v.vehicleId) ?? null;
      if (last !== null && asOfMs - last < SILENT_GATEWAY_H * HOUR_MS) return [];
      const usual = usualBreaksMs.get(v.vehicleId) ?? null;
      return [
        {
          vehicleId: v.vehicleId,
          label: v.label,
          lastReadingAt: last === null ? null : new Date(last).toISOString(),
          silentHours: last === null ? null : round((asOfMs - last) / HOUR_MS, 1),
          usualLongestBreakHours: usual === null ? null : round(usual / HOUR_MS, 1),
          // A van parked every weekend is silent for 60 h every Monday: only a break longer than its usual ones needs a look.
          unusual: last === null || usual === null || asOfMs - last > usual,
        },
      ];
    })
    .sort(
      (a, b) =>
        Number(b.unusual) - Number(a.unusual) ||
        (b.silentHours ?? Infinity) - (a.silentHours ?? Infinity) ||
        a.vehicleId.localeCompare(b.vehicleId),
    );
  return {
    vehicles: vehicles.length,
    vehiclesReporting: reporting.size,
    engineHours: round(engineHours, 1),
    engineRuns,
    coldStarts,
    vehiclesToBook,
    silentGatewayHours: SILENT_GATEWAY_H,
    silentGateways,
  };
}
