import type { AllSampleArrays, SampleArrays } from '../../analysis/sample-arrays.js';
import { HEADER_BYTES, PG_EPOCH_MS, TWO_POW_32 } from './binary-copy-format.js';
import { COPY_DATA, MESSAGE_HEADER_BYTES } from './copy-out.js';
import type { ReadingColumnArrays } from '../reading-chunk.js';

/** Printed values remembered per window read (telemetry repeats values a lot); bounded. */
const PRINTED_CACHE_MAX = 65_536;

/**
 * The value Postgres prints for a `real` (shortest decimal that reads back as the same float4),
 * so the binary path hands the analysis exactly what the text path does. Telemetry values are
 * mostly whole or 1/32 steps (SPN 110, SPN 171), which print exactly; others (°F converted at ingest)
 * repeat, so each distinct one is worked out once per window. One difference remains: a float4
 * exactly halfway between two shortest decimals (about 1 value in 20,000 of random data) comes out
 * one unit in the last printed digit away from Postgres's choice, i.e. within 1e-7 relative.
 */
function float4AsPrinted(f: number, cache: Map<number, number>): number {
  // Whole numbers, and 1/32 steps below 64 (at most 7 digits, no shorter decimal within half a
  // float4 step), print exactly.
  if (Number.isInteger(f) ? Math.abs(f) < 16_777_216 : Number.isInteger(f * 32) && Math.abs(f) < 64) return f;
  if (!Number.isFinite(f)) return f;
  const known = cache.get(f);
  if (known !== undefined) return known;
  let printed = Number(f.toPrecision(9));
  for (let digits = 6; digits < 9; digits++) {
    const d = Number(f.toPrecision(digits));
    if (Math.fround(d) === f) {
      printed = d;
      break;
    }
  }
  if (cache.size >= PRINTED_CACHE_MAX) cache.clear();
  cache.set(f, printed);
  return printed;
}

/** One vehicle's readings to read: [fromMs, toMs). */
export interface WindowRequest {
  vehicleId: string;
  fromMs: number;
  toMs: number;
  /** Readings already at hand that come before `fromMs`: returned first, as if read too. */
  prefix?: SampleArrays;
}

/** Row indices in ascending ts (ties in their read order). */
function ascendingOrder(ts: Float64Array): Uint32Array {
  const n = ts.length;
  const order = new Uint32Array(n);
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < n; i++) {
    min = Math.min(min, ts[i]!);
    max = Math.max(max, ts[i]!);
  }
  if ((max - min + 1) * n <= Number.MAX_SAFE_INTEGER) {
    // One exact float64 key per row, (ts - min) * n + i, sorted natively: about 10× a comparator sort.
    const keys = new Float64Array(n);
    for (let i = 0; i < n; i++) keys[i] = (ts[i]! - min) * n + i;
    keys.sort();
    for (let i = 0; i < n; i++) order[i] = keys[i]! % n;
    return order;
  }
  for (let i = 0; i < n; i++) order[i] = i;
  return order.sort((a, b) => ts[a]! - ts[b]! || a - b);
}

function permute(samples: AllSampleArrays, order: Uint32Array): AllSampleArrays {
  const pick = (col: Float64Array) => {
    const out = new Float64Array(order.length);
    for (let i = 0; i < order.length; i++) out[i] = col[order[i]!]!;
    return out;
  };
  return {
    ts: pick(samples.ts),
    coolant: pick(samples.coolant),
    ambient: pick(samples.ambient),
    speedKph: pick(samples.speedKph),
    rpm: pick(samples.rpm),
    barometricKpa: pick(samples.barometricKpa),
    coolantLevelPct: pick(samples.coolantLevelPct),
    coolantPressureKpa: pick(samples.coolantPressureKpa),
  };
}

