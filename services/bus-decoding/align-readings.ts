import {
  CH_AMBIENT,
  CH_BAROMETRIC,
  CH_COOLANT,
  CH_COOLANT_HIGH_RES,
  CH_COOLANT_LEVEL,
  CH_COOLANT_PRESSURE,
  CH_RPM,
  CH_SPEED,
  CHANNEL_STALE_MS,
} from './bus-channels.js';
import { EARLIEST_TS, EARLIEST_VALUE, LATEST_TS, LATEST_VALUE, type VehicleSlots } from './vehicle-slots.js';

/** Readings derived from bus data, column-wise; absent channels NaN. */
/** Module-local copy: read per reading and channel. */
const STALE_MS = CHANNEL_STALE_MS;

export interface DerivedReadings {
  length: number;
  tsMs: number[];
  coolantC: number[];
  ambientC: number[];
  speedKph: number[];
  rpm: number[];
  barometricKpa: number[];
  coolantLevelPct: number[];
  coolantPressureKpa: number[];
}

export function emptyDerivedReadings(): DerivedReadings {
  return {
    length: 0,
    tsMs: [],
    coolantC: [],
    ambientC: [],
    speedKph: [],
    rpm: [],
    barometricKpa: [],
    coolantLevelPct: [],
    coolantPressureKpa: [],
  };
}

/**
 * The latest kept sample of `channel` at or before `t` and no older than its staleness, walking
 * back from slot index `k` of `slots` (ascending slot starts); NaN when there is none.
 */
function lookBack(
  periodMs: number,
  slots: readonly number[],
  recs: readonly Float64Array[],
  k: number,
  channel: number,
  t: number,
): number {
  const oldest = t - STALE_MS[channel]!;
  const i = 4 * channel;
  for (let j = k; j >= 0; j--) {
    const start = slots[j]!;
    if (start + periodMs <= oldest) return NaN;
    const rec = recs[j]!;
    let ts = rec[i + LATEST_TS]!;
    let value = rec[i + LATEST_VALUE]!;
    if (Number.isNaN(ts)) continue;
    if (ts > t) {
      // Only in the reading's own slot: its latest sample came after the coolant's.
      ts = rec[i + EARLIEST_TS]!;
      value = rec[i + EARLIEST_VALUE]!;
      if (ts > t) continue;
    }
    return ts >= oldest ? value : NaN;
  }
  return NaN;
}

/**
 * The readings of the slots starting in [fromMs, toMs], appended to `out`: one per slot that
 * has a coolant sample, at the slot's earliest high-resolution coolant sample (SPN 1637) if it
 * has one, else its earliest coolant sample (SPN 110 / PID 0x05); every other channel is the
 * latest kept sample at or before that time no older than CHANNEL_STALE_MS. A slot keeps only
 * its earliest and latest sample of each channel, so where the reading's own slot has samples
 * both before and after its coolant time the value is the slot's earliest sample (older than the
 * true latest by at most the coolant time's distance from the slot start). The result depends
 * only on the merged state, not on the order samples arrived in.
 * @example alignReadings(slots, 0, Infinity, emptyDerivedReadings()).length
 */
export function alignReadings(
  state: VehicleSlots,
  fromMs: number,
  toMs: number,
  out: DerivedReadings,
  slots = state.sortedSlots(),
): DerivedReadings {
  const recs = slots.map((s) => state.records.get(s)!);
  const p = state.periodMs;
  for (let k = 0; k < slots.length; k++) {
    const start = slots[k]!;
    if (start < fromMs) continue;
    if (start > toMs) break;
    const rec = recs[k]!;
    const hr = !Number.isNaN(rec[4 * CH_COOLANT_HIGH_RES + EARLIEST_TS]!);
    const c = 4 * (hr ? CH_COOLANT_HIGH_RES : CH_COOLANT);
    const t = rec[c + EARLIEST_TS]!;
    if (Number.isNaN(t)) continue;
    out.tsMs.push(t);
    out.coolantC.push(rec[c + EARLIEST_VALUE]!);
    out.ambientC.push(lookBack(p, slots, recs, k, CH_AMBIENT, t));
    out.speedKph.push(lookBack(p, slots, recs, k, CH_SPEED, t));
    out.rpm.push(lookBack(p, slots, recs, k, CH_RPM, t));
    out.barometricKpa.push(lookBack(p, slots, recs, k, CH_BAROMETRIC, t));
    out.coolantLevelPct.push(lookBack(p, slots, recs, k, CH_COOLANT_LEVEL, t));
    out.coolantPressureKpa.push(lookBack(p, slots, recs, k, CH_COOLANT_PRESSURE, t));
    out.length++;
  }
  return out;
}
