import { sql } from 'kysely';
import type { AllSampleArrays, SampleArrays } from '../analysis/sample-arrays.js';
import type pg from 'pg';
import type { DatabaseHandle } from './database.js';
import {
  COLUMN_NAMES,
  idBytes,
  WindowBuffers,
  WindowsDecoder,
  type WindowRequest,
} from './pg-wire/binary-window-decoder.js';
import { copyOut } from './pg-wire/copy-out.js';
import { parseNumberList } from './number-list.js';

const MS_PER_S = 1000;

/** Column-wise text of one window: each aggregate is one comma-separated string. */
interface WindowText {
  n: number;
  ts: string | null;
  coolant: string | null;
  ambient: string | null;
  speed: string | null;
  rpm: string | null;
  baro: string | null;
  level: string | null;
  pressure: string | null;
}

/**
 * Reads several vehicles' readings, each in its [fromMs, toMs), as typed arrays ascending in
 * time, in the order asked: all in one binary COPY on a PostgreSQL server, one text aggregate
 * per vehicle on PGlite (which has no COPY TO STDOUT through its driver). Both give the numbers
 * Postgres prints (see float4AsPrinted). With `buffers`, a server read returns views into them,
 * valid until the next read with the same buffers.
 */
export async function readWindows(
  handle: DatabaseHandle,
  windows: readonly WindowRequest[],
  buffers?: WindowBuffers,
): Promise<AllSampleArrays[]> {
  if (handle.pool) return readWindowsByCopy(handle.pool, windows, buffers);
  const out: AllSampleArrays[] = [];
  for (const w of windows) {
    const read = await readWindowAsText(handle, w.vehicleId, w.fromMs, w.toMs);
    out.push(w.prefix ? concatArrays(w.prefix, read) : read);
  }
  return out;
}

function quoteLiteral(value: string): string {
  return `'${value.replace(/'/g, "''")}'`;
}

/**
 * Reads several vehicles' windows with one `COPY … TO STDOUT (FORMAT binary)` and decodes the
 * tuples straight into typed arrays, one set per window, in ascending time: no per-value text
 * formatting on the server and no parsing on the client (about 2× the rows/s of the text
 * aggregate). Readings arrive interleaved across vehicles, so a vehicle's window is spread over
 * thousands of heap pages that hold other vehicles' readings too; one statement for a whole batch
 * (a BitmapOr of the vehicles' index ranges) visits each page once instead of once per vehicle,
 * and leaves the rows in heap order, which is insertion order: no sort in Postgres, and one here
 * only for a window that late data left out of order. COPY takes no bind parameters, so the
 * values are inlined as quoted literals. With `buffers` (reused by the caller) the arrays are views
 * into them, valid until the next read with the same buffers.
 */
export async function readWindowsByCopy(
  pool: pg.Pool,
  windows: readonly WindowRequest[],
  buffers = new WindowBuffers(),
): Promise<AllSampleArrays[]> {
  if (windows.length === 0) return [];
  if (new Set(windows.map((w) => w.vehicleId)).size !== windows.length)
    throw new Error('readWindowsByCopy: one window per vehicle');
  const where = windows.map(
    (w) =>
      `(vehicle_id = ${quoteLiteral(w.vehicleId)} and ts >= ${quoteLiteral(new Date(w.fromMs).toISOString())}::timestamptz and ts < ${quoteLiteral(new Date(w.toMs).toISOString())}::timestamptz)`,
  );
  // No parallel workers: on a large readings table PostgreSQL plans a batch's BitmapOr as a
  // Parallel Bitmap Heap Scan with two workers, whose CPU was about 3× that of one backend
  // scanning alone (a round of 20 vehicle-weeks: ~0.35 s against ~0.13 s, measured), and whose
  // Gather interleaves the rows, so every window needed the sort here. SET LOCAL lasts for the
  // implicit transaction of this one query string.
  const text = `set local max_parallel_workers_per_gather = 0; copy (select vehicle_id, ts, coolant_c, ambient_c, speed_kph, rpm, barometric_kpa, coolant_level_pct, coolant_pressure_kpa from readings where ${where.join(' or ')}) to stdout (format binary)`;
  const decoder = new WindowsDecoder(
    windows.map((w) => idBytes(Buffer.from(w.vehicleId, 'utf8'))),
    buffers,
    windows.map((w) => w.prefix),
  );
  const client = await pool.connect();
  try {
    await copyOut(client, text, (bytes, view, start, end) => decoder.messages(bytes, view, start, end));
  } catch (err) {
    client.release(err instanceof Error ? err : true);
    throw err;
  }
  client.release();
  return decoder.split();
}
/** The rows of `prefix` (a channel it lacks: NaN), then those of `window`. */
function concatArrays(prefix: SampleArrays, window: AllSampleArrays): AllSampleArrays {
  const out = {} as AllSampleArrays;
  const n = prefix.ts.length;
  for (const c of COLUMN_NAMES) {
    const col = new Float64Array(n + window[c].length);
    const head = prefix[c];
    if (head) col.set(head);
    else col.fill(NaN, 0, n);
    col.set(window[c], n);
    out[c] = col;
  }
  return out;
}