const INITIAL_ROWS = 262_144;
/** Room a window's columns start with (a worker's window is a vehicle's slice: ~20k rows a week). */
const MIN_WINDOW_ROWS = 4096;
const COLUMNS = 8;
/** The SampleArrays columns in decode order (the last three: vehicle-bus channels, migration 0005). */
export const COLUMN_NAMES = [
  'ts',
  'coolant',
  'ambient',
  'speedKph',
  'rpm',
  'barometricKpa',
  'coolantLevelPct',
  'coolantPressureKpa',
] as const;
/** Fields of a COPY tuple: the vehicle id and the columns. */
const TUPLE_FIELDS = 1 + COLUMNS;

/**
 * Memory that one reader (a worker's batch) reuses from read to read: one set of columns per
 * window, which rows are decoded straight into (a window's prefix copied in first), grown by
 * doubling. Allocating (and zeroing) them afresh for each read cost more garbage collection and
 * page faults than the decoding itself; decoding into shared columns and regrouping them by
 * window afterwards cost a tenth of the worker's CPU. The arrays a read returns with these
 * buffers are views into them, valid until the next read with the same buffers.
 */
export class WindowBuffers {
  /** Per window of a read, by position: the COLUMN_NAMES columns (empty until the first read by COPY). */
  windows: Float64Array[][] = [];
  /** Most rows, prefixes included, that one read with these buffers has returned. */
  private peakRows = 0;

  /** Window `k`'s columns with room for at least `rows` rows, keeping their first `keep`. */
  reserve(k: number, rows: number, keep: number): Float64Array[] {
    const cols = this.windows[k];
    if (cols && cols[0]!.length >= rows) return cols;
    const n = Math.max(rows, (cols?.[0]!.length ?? 0) * 2, MIN_WINDOW_ROWS);
    const grownCols = Array.from({ length: COLUMNS }, (_, c) => {
      const b = new Float64Array(n);
      if (cols && keep > 0) b.set(cols[c]!.subarray(0, keep));
      return b;
    });
    this.windows[k] = grownCols;
    return grownCols;
  }

  /** Rows the buffers have room for, summed over windows. */
  capacityRows(): number {
    return this.windows.reduce((sum, cols) => sum + cols[0]!.length, 0);
  }

  /**
   * After a read that returned `sizes[k]` rows for window k: keeps the room held at most twice
   * the largest read's rows (or INITIAL_ROWS), which is no more than the shared decode and
   * grouped columns held before, by letting go of the windows with the most room to spare
   * (windows that a later read needs again grow anew).
   */
  trim(sizes: ArrayLike<number>): void {
    let total = 0;
    for (let k = 0; k < sizes.length; k++) total += sizes[k]!;
    this.peakRows = Math.max(this.peakRows, total);
    const budget = 2 * Math.max(this.peakRows, INITIAL_ROWS);
    let held = this.capacityRows();
    if (held <= budget) return;
    const spare = this.windows.map((cols, k) => ({ k, spare: cols[0]!.length - (k < sizes.length ? sizes[k]! : 0) }));
    spare.sort((a, b) => b.spare - a.spare);
    const drop = new Set<number>();
    for (const { k } of spare) {
      if (held <= budget) break;
      held -= this.windows[k]![0]!.length;
      drop.add(k);
    }
    this.windows = this.windows.map((cols, k) =>
      drop.has(k) ? Array.from({ length: COLUMNS }, () => new Float64Array(0)) : cols,
    );
  }
}

/**
 * Decodes binary COPY messages of (vehicle_id text, ts timestamptz, seven nullable reals) straight
 * into each row's window's columns, after the window's prefix, and hands out one set of arrays per
 * window. PostgreSQL sends one CopyData message per tuple (the first with the file header in
 * front) and one for the trailer.
 */
export class WindowsDecoder {
  /** Rows per window so far, prefix included. */
  private readonly sizes: Uint32Array;
  /** 1 for a window whose rows came out of time order (late data): sorted before it is handed out. */
  private readonly unordered: Uint8Array;
  private headerSeen = false;
  private last = 0;
  /** Printed value of the last float4 seen per real column: telemetry repeats values row after row. */
  private readonly lastIn = new Float64Array(COLUMNS).fill(NaN);
  private readonly lastOut = new Float64Array(COLUMNS).fill(NaN);
  private readonly printed = new Map<number, number>();

