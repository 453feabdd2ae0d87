import { CH_AMBIENT, CHANNEL_COUNT } from './bus-channels.js';
import { MAX_FRAME_BYTES } from './hex-bytes.js';
import { pgnOf } from './j1939-identifier.js';
import { decodeJ1939Parameters, J1939_FRAME_BYTES } from './j1939-parameters.js';
import { decodeObdResponse, type ObdDecodeResult } from './obd-service01.js';
import { VehicleSlots } from './vehicle-slots.js';

/**
 * Pre-slot length, ms. Frames are merged into one-second slots while a body streams in (the
 * vehicle's sample period is known only later, from the database); a vehicle's period is a
 * whole number of seconds, and merging one-second slots into period slots by the same rule gives
 * exactly what merging the frames would (each rule is a maximum, and a period slot is a union of
 * whole one-second slots). Memory: one record per vehicle-second of data, however dense the bus.
 */
export const PRE_SLOT_MS = 1000;

// Module-local copies of imported bindings used per frame: run through tsx (as the service is),
// each imported name is read through a getter, which cost 9 % of the decode loop (measured).
const AMBIENT_BIT = 1 << CH_AMBIENT;
const CHANNELS = CHANNEL_COUNT;
const MAX_BYTES = MAX_FRAME_BYTES;
const pgnOfId = pgnOf;
const decodeParameters = decodeJ1939Parameters;
const decodeObd = decodeObdResponse;

export interface FrameCollectorOptions {
  /** Plausible ambient air temperature range, °C: a decoded value outside it rejects the row. */
  ambientMinC: number;
  ambientMaxC: number;
}

/**
 * Decodes frames or responses of any vehicles and merges them into per-vehicle pre-slots.
 * Pure: no I/O. Counts what it ignored (unknown PGNs, PIDs it does not decode).
 */
export class FrameCollector {
  readonly vehicles = new Map<string, VehicleSlots>();
  /** Rows decoded into at least one channel. */
  decoded = 0;
  /** Rows of a PGN not decoded here (ignored, not rejected). */
  unknownPgns = 0;
  /** Rows whose parameters were all "error" / "not available". */
  notAvailable = 0;
  /** PIDs skipped in OBD-II responses. */
  ignoredPids = 0;

  private readonly values = new Float64Array(CHANNEL_COUNT);
  private readonly obd: ObdDecodeResult = { mask: 0, ignoredPids: 0, error: null };
  private lastId = '';
  private lastSlots: VehicleSlots | undefined;

  constructor(private readonly opts: FrameCollectorOptions) {}

  private slotsOf(vehicleId: string): VehicleSlots {
    if (vehicleId === this.lastId && this.lastSlots) return this.lastSlots;
    let s = this.vehicles.get(vehicleId);
    if (!s) {
      s = new VehicleSlots(PRE_SLOT_MS);
      this.vehicles.set(vehicleId, s);
    }
    this.lastId = vehicleId;
    this.lastSlots = s;
    return s;
  }

  private mergeValues(vehicleId: string, tsMs: number, mask: number): string | null {
    if ((mask & AMBIENT_BIT) !== 0) {
      const a = this.values[CH_AMBIENT]!;
      if (!(a >= this.opts.ambientMinC && a <= this.opts.ambientMaxC)) {
        return `ambient ${a} °C is outside the plausible range (${this.opts.ambientMinC} to ${this.opts.ambientMaxC} °C)`;
      }
    }
    if (mask === 0) {
      this.notAvailable++;
      return null;
    }
    this.decoded++;
    const slots = this.slotsOf(vehicleId);
    for (let ch = 0; ch < CHANNELS; ch++) if ((mask & (1 << ch)) !== 0) slots.merge(tsMs, ch, this.values[ch]!);
    return null;
  }

  /**
   * One J1939 frame: `data` holds `length` bytes. Returns the reason it is rejected, or null
   * (decoded, or ignored as an unknown PGN).
   * @example collector.j1939('NS-12', Date.parse('2026-11-30T06:10:00Z'), 0x18feee00, bytes, 8) // null
   */
  j1939(vehicleId: string, tsMs: number, canId: number, data: Uint8Array, length: number): string | null {
    const pgn = pgnOfId(canId);
    if (pgn < 0) return 'canId is not a 29-bit identifier (0 to 1FFFFFFF hex)';
    if (length > MAX_BYTES) return `data has ${length} bytes; a CAN frame carries at most ${MAX_BYTES}`;
    const mask = decodeParameters(pgn, data, length, this.values);
    if (mask === -1) {
      this.unknownPgns++;
      return null;
    }
    if (mask === -2) return `PGN ${pgn} is sent as ${J1939_FRAME_BYTES} data bytes, got ${length}`;
    return this.mergeValues(vehicleId, tsMs, mask);
  }

  /** One OBD-II service 01 response; returns the reason it is rejected, or null. */
  obdResponse(vehicleId: string, tsMs: number, data: Uint8Array, length: number): string | null {
    const r = decodeObd(data, length, this.values, this.obd);
    if (r.error) return r.error;
    this.ignoredPids += r.ignoredPids;
    return this.mergeValues(vehicleId, tsMs, r.mask);
  }
}
