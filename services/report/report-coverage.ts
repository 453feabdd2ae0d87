import { createHash } from 'node:crypto';
import type { WeekData } from '../db/weekly-report-repository.js';
import type { WeeklyReport } from './weekly-report-schema.js';

const fmt = (v: number) => v.toLocaleString('en-GB');
const utcText = (ms: number) => `${new Date(ms).toISOString().slice(0, 16).replace('T', ' ')} UTC`;

/**
 * A short fingerprint of what the analysis tables hold for the week: an archived report whose
 * stamp differs from the current one is stale (readings of the week arrived or were re-analysed,
 * findings or repairs changed) and is built again.
 */
export function weekDataStamp(data: WeekData): string {
  return createHash('sha256').update(JSON.stringify(data)).digest('hex').slice(0, 16);
}

/**
 * What the report covers, in numbers and in one sentence the report prints.
 * @example reportCoverage(data, 14, true).statement // "Covers 9,120 readings from 12 of 14 vehicles …"
 */
export function reportCoverage(data: WeekData, vehicles: number, weekEnded: boolean): WeeklyReport['coverage'] {
  const complete = weekEnded && data.pendingVehicles === 0;
  const span =
    data.firstReadingMs !== null && data.lastReadingMs !== null
      ? `, ${utcText(data.firstReadingMs)} to ${utcText(data.lastReadingMs)}`
      : '';
  const what =
    data.readings === 0
      ? 'No readings of this week have been analysed'
      : `Covers ${fmt(data.readings)} analysed readings from ${fmt(data.vehiclesWithData)} of ${fmt(vehicles)} vehicles (${fmt(data.vehicleDays)} vehicle-days)${span}`;
  const state = !weekEnded
    ? 'the week has not ended, so this report will change.'
    : data.pendingVehicles > 0
      ? `${fmt(data.pendingVehicles)} vehicle${data.pendingVehicles > 1 ? 's have' : ' has'} readings of the week still waiting for analysis; the report is built again when they are analysed.`
      : 'analysis is complete for every vehicle; readings of this week that arrive later make the report be built again.';
  return {
    vehiclesWithData: data.vehiclesWithData,
    vehicleDays: data.vehicleDays,
    readings: data.readings,
    firstReadingAt: data.firstReadingMs === null ? null : new Date(data.firstReadingMs).toISOString(),
    lastReadingAt: data.lastReadingMs === null ? null : new Date(data.lastReadingMs).toISOString(),
    pendingVehicles: data.pendingVehicles,
    complete,
    stamp: weekDataStamp(data),
    statement: `${what}; ${state}`,
  };
}