  constructor(
    private readonly ids: readonly IdBytes[],
    private readonly buffers: WindowBuffers,
    prefixes: ReadonlyArray<SampleArrays | undefined>,
  ) {
    this.sizes = new Uint32Array(ids.length);
    this.unordered = new Uint8Array(ids.length);
    for (let k = 0; k < ids.length; k++) {
      const prefix = prefixes[k];
      const n = prefix?.ts.length ?? 0;
      const cols = buffers.reserve(k, n, 0);
      if (prefix) {
        for (let c = 0; c < COLUMNS; c++) {
          const col = prefix[COLUMN_NAMES[c]!];
          if (col) cols[c]!.set(col);
          else cols[c]!.fill(NaN, 0, n);
        }
      }
      this.sizes[k] = n;
    }
  }

  /**
   * Decodes the whole CopyData messages from `start` on (a `CopyDataSink`): one tuple each, the
   * first one after the file header, and the trailer. Returns where it stopped: a message of
   * another type, or one that does not end by `end`. Rows mostly come in runs of one vehicle (a
   * gateway's post): `decodeRunOfLastWindow` decodes those, and every other message (header, trailer, another
   * vehicle, a window out of room) goes through `decodeAnyMessage`, so the hot loop holds no rarely taken path
   * that would make V8 throw its compiled code away when first taken.
   */
  messages(bytes: Uint8Array, view: DataView, start: number, end: number): number {
    let p = start;
    for (;;) {
      p = this.decodeRunOfLastWindow(bytes, view, p, end);
      if (p + MESSAGE_HEADER_BYTES > end || bytes[p] !== COPY_DATA) return p;
      const next = p + 1 + view.getInt32(p + 1);
      if (next > end) return p;
      this.decodeAnyMessage(bytes, view, p + MESSAGE_HEADER_BYTES, next);
      p = next;
    }
  }

  /** Decodes tuples of the current window while it has room; returns at the first other message. */
  private decodeRunOfLastWindow(bytes: Uint8Array, view: DataView, start: number, end: number): number {
    const k = this.last;
    const id = this.ids[k]!;
    const columns = this.buffers.windows[k]!;
    const capacity = columns[0]!.length;
    const sizes = this.sizes;
    let p = start;
    while (p + MESSAGE_HEADER_BYTES <= end && bytes[p] === COPY_DATA) {
      const next = p + 1 + view.getInt32(p + 1);
      const q = p + MESSAGE_HEADER_BYTES;
      if (next > end || view.getInt16(q) !== TUPLE_FIELDS) break;
      const idLen = view.getInt32(q + 2);
      const i = sizes[k]!;
      if (i === capacity || !sameBytes(id, bytes, view, q + 6, idLen)) break;
      sizes[k] = i + 1;
      this.tuple(view, q + 6 + idLen, next, k, columns, i);
      p = next;
    }
    return p;
  }

  /** One message's payload, [q, next): the header and its tuple, the trailer, or a tuple of any window. */
  private decodeAnyMessage(bytes: Uint8Array, view: DataView, q: number, next: number): void {
    if (!this.headerSeen) {
      // The file header comes in front of the first tuple (or the trailer), in the same message.
      if (next - q < HEADER_BYTES) throw new Error('binary COPY: short header');
      q += HEADER_BYTES + view.getInt32(q + 15);
      this.headerSeen = true;
    }
    const fields = view.getInt16(q);
    if (fields < 0) return; // trailer
    if (fields !== TUPLE_FIELDS) throw new Error(`binary COPY: expected ${TUPLE_FIELDS} fields, got ${fields}`);
    const idLen = view.getInt32(q + 2);
    const k = this.windowOf(bytes, view, q + 6, idLen);
    this.last = k;
    const i = this.sizes[k]!++;
    let columns = this.buffers.windows[k]!;
    if (i === columns[0]!.length) columns = this.buffers.reserve(k, i + 1, i);
    this.tuple(view, q + 6 + idLen, next, k, columns, i);
  }

