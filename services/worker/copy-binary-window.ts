import type pg from 'pg';
import { to as copyTo } from 'pg-copy-streams';
import type { SampleArrays } from '../analysis/sample-arrays.js';

/** Postgres binary COPY: 11-byte signature, 4-byte flags, 4-byte header extension length. */
const HEADER_BYTES = 19;
/** timestamptz counts microseconds from 2000-01-01T00:00:00Z. */
const PG_EPOCH_MS = 946_684_800_000;
const TWO_POW_32 = 4_294_967_296;

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

function quoteLiteral(value: string): string {
  return `'${value.replace(/'/g, "''")}'`;
}

/**
 * Reads a vehicle's readings in [fromMs, toMs) with `COPY … TO STDOUT (FORMAT binary)` on a pg
 * client and decodes the tuples straight into typed arrays: no per-value text formatting on the
 * server and no parsing on the client (measured about 2× the rows/s of the text aggregate).
 * COPY takes no bind parameters, so the values are inlined as quoted literals.
 */
export async function readWindowByCopy(pool: pg.Pool, vehicleId: string, fromMs: number, toMs: number): Promise<SampleArrays> {
  const from = new Date(fromMs).toISOString();
  const to = new Date(toMs).toISOString();
  const text = `copy (select ts, coolant_c, ambient_c, speed_kph, rpm from readings
    where vehicle_id = ${quoteLiteral(vehicleId)} and ts >= ${quoteLiteral(from)}::timestamptz and ts < ${quoteLiteral(to)}::timestamptz
    order by ts) to stdout (format binary)`;
  const client = await pool.connect();
  const chunks: Buffer[] = [];
  try {
    for await (const chunk of client.query(copyTo(text))) chunks.push(chunk as Buffer);
  } catch (err) {
    client.release(err instanceof Error ? err : true);
    throw err;
  }
  client.release();
  return decodeBinaryWindow(Buffer.concat(chunks));
}

/** Decodes binary COPY tuples (ts timestamptz, then four real columns, nullable) into arrays. */
export function decodeBinaryWindow(buf: Buffer): SampleArrays {
  // A DataView over the bytes reads big-endian words inline (Buffer#readInt32BE and friends
  // bounds-check each call); the row count comes from a first pass over the field lengths only.
  const view = new DataView(buf.buffer, buf.byteOffset, buf.byteLength);
  const end = buf.byteLength;
  let p = HEADER_BYTES + (end >= HEADER_BYTES ? view.getInt32(15) : 0);
  const start = p;
  let n = 0;
  while (p + 2 <= end) {
    const fields = view.getInt16(p);
    p += 2;
    if (fields < 0) break;
    for (let j = 0; j < fields; j++) {
      const len = view.getInt32(p);
      p += 4 + (len > 0 ? len : 0);
    }
    n++;
  }
  const out: SampleArrays = {
    ts: new Float64Array(n), coolant: new Float64Array(n), ambient: new Float64Array(n), speedKph: new Float64Array(n), rpm: new Float64Array(n),
  };
  const reals = [out.coolant, out.ambient, out.speedKph, out.rpm];
  const printed = new Map<number, number>();
  p = start;
  for (let i = 0; i < n; i++) {
    const fields = view.getInt16(p);
    p += 2 + 4;
    const micros = view.getInt32(p) * TWO_POW_32 + view.getUint32(p + 4);
    out.ts[i] = Math.round(micros / 1000) + PG_EPOCH_MS;
    p += 8;
    for (let j = 1; j < fields; j++) {
      const len = view.getInt32(p);
      p += 4;
      const target = reals[j - 1]!;
      if (len < 0) target[i] = NaN;
      else {
        target[i] = float4AsPrinted(view.getFloat32(p), printed);
        p += len;
      }
    }
  }
  return out;
}
