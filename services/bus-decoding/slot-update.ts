import { alignReadings, type DerivedReadings, emptyDerivedReadings } from './align-readings.js';
import { MAX_STALE_MS } from './bus-channels.js';
import { SLOT_RECORD_LENGTH, type VehicleSlots } from './vehicle-slots.js';

/** The stored slots a request's slots need: the range whose readings they can change, plus the look-back. */
export function windowToLoad(incoming: VehicleSlots): { fromMs: number; toMs: number } {
  const r = affectedRange(incoming);
  return { fromMs: r.fromMs - MAX_STALE_MS - incoming.periodMs, toMs: r.toMs };
}

/**
 * Slot starts whose readings new samples in [touchedFrom, touchedTo] can change: a coolant
 * sample changes its own slot, any other channel the readings up to its staleness later.
 */
function affectedRange(incoming: VehicleSlots): { fromMs: number; toMs: number } {
  return { fromMs: incoming.touchedFromMs, toMs: incoming.touchedToMs + MAX_STALE_MS + incoming.periodMs };
}

export interface SlotUpdate {
  /** Slot starts whose stored record changed (to write back), ascending. */
  changedSlots: number[];
  /** Readings of the affected range before and after the merge. */
  before: DerivedReadings;
  after: DerivedReadings;
}

function sameRecord(a: Float64Array, b: Float64Array): boolean {
  for (let i = 0; i < SLOT_RECORD_LENGTH; i++) {
    const x = a[i]!;
    const y = b[i]!;
    if (x !== y && !(Number.isNaN(x) && Number.isNaN(y))) return false;
  }
  return true;
}

/**
 * Merges a request's slots into the stored ones of the same vehicle (`stored` must hold at least
 * `windowToLoad(incoming)`), in place, and says what changed: the records to write back and the
 * readings of the affected range before and after. Readings outside that range cannot change.
 * @example const u = applyIncoming(stored, rollUp(pre, 10_000)); u.changedSlots.length
 */
export function applyIncoming(stored: VehicleSlots, incoming: VehicleSlots): SlotUpdate {
  if (stored.periodMs !== incoming.periodMs) throw new RangeError('stored and incoming slots have different periods');
  const { fromMs, toMs } = affectedRange(incoming);
  const slotsBefore = stored.sortedSlots();
  const before = alignReadings(stored, fromMs, toMs, emptyDerivedReadings(), slotsBefore);
  const changedSlots: number[] = [];
  const copy = new Float64Array(SLOT_RECORD_LENGTH);
  for (const [start, rec] of incoming.records) {
    const existing = stored.records.get(start);
    if (existing) copy.set(existing);
    else copy.fill(NaN);
    stored.mergeRecord(start, rec);
    if (!sameRecord(copy, stored.records.get(start)!)) changedSlots.push(start);
  }
  changedSlots.sort((a, b) => a - b);
  const after = changedSlots.length === 0 ? before : alignReadings(stored, fromMs, toMs, emptyDerivedReadings());
  return { changedSlots, before, after };
}

export interface ReadingsDiff {
  /** Indexes into `after` of readings that are new or whose values changed. */
  upserts: number[];
  /** Per reading of `after`: 1 when `before` had no reading at its time. */
  isNew: Uint8Array;
  /** Timestamps of readings in `before` that `after` no longer has (the slot's coolant time moved earlier). */
  deletes: number[];
  /** Readings of `after` unchanged (a retried request's readings all are). */
  unchanged: number;
}

const VALUE_COLUMNS = [
  'coolantC',
  'ambientC',
  'speedKph',
  'rpm',
  'barometricKpa',
  'coolantLevelPct',
  'coolantPressureKpa',
] as const;

function same(x: number, y: number): boolean {
  return x === y || (Number.isNaN(x) && Number.isNaN(y));
}

/**
 * What to write to turn the stored readings `before` into `after`.
 * @example diffReadings(u.before, u.after).upserts.length
 */
export function diffReadings(before: DerivedReadings, after: DerivedReadings): ReadingsDiff {
  const old = new Map<number, number>();
  for (let i = 0; i < before.length; i++) old.set(before.tsMs[i]!, i);
  const upserts: number[] = [];
  const isNew = new Uint8Array(after.length);
  let unchanged = 0;
  for (let i = 0; i < after.length; i++) {
    const t = after.tsMs[i]!;
    const j = old.get(t);
    if (j === undefined) isNew[i] = 1;
    else {
      old.delete(t);
      if (VALUE_COLUMNS.every((c) => same(before[c][j]!, after[c][i]!))) {
        unchanged++;
        continue;
      }
    }
    upserts.push(i);
  }
  return { upserts, isNew, deletes: [...old.keys()], unchanged };
}