/**
 * The portable window read. One row per reading as a JS object tops out near 400k rows/s; here Postgres aggregates the
 * whole window into one comma-separated string per column (over an index-ordered subquery, which
 * keeps the aggregate input in ts order) and `parseNumberList` turns each string into a
 * Float64Array. The same query runs on pg and PGlite. Timestamps travel as epoch seconds
 * (`date_part`, a float8; `extract` would compute a slower numeric) and are rounded to ms.
 */
export async function readWindowAsText(
  handle: DatabaseHandle,
  vehicleId: string,
  fromMs: number,
  toMs: number,
): Promise<AllSampleArrays> {
  const r = await sql<WindowText>`
    select count(*)::int as n,
           string_agg(date_part('epoch', ts)::text, ',') as ts,
           string_agg(coolant_c::text, ',') as coolant,
           string_agg(coalesce(ambient_c::text, ''), ',') as ambient,
           string_agg(coalesce(speed_kph::text, ''), ',') as speed,
           string_agg(coalesce(rpm::text, ''), ',') as rpm,
           string_agg(coalesce(barometric_kpa::text, ''), ',') as baro,
           string_agg(coalesce(coolant_level_pct::text, ''), ',') as level,
           string_agg(coalesce(coolant_pressure_kpa::text, ''), ',') as pressure
    from (
      select ts, coolant_c, ambient_c, speed_kph, rpm, barometric_kpa, coolant_level_pct, coolant_pressure_kpa from readings
      where vehicle_id = ${vehicleId} and ts >= to_timestamp(${fromMs}::float8 / 1000) and ts < to_timestamp(${toMs}::float8 / 1000)
      order by ts
    ) w`.execute(handle.db);
  const row = r.rows[0];
  const n = row?.n ?? 0;
  const out: AllSampleArrays = {
    ts: new Float64Array(n),
    coolant: new Float64Array(n),
    ambient: new Float64Array(n),
    speedKph: new Float64Array(n),
    rpm: new Float64Array(n),
    barometricKpa: new Float64Array(n),
    coolantLevelPct: new Float64Array(n),
    coolantPressureKpa: new Float64Array(n),
  };
  if (!row || n === 0) return out;
  const columns: Array<[string | null, Float64Array]> = [
    [row.ts, out.ts],
    [row.coolant, out.coolant],
    [row.ambient, out.ambient],
    [row.speed, out.speedKph],
    [row.rpm, out.rpm],
    [row.baro, out.barometricKpa],
    [row.level, out.coolantLevelPct],
    [row.pressure, out.coolantPressureKpa],
  ];
  for (const [text, target] of columns) {
    // One NULL value aggregates to '', which parses as no value at all.
    if (n === 1 && !text) target[0] = NaN;
    const got = n === 1 && !text ? 1 : parseNumberList(text ?? '', target, 0);
    if (got !== n) throw new Error(`reading window of ${vehicleId}: expected ${n} values, parsed ${got}`);
  }
  const ts = out.ts;
  for (let i = 0; i < n; i++) ts[i] = Math.round(ts[i]! * MS_PER_S);
  return out;
}

/** Readings that bound a window starting at `fromMs`: the latest one in it and the last one before it, ms. */
export interface WindowBounds {
  lastMs: number | undefined;
  beforeMs: number | undefined;
}

/** The bounds of each window (two index probes each, one statement for all), in the order given. */
export async function windowBounds(
  handle: DatabaseHandle,
  windows: ReadonlyArray<{ vehicleId: string; fromMs: number }>,
): Promise<WindowBounds[]> {
  const r = await sql<{ last_ts: Date | null; before_ts: Date | null }>`
    select (select ts from readings r where r.vehicle_id = l.vehicle_id and r.ts >= to_timestamp(l.from_ms / 1000) order by ts desc limit 1) as last_ts,
           (select ts from readings r where r.vehicle_id = l.vehicle_id and r.ts < to_timestamp(l.from_ms / 1000) order by ts desc limit 1) as before_ts
    from unnest(${windows.map((w) => w.vehicleId)}::text[], ${windows.map((w) => w.fromMs)}::float8[]) with ordinality as l(vehicle_id, from_ms, o)
    order by l.o`.execute(handle.db);
  return r.rows.map((x) => ({ lastMs: x.last_ts?.getTime(), beforeMs: x.before_ts?.getTime() }));
}
