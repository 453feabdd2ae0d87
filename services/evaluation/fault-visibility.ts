import { isSensorFault, simulateVehicle, type SimVehicle } from '../simulator/index.js';
import { DAY_MS } from '../time/durations.js';

/**
 * Whether a physical fault changed what could be measured at all: the vehicle is simulated again
 * without its faults (its random streams do not depend on faults, so it drives the same roads in
 * the same weather) and the true coolant temperatures are compared sample by sample. Sensor faults
 * change the reported signal by construction and count as visible. Same criterion as the
 * analysis tests' evaluation fleet (test/analysis/evaluation-fleet.ts).
 */

/** A fault is visible when it moves the true coolant temperature this much ... */
export const VISIBLE_DIFF_C = 5;
/** ... on at least this many days after onset. */
export const VISIBLE_MIN_DAYS = 3;

/**
 * Streams the vehicle and its fault-free twin side by side; memory is two chunks.
 * @example faultVisible(v, { startMs, days: 35, seed: 5000 }) // true when the fault shows
 */
export function faultVisible(vehicle: SimVehicle, opts: { startMs: number; days: number; seed: number }): boolean {
  if (vehicle.faults.length === 0) return false;
  if (vehicle.faults.every((f) => isSensorFault(f.kind))) return true;
  const onset = Math.min(...vehicle.faults.map((f) => f.onsetMs));
  const faulty = simulateVehicle(vehicle, opts);
  const clean = simulateVehicle({ ...vehicle, faults: [] }, opts);
  const days = new Set<number>();
  let a = faulty.next();
  let b = clean.next();
  let i = 0;
  let j = 0;
  while (!a.done && !b.done) {
    const ca = a.value;
    const cb = b.value;
    if (i >= ca.length) {
      a = faulty.next();
      i = 0;
      continue;
    }
    if (j >= cb.length) {
      b = clean.next();
      j = 0;
      continue;
    }
    const ta = ca.ts[i] as number;
    const tb = cb.ts[j] as number;
    if (ta < tb) i++;
    else if (tb < ta) j++;
    else {
      if (ta >= onset && Math.abs((ca.coolantTrue[i] as number) - (cb.coolantTrue[j] as number)) >= VISIBLE_DIFF_C)
        days.add(Math.floor(ta / DAY_MS));
      i++;
      j++;
    }
  }
  return days.size >= VISIBLE_MIN_DAYS;
}
