import type { FindingKind } from './finding.js';

/** The repairs and inspections a planner records, named as the workshop says them. */
export const SERVICE_EVENT_KINDS = [
  'thermostat-replaced',
  'radiator-cleaned',
  'fan-repaired',
  'coolant-refilled',
  'sensor-replaced',
  'pressure-cap-replaced',
  'water-pump-replaced',
  'coolant-mix-corrected',
  'inspected-no-fault-found',
] as const;

export type ServiceEventKind = (typeof SERVICE_EVENT_KINDS)[number];

/** A repair recorded by the planner. */
export interface ServiceEvent {
  kind: ServiceEventKind;
  /** When the work was done, epoch ms. */
  at: number;
}

/** Which finding kinds each repair addresses (and whose baselines it restarts). */
const RESOLVES: Readonly<Record<ServiceEventKind, readonly FindingKind[]>> = {
  'thermostat-replaced': ['slow-warmup', 'overshoot', 'overheating-trend'],
  'radiator-cleaned': ['overheating-trend', 'boil-margin'],
  'fan-repaired': ['overheating-trend', 'boil-margin'],
  'coolant-refilled': ['overheating-trend', 'boil-margin', 'freeze-risk', 'coolant-loss'],
  // A new sensor reads differently: every baseline learned from the old one starts again.
  'sensor-replaced': ['sensor-fault', 'slow-warmup', 'overshoot', 'overheating-trend', 'boil-margin'],
  // A weak cap lets coolant boil and escape at a lower temperature: the boil margin and the trend start again.
  // A cap that no longer holds pressure when hot is one cause of coolant loss; so is a leaking pump seal.
  'pressure-cap-replaced': ['overheating-trend', 'boil-margin', 'coolant-loss'],
  'water-pump-replaced': ['overheating-trend', 'boil-margin', 'coolant-loss'],
  // A corrected glycol mix changes both the freezing and the boiling point.
  'coolant-mix-corrected': ['boil-margin', 'freeze-risk'],
  // Nothing on the vehicle changed: nothing is resolved and no baseline restarts, so a fault
  // the inspection missed keeps showing.
  'inspected-no-fault-found': [],
};

/**
 * Finding kinds a service event resolves.
 * @example resolvedKinds('thermostat-replaced') // ['slow-warmup', 'overshoot', 'overheating-trend']
 */
export function resolvedKinds(kind: ServiceEventKind): readonly FindingKind[] {
  return RESOLVES[kind];
}

/**
 * Start of the current baseline for a finding kind: the latest related service event at or
 * before `now`, else `historyStartMs`.
 */
export function baselineStartMs(
  kind: FindingKind,
  events: readonly ServiceEvent[],
  now: number,
  historyStartMs: number,
): number {
  let start = historyStartMs;
  for (const e of events) {
    if (e.at <= now && e.at > start && RESOLVES[e.kind].includes(kind)) start = e.at;
  }
  return start;
}
