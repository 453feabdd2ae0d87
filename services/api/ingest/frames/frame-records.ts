import { FrameCollector } from '../../../bus-decoding/frame-collector.js';
import { MAX_OBD_RESPONSE_BYTES } from '../../../bus-decoding/obd-service01.js';
import { MAX_FRAME_BYTES, parseHexBytes, parseHexNumber } from '../../../bus-decoding/hex-bytes.js';
import type { RecordShape } from '../body-records.js';
import { MALFORMED, MALFORMED_CSV } from '../malformed-record.js';
import {
  AMBIENT_MAX_C,
  AMBIENT_MIN_C,
  EARLIEST_TS_MS,
  MAX_FUTURE_SKEW_MS,
  parseTimestamp,
  VEHICLE_ID_PATTERN,
} from '../validate-reading.js';
import { DAY_MS } from '../../../time/durations.js';

export type BusProtocol = 'j1939' | 'obd';

/** Body shapes of the two frame endpoints: the JSON array's key and the CSV columns. */
export const FRAME_SHAPES: Record<BusProtocol, RecordShape> = {
  j1939: {
    arrayKey: 'frames',
    csvColumns: ['vehicleId', 'ts', 'canId', 'data'],
    csvRequired: ['vehicleId', 'ts', 'canId', 'data'],
  },
  obd: { arrayKey: 'responses', csvColumns: ['vehicleId', 'ts', 'data'], csvRequired: ['vehicleId', 'ts', 'data'] },
};

// Module-local copies of imported functions called per row (tsx reads imported names through getters).
const parseTs = parseTimestamp;
const parseHex = parseHexBytes;
const parseId = parseHexNumber;
/** Longest hex text of a data field we look at, characters ("0x41 0x05 …": five a byte). */
const MAX_DATA_CHARS = 5 * MAX_OBD_RESPONSE_BYTES;

/**
 * Checks rows of a frame body and feeds the valid ones to a FrameCollector. A row is rejected
 * (with its reason) when it is malformed: no vehicle id or timestamp, an identifier that is not
 * 29-bit hex, a data field that is not hex or has the wrong length. A frame of a PGN not decoded
 * here is ignored and counted, not rejected.
 */
export class FrameRecords {
  readonly collector = new FrameCollector({ ambientMinC: AMBIENT_MIN_C, ambientMaxC: AMBIENT_MAX_C });
  private readonly bytes: Uint8Array;
  private lastVehicleId = '';
  private readonly earliestMs: number;
  private readonly oldestMs: number;
  private readonly latestMs: number;

  constructor(
    readonly protocol: BusProtocol,
    nowMs: number,
    private readonly maxAgeDays: number,
  ) {
    // One byte more than a J1939 frame may have, so the collector can say a data field is too long.
    this.bytes = new Uint8Array(protocol === 'obd' ? MAX_OBD_RESPONSE_BYTES : MAX_FRAME_BYTES + 1);
    this.earliestMs = EARLIEST_TS_MS;
    this.oldestMs = nowMs - maxAgeDays * DAY_MS;
    this.latestMs = nowMs + MAX_FUTURE_SKEW_MS;
  }

  /**
   * One raw row; returns the reason it is rejected, or null.
   * @example records.add({ vehicleId: 'NS-12', ts: '2026-11-30T06:10:00Z', canId: '18FEEE00', data: '7BFFFFFFFFFFFFFF' }) // null
   */
  add(raw: unknown): string | null {
    if (raw === MALFORMED) return 'not valid JSON';
    if (raw === MALFORMED_CSV)
      return 'the CSV row does not have the same number of fields as the header (or has an unclosed quote)';
    if (typeof raw !== 'object' || raw === null || Array.isArray(raw))
      return this.protocol === 'j1939' ? 'a frame must be a JSON object' : 'a response must be a JSON object';
    const r = raw as Record<string, unknown>;
    const vehicleId = r.vehicleId;
    if (vehicleId === undefined || vehicleId === null || vehicleId === '') return 'vehicleId is missing';
    // A bus dump is runs of one vehicle's frames: the pattern is tested once per run.
    if (vehicleId !== this.lastVehicleId) {
      if (typeof vehicleId !== 'string' || !VEHICLE_ID_PATTERN.test(vehicleId)) {
        return 'vehicleId must be 1–64 letters, digits, "_", ".", ":" or "-", starting with a letter or digit';
      }
      this.lastVehicleId = vehicleId;
    }
    if (r.ts === undefined || r.ts === null || r.ts === '') return 'ts is missing';
    const tsMs = parseTs(r.ts);
    if (Number.isNaN(tsMs)) return 'ts is neither an RFC 3339 date-time with a time zone nor epoch milliseconds';
    if (tsMs < this.earliestMs) return 'ts is before 2000-01-01 (gateway clock not set?)';
    if (tsMs < this.oldestMs) return `ts is more than ${this.maxAgeDays} days old (the service's INGEST_MAX_AGE_DAYS)`;
    if (tsMs > this.latestMs) return 'ts is more than 5 minutes in the future (gateway clock ahead?)';

    const data = r.data;
    if (typeof data !== 'string' || data.length === 0)
      return 'data is missing: the data bytes as hex, e.g. "7B FF FF FF FF FF FF FF"';
    const n = data.length > MAX_DATA_CHARS ? -2 : parseHex(data, this.bytes);
    if (n === 0) return 'data is missing: the data bytes as hex, e.g. "7B FF FF FF FF FF FF FF"';
    if (n === -1) return 'data is not hex bytes (two hex digits a byte, optionally separated by spaces)';
    if (n === -2)
      return `data has more than ${this.protocol === 'obd' ? MAX_OBD_RESPONSE_BYTES : MAX_FRAME_BYTES} bytes`;

    if (this.protocol === 'obd') return this.collector.obdResponse(vehicleId, tsMs, this.bytes, n);
    const canId = typeof r.canId === 'string' ? parseId(r.canId) : typeof r.canId === 'number' ? r.canId : NaN;
    if (r.canId === undefined || r.canId === null || r.canId === '')
      return 'canId is missing: the 29-bit identifier as hex, e.g. "18FEEE00"';
    if (Number.isNaN(canId)) return 'canId is not hex (up to 8 digits, e.g. "18FEEE00" or "0x18FEEE00")';
    return this.collector.j1939(vehicleId, tsMs, canId, this.bytes, n);
  }
}