  /** The ts and the seven reals of a tuple, from `q` (after its vehicle id) to its message's end, as row `i` of window `k`. */
  private tuple(view: DataView, q: number, next: number, k: number, columns: Float64Array[], i: number): void {
    const micros = view.getInt32(q + 4) * TWO_POW_32 + view.getUint32(q + 8);
    const tsMs = Math.round(micros / 1000) + PG_EPOCH_MS;
    const times = columns[0]!;
    // A prefix is a slice of arrays handed out before, in order; the rows read follow it.
    if (i > 0 && tsMs < times[i - 1]!) this.unordered[k] = 1;
    times[i] = tsMs;
    q += 12;
    for (let c = 1; c < COLUMNS; c++) q = this.real(view, q, columns[c]!, i, c);
    if (q !== next) throw new Error('binary COPY: a tuple is longer or shorter than its message');
  }

  private real(view: DataView, p: number, target: Float64Array, i: number, column: number): number {
    const len = view.getInt32(p);
    if (len < 0) {
      target[i] = NaN;
      return p + 4;
    }
    const f = view.getFloat32(p + 4);
    if (f === this.lastIn[column]) target[i] = this.lastOut[column]!;
    else {
      const printed = float4AsPrinted(f, this.printed);
      this.lastIn[column] = f;
      this.lastOut[column] = printed;
      target[i] = printed;
    }
    return p + 4 + len;
  }

  /** Index of the window whose vehicle id is the `len` bytes at `p`. */
  private windowOf(bytes: Uint8Array, view: DataView, p: number, len: number): number {
    for (let k = 0; k < this.ids.length; k++) if (sameBytes(this.ids[k]!, bytes, view, p, len)) return k;
    throw new Error(
      `binary COPY: a row of vehicle ${Buffer.from(bytes.subarray(p, p + len)).toString('utf8')}, which no window asked for`,
    );
  }

  /** One set of arrays per window (views into the buffers), each ascending in time. */
  split(): AllSampleArrays[] {
    const out = Array.from(this.sizes, (n, k) => {
      const [ts, coolant, ambient, speedKph, rpm, barometricKpa, coolantLevelPct, coolantPressureKpa] =
        this.buffers.windows[k]!.map((column) => column.subarray(0, n)) as ReadingColumnArrays;
      const a: AllSampleArrays = {
        ts,
        coolant,
        ambient,
        speedKph,
        rpm,
        barometricKpa,
        coolantLevelPct,
        coolantPressureKpa,
      };
      return this.unordered[k] === 0 ? a : permute(a, ascendingOrder(a.ts));
    });
    this.buffers.trim(this.sizes);
    return out;
  }
}

/** A vehicle id as the decoder compares it: its bytes, and its first whole 4-byte words big-endian. */
export interface IdBytes {
  bytes: Buffer;
  words: Int32Array;
}

export function idBytes(bytes: Buffer): IdBytes {
  const words = new Int32Array(bytes.length >> 2);
  for (let j = 0; j < words.length; j++) words[j] = bytes.readInt32BE(4 * j);
  return { bytes, words };
}

/** Whether the `len` bytes at `p` are `id` (four at a time, then the rest). */
function sameBytes(id: IdBytes, bytes: Uint8Array, view: DataView, p: number, len: number): boolean {
  if (id.bytes.length !== len) return false;
  const words = id.words;
  for (let j = 0; j < words.length; j++) if (view.getInt32(p + 4 * j) !== words[j]) return false;
  for (let j = words.length * 4; j < len; j++) if (id.bytes[j] !== bytes[p + j]) return false;
  return true;
}
