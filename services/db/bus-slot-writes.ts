import type { DerivedReadings } from '../bus-decoding/align-readings.js';
import { CHANNEL_COUNT } from '../bus-decoding/bus-channels.js';
import { SLOT_RECORD_LENGTH } from '../bus-decoding/vehicle-slots.js';
import type { ReadingChunk, ReadingColumnArrays } from './reading-chunk.js';

/** Longest encoded slot record: the mask and every channel's two samples. */
const MAX_RECORD_BYTES = 2 + CHANNEL_COUNT * 32;

/**
 * A slot record as stored in `bus_slots.rec`: a little-endian uint16 mask (bit 2·channel: the
 * channel has a sample; bit 2·channel + 1: its latest sample differs from its earliest), then
 * per channel in order its earliest (ts, value) and, if different, its latest, as float8. A
 * gateway that forwards each group once per period sends one sample per channel and slot: 66
 * bytes for four channels instead of the record's 256 (the full record cost 3.5× the readings'
 * own COPY to store, measured on 20,000 slots).
 * @example encodeSlotRecord(rec, scratch) // bytes written
 */
export function encodeSlotRecord(rec: Float64Array, out: Buffer): number {
  let mask = 0;
  let o = 2;
  for (let ch = 0; ch < CHANNEL_COUNT; ch++) {
    const i = 4 * ch;
    const t0 = rec[i]!;
    if (t0 !== t0) continue;
    mask |= 1 << (2 * ch);
    out.writeDoubleLE(t0, o);
    out.writeDoubleLE(rec[i + 1]!, o + 8);
    o += 16;
    if (rec[i + 2] !== t0 || rec[i + 3] !== rec[i + 1]) {
      mask |= 1 << (2 * ch + 1);
      out.writeDoubleLE(rec[i + 2]!, o);
      out.writeDoubleLE(rec[i + 3]!, o + 8);
      o += 16;
    }
  }
  out.writeUInt16LE(mask, 0);
  return o;
}

/** Growable column-wise readings, handed out as a ReadingChunk (the shape the readings COPY encodes). */
class ReadingColumns {
  vehicleIds: string[] = [];
  private cols: number[][] = [[], [], [], [], [], [], [], []];

  push(vehicleId: string, r: DerivedReadings, i: number): void {
    this.vehicleIds.push(vehicleId);
    const src = [
      r.tsMs,
      r.coolantC,
      r.ambientC,
      r.speedKph,
      r.rpm,
      r.barometricKpa,
      r.coolantLevelPct,
      r.coolantPressureKpa,
    ];
    for (let k = 0; k < src.length; k++) this.cols[k]!.push(src[k]![i]!);
  }

  get length(): number {
    return this.vehicleIds.length;
  }

  chunk(): ReadingChunk {
    const [ts, c, a, s, r, b, l, p] = this.cols.map((col) => Float64Array.from(col)) as ReadingColumnArrays;
    return {
      length: this.length,
      vehicleIds: this.vehicleIds,
      tsMs: ts,
      coolantC: c,
      ambientC: a,
      speedKph: s,
      rpm: r,
      barometricKpa: b,
      coolantLevelPct: l,
      coolantPressureKpa: p,
    };
  }
}

/** What one frame request writes, over all its vehicles. */
export class SlotWrites {
  slotVehicles: string[] = [];
  slotPeriods: number[] = [];
  slotStarts: number[] = [];
  private slotHex: string[] = [];
  private readonly scratch = Buffer.allocUnsafe(MAX_RECORD_BYTES);
  deleteVehicles: string[] = [];
  deleteTs: number[] = [];
  /** Readings at a time no reading of the bus state had before (new rows, unless /v1/readings stored one there). */
  readonly fresh = new ReadingColumns();
  /** Readings whose values changed. */
  readonly changed = new ReadingColumns();
  readonly dirtyFrom = new Map<string, number>();
  accepted = 0;
  duplicates = 0;

  dirty(vehicleId: string, tsMs: number): void {
    const prev = this.dirtyFrom.get(vehicleId);
    if (prev === undefined || tsMs < prev) this.dirtyFrom.set(vehicleId, tsMs);
  }

  slot(vehicleId: string, periodS: number, startMs: number, rec: Float64Array): void {
    this.slotVehicles.push(vehicleId);
    this.slotPeriods.push(periodS);
    this.slotStarts.push(startMs);
    const n = encodeSlotRecord(rec, this.scratch);
    this.slotHex.push(this.scratch.toString('hex', 0, n));
  }

  reading(vehicleId: string, r: DerivedReadings, i: number, isNew: boolean): void {
    (isNew ? this.fresh : this.changed).push(vehicleId, r, i);
    this.dirty(vehicleId, r.tsMs[i]!);
  }

  /**
   * The changed slot records as a `bytea[]` literal of hex elements. (One bytea of all records
   * split by `substring` in SQL was tried: it cost 40 ms per 1,000 records, the literal 1 ms.)
   */
  slotRecordsLiteral(): string {
    return `{${this.slotHex.map((h) => `"\\\\x${h}"`).join(',')}}`;
  }
}

/** A stored record (see encodeSlotRecord) into `into` (SLOT_RECORD_LENGTH values, absent = NaN). */
export function decodeSlotRecord(bytes: Uint8Array, into: Float64Array): void {
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.length);
  const mask = view.getUint16(0, true);
  into.fill(NaN, 0, SLOT_RECORD_LENGTH);
  let o = 2;
  for (let ch = 0; ch < CHANNEL_COUNT; ch++) {
    if ((mask & (1 << (2 * ch))) === 0) continue;
    const i = 4 * ch;
    into[i] = view.getFloat64(o, true);
    into[i + 1] = view.getFloat64(o + 8, true);
    o += 16;
    if ((mask & (1 << (2 * ch + 1))) !== 0) {
      into[i + 2] = view.getFloat64(o, true);
      into[i + 3] = view.getFloat64(o + 8, true);
      o += 16;
    } else {
      into[i + 2] = into[i]!;
      into[i + 3] = into[i + 1]!;
    }
  }
  if (o !== bytes.length) throw new Error(`a bus_slots record of ${bytes.length} bytes does not match its mask`);
}
