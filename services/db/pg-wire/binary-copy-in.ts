import type { ReadingChunk } from '../reading-chunk.js';
import { COPY_SIGNATURE, HEADER_BYTES, PG_EPOCH_MS, TWO_POW_32 } from './binary-copy-format.js';

const COLUMNS = 9;
/** Per row: field count, then each field's length; ts is 8 bytes, the seven channels 4 bytes each (float4). */
const FIXED_ROW_BYTES = 2 + 4 + (4 + 8) + 7 * (4 + 4);

/** The column list the encoded data is for: `COPY readings ${READINGS_COPY_COLUMNS} FROM STDIN (FORMAT binary)`. */
export const READINGS_COPY_COLUMNS =
  '(vehicle_id, ts, coolant_c, ambient_c, speed_kph, rpm, barometric_kpa, coolant_level_pct, coolant_pressure_kpa)';

function writeFloat4OrNull(buf: Buffer, offset: number, value: number): number {
  if (Number.isNaN(value)) {
    buf.writeInt32BE(-1, offset);
    return offset + 4;
  }
  buf.writeInt32BE(4, offset);
  buf.writeFloatBE(value, offset + 4);
  return offset + 8;
}

/**
 * Encodes a chunk as PostgreSQL binary COPY data (`FORMAT binary`) for the columns
 * `READINGS_COPY_COLUMNS`: no number or date is formatted as text here and none is parsed by
 * the server. A NaN channel is NULL. Vehicle ids are ASCII (VEHICLE_ID_PATTERN); `tsMs` may
 * carry fractions of a millisecond down to the microsecond, as timestamptz does.
 *
 * The channels are rounded to float4 here (Math.fround) instead of by the server from decimal
 * text; ingest already rounds them to 1e-6 of the unit, and for such values of the channels'
 * size the two roundings agree.
 */
export function encodeReadingsCopy(chunk: ReadingChunk): Buffer {
  const n = chunk.length;
  let idBytes = 0;
  for (let i = 0; i < n; i++) idBytes += chunk.vehicleIds[i]!.length;
  const buf = Buffer.allocUnsafe(HEADER_BYTES + n * FIXED_ROW_BYTES + idBytes + 2);
  COPY_SIGNATURE.copy(buf, 0);
  buf.writeInt32BE(0, 11);
  buf.writeInt32BE(0, 15);
  let o = HEADER_BYTES;
  for (let i = 0; i < n; i++) {
    buf.writeInt16BE(COLUMNS, o);
    const id = chunk.vehicleIds[i]!;
    buf.writeInt32BE(id.length, o + 2);
    o += 6 + buf.write(id, o + 6, 'latin1');
    // int64 microseconds as two 32-bit halves (exact below 2^53, i.e. for any ts we accept).
    const us = Math.round((chunk.tsMs[i]! - PG_EPOCH_MS) * 1000);
    const high = Math.floor(us / TWO_POW_32);
    buf.writeInt32BE(8, o);
    buf.writeInt32BE(high, o + 4);
    buf.writeUInt32BE(us - high * TWO_POW_32, o + 8);
    o += 12;
    o = writeFloat4OrNull(buf, o, chunk.coolantC[i]!);
    o = writeFloat4OrNull(buf, o, chunk.ambientC[i]!);
    o = writeFloat4OrNull(buf, o, chunk.speedKph[i]!);
    o = writeFloat4OrNull(buf, o, chunk.rpm[i]!);
    o = writeFloat4OrNull(buf, o, chunk.barometricKpa ? chunk.barometricKpa[i]! : NaN);
    o = writeFloat4OrNull(buf, o, chunk.coolantLevelPct ? chunk.coolantLevelPct[i]! : NaN);
    o = writeFloat4OrNull(buf, o, chunk.coolantPressureKpa ? chunk.coolantPressureKpa[i]! : NaN);
  }
  buf.writeInt16BE(-1, o);
  return buf.subarray(0, o + 2);
}
