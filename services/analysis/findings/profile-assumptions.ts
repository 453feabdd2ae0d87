import { DEFAULT_VEHICLE_PROFILE } from '../vehicle-profile.js';

const d = DEFAULT_VEHICLE_PROFILE;

/** The profile figures each kind of finding rests on, in words. */
const ASSUMED: Readonly<Record<string, string>> = {
  'boil-margin': `The boiling point assumes the default profile (${d.capPressureKpa} kPa cap, ${d.glycolPercent} % glycol by mass)`,
  'overheating-trend': `The boiling point and the hot threshold assume the default profile (${d.capPressureKpa} kPa cap, ${d.glycolPercent} % glycol by mass, thermostat ${d.thermostatOpenC} °C)`,
  'freeze-risk': `The freezing point assumes the default profile (${d.glycolPercent} % glycol by mass)`,
  'slow-warmup': `The warm-up target assumes the default profile (thermostat ${d.thermostatOpenC} °C)`,
  overshoot: `The thermostat rating assumes the default profile (${d.thermostatOpenC} °C)`,
};

/**
 * For a vehicle on the default profile, the sentence saying which of the finding's figures are
 * assumptions; null when the vehicle has its own profile or the kind rests on no profile figure
 * (sensor faults, coolant loss).
 * @example defaultProfileNote('boil-margin', true) // 'The boiling point assumes the default profile (100 kPa cap, …'
 */
export function defaultProfileNote(kind: string, defaultProfile: boolean): string | null {
  const assumed = defaultProfile ? ASSUMED[kind] : undefined;
  return assumed === undefined ? null : `${assumed}, not the vehicle's own: set its profile for a true figure.`;
}
