import type { CoolingSystem } from './cooling-system.js';
import { DAY_MS, WEEK_MS } from '../time/durations.js';

/**
 * Cooling-system and sensor faults with an onset time and a severity 0..1.
 * Physical faults change the thermal model; sensor faults only change what is reported
 * (see coolant-sensor.ts).
 *
 * | kind                  | effect (s = severity, w = weeks since onset)                             |
 * |-----------------------|--------------------------------------------------------------------------|
 * | thermostat-stuck-open | valve never closes below x = 0.04 + 0.10·s (0..1 opening)                 |
 * | thermostat-sticking   | valve stays shut until wax > rating + 6 + 12·s °C, then jumps open        |
 * | radiator-fouling      | air side ×(1 − 0.75·s·min(1, w/2)): builds up over about 2 weeks          |
 * | fan-failure           | fan air flow ×max(0, 1 − 1.5·s) (dead from s = 2/3; less: slipping clutch) |
 * | coolant-loss          | coolant level 1 − min(0.5, 0.16·s·w): a leak, a little more lost each day |
 * | sensor-*              | see coolant-sensor.ts                                                     |
 */

export type FaultKind =
  | 'thermostat-stuck-open'
  | 'thermostat-sticking'
  | 'radiator-fouling'
  | 'fan-failure'
  | 'coolant-loss'
  | 'sensor-stuck'
  | 'sensor-spikes'
  | 'sensor-dropouts'
  | 'sensor-bias';

export interface FaultSpec {
  kind: FaultKind;
  /** Onset, epoch ms. */
  onsetMs: number;
  /** Severity, 0..1. */
  severity: number;
  /** Days over which the fault grows to full size from onset (gradual onset); 0 or absent = abrupt. */
  rampDays?: number;
}

/** Every fault kind, physical first. */
export const FAULT_KINDS: readonly FaultKind[] = [
  'thermostat-stuck-open',
  'thermostat-sticking',
  'radiator-fouling',
  'fan-failure',
  'coolant-loss',
  'sensor-stuck',
  'sensor-spikes',
  'sensor-dropouts',
  'sensor-bias',
];

/** True for faults of the coolant sensor (the engine itself is healthy). */
export function isSensorFault(kind: FaultKind): boolean {
  return kind.startsWith('sensor-');
}

/** How far a fault has grown at tMs (epoch ms, at or after onset): 0..1, 1 for an abrupt fault. */
export function faultRamp(fault: FaultSpec, tMs: number): number {
  if (!fault.rampDays || fault.rampDays <= 0) return 1;
  return Math.min(1, Math.max(0, (tMs - fault.onsetMs) / (fault.rampDays * DAY_MS)));
}
/** Smallest opening of a stuck-open thermostat at severity 0 and its growth with severity. */
export const STUCK_OPEN_BASE = 0.04;
export const STUCK_OPEN_PER_SEVERITY = 0.1;
/** How late a sticking thermostat opens, °C above its rating, at severity 0 and per severity. */
export const STICKING_LATE_BASE_C = 6;
export const STICKING_LATE_PER_SEVERITY_C = 12;
/**
 * Air-side loss of a fully fouled radiator at severity 1, and the weeks it takes to build up:
 * a season of dust, chaff, seeds or insects on the core blocks it within a couple of weeks
 * (common practice: radiators are blown out weekly in harvest or on dusty sites).
 */
export const FOULING_MAX_LOSS = 0.75;
export const FOULING_RAMP_WEEKS = 2;
/**
 * Coolant lost per week at severity 1, fraction of the charge, and the most that is lost: a
 * weeping hose, pump seal or head gasket that needs topping up every week or two (16 % of a
 * 20–40 L charge is 3–6 L a week). Slower seeps take months to show and are left to inspection.
 */
export const COOLANT_LOSS_PER_WEEK = 0.16;
export const COOLANT_LOSS_MAX = 0.5;

/**
 * Sets the cooling system's fault multipliers for time tMs (epoch ms); `healthyAirFactor` is the
 * radiator air side of the vehicle without faults (1 = as designed).
 */
export function applyPhysicalFaults(
  cs: CoolingSystem,
  faults: readonly FaultSpec[],
  tMs: number,
  healthyAirFactor = 1,
): void {
  let stuckOpen = 0;
  let late = 0;
  let air = healthyAirFactor;
  let fan = 1;
  let level = 1;
  for (const f of faults) {
    if (tMs < f.onsetMs) continue;
    const r = faultRamp(f, tMs);
    const s = f.severity * r;
    const weeks = (tMs - f.onsetMs) / WEEK_MS;
    switch (f.kind) {
      case 'thermostat-stuck-open':
        stuckOpen = Math.max(stuckOpen, (STUCK_OPEN_BASE + STUCK_OPEN_PER_SEVERITY * f.severity) * r);
        break;
      case 'thermostat-sticking':
        late = Math.max(late, (STICKING_LATE_BASE_C + STICKING_LATE_PER_SEVERITY_C * f.severity) * r);
        break;
      case 'radiator-fouling':
        air *= 1 - FOULING_MAX_LOSS * s * Math.min(1, weeks / FOULING_RAMP_WEEKS);
        break;
      case 'fan-failure':
        fan *= Math.max(0, 1 - 1.5 * s);
        break;
      case 'coolant-loss':
        level -= Math.min(COOLANT_LOSS_MAX, COOLANT_LOSS_PER_WEEK * s * weeks);
        break;
      default:
        break; // sensor faults do not touch the physics
    }
  }
  cs.thermostat.stuckOpenFraction = stuckOpen;
  cs.thermostat.lateOpeningC = late;
  cs.radiatorAirFactor = air;
  cs.fanFactor = fan;
  cs.coolantLevel = Math.max(0.3, level);
}
