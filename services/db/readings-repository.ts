import { sql } from 'kysely';
import type { DatabaseHandle } from './database.js';
import { autocommitConnection, inTransaction, type IngestConnection } from './ingest-connection.js';
import { monthIndexOf, type PartitionKeeper } from './partitions.js';
import { encodeReadingsCopy } from './pg-wire/binary-copy-in.js';
import type { ReadingChunk } from './reading-chunk.js';
import { toNumber } from './schema.js';
import { TransientConflictError, withTransientRetry } from './transient-conflict.js';

/** The readings columns every insert names, in the order of `unnestRows` and the binary COPY. */
export const READINGS_INSERT_COLUMNS = sql.raw(
  '(vehicle_id, ts, coolant_c, ambient_c, speed_kph, rpm, barometric_kpa, coolant_level_pct, coolant_pressure_kpa)',
);

export interface IngestAuditInput {
  keyId: string;
  contentType: string;
  bodyBytes: () => number;
  rejected: () => number;
}

export interface IngestResult {
  accepted: number;
  duplicates: number;
  staged: number;
  vehicles: number;
}

const UNIQUE_VIOLATION = '23505';

/** Runs of the closing statement when concurrent requests keep registering this body's new vehicles. */
const MAX_REGISTRATION_ATTEMPTS = 3;

/** Per-vehicle counts and earliest ts of a chunk whose every row was inserted. */
function insertedFromChunk(chunk: ReadingChunk): Array<{ vehicle_id: string; n: number; first_ts: Date }> {
  const byVehicle = new Map<string, { n: number; first: number }>();
  for (let i = 0; i < chunk.length; i++) {
    const id = chunk.vehicleIds[i]!;
    const t = chunk.tsMs[i]!;
    const e = byVehicle.get(id);
    if (e) {
      e.n++;
      if (t < e.first) e.first = t;
    } else byVehicle.set(id, { n: 1, first: t });
  }
  return [...byVehicle].map(([vehicle_id, e]) => ({ vehicle_id, n: e.n, first_ts: new Date(e.first) }));
}

/** The batch names vehicles registered to another fleet: nothing of it is stored. */
export class ForeignVehiclesError extends Error {
  constructor(readonly vehicleIds: string[]) {
    super(`vehicles registered to another fleet: ${vehicleIds.join(', ')}`);
    this.name = 'ForeignVehiclesError';
  }
}

// Arrays go to Postgres as one text literal per column: building the literal ourselves is several
// times faster than letting the driver serialise a JS array element by element.
function floatArrayLiteral(values: Float64Array | undefined, length: number): string {
  if (!values) return `{${new Array<string>(length).fill('NULL').join(',')}}`;
  const parts = new Array<string>(length);
  for (let i = 0; i < length; i++) {
    const v = values[i]!;
    parts[i] = Number.isNaN(v) ? 'NULL' : String(v);
  }
  return `{${parts.join(',')}}`;
}

/** Vehicle ids are validated against VEHICLE_ID_PATTERN (no quotes, backslashes or commas). */
function textArrayLiteral(values: string[], length: number): string {
  return `{"${values.slice(0, length).join('","')}"}`;
}

/** Per vehicle: rows inserted and the earliest inserted ts. */
type Inserted = Array<{ vehicle_id: string; n: string | number; first_ts: Date }>;

/** What one attempt at storing a request has inserted so far. */
class StoredSoFar {
  staged = 0;
  accepted = 0;
  readonly vehicles = new Set<string>();
  readonly dirtyFrom = new Map<string, number>();

  /** Counts a chunk handed to the insert. */
  stage(chunk: ReadingChunk): void {
    this.staged += chunk.length;
    for (let i = 0; i < chunk.length; i++) this.vehicles.add(chunk.vehicleIds[i]!);
  }

  /** Counts what the insert reports as new. */
  add(rows: Inserted): void {
    for (const r of rows) {
      this.accepted += toNumber(r.n);
      const first = r.first_ts.getTime();
      const prev = this.dirtyFrom.get(r.vehicle_id);
      if (prev === undefined || first < prev) this.dirtyFrom.set(r.vehicle_id, first);
    }
  }
}

function isUniqueViolation(err: unknown): boolean {
  return (err as { code?: unknown }).code === UNIQUE_VIOLATION;
}

export function createReadingsRepository(handle: DatabaseHandle, partitions: PartitionKeeper) {
  const { db } = handle;

  const autocommit = autocommitConnection(handle);
  const transaction = <T>(fn: (conn: IngestConnection) => Promise<T>) => inTransaction(handle, fn);

  /**
   * The chunk as rows for INSERT … SELECT. Timestamps go as ms offsets from the first one: a
   * 13-digit epoch value costs a fresh number-to-text conversion each (measured 0.26 ms per 1,000),
   * small offsets repeat and come from V8's number-string cache (0.03 ms).
   */
  function unnestRows(chunk: ReadingChunk) {
    const n = chunk.length;
    const base = n > 0 ? chunk.tsMs[0]! : 0;
    const offsets = new Float64Array(n);
    for (let i = 0; i < n; i++) offsets[i] = chunk.tsMs[i]! - base;
    return sql`
      select v, to_timestamp((${base}::float8 + t) / 1000.0), c, a, s, r, b, l, p
      from unnest(${textArrayLiteral(chunk.vehicleIds, n)}::text[], ${floatArrayLiteral(offsets, n)}::float8[],
                  ${floatArrayLiteral(chunk.coolantC, n)}::real[], ${floatArrayLiteral(chunk.ambientC, n)}::real[],
                  ${floatArrayLiteral(chunk.speedKph, n)}::real[], ${floatArrayLiteral(chunk.rpm, n)}::real[],
                  ${floatArrayLiteral(chunk.barometricKpa, n)}::real[], ${floatArrayLiteral(chunk.coolantLevelPct, n)}::real[],
                  ${floatArrayLiteral(chunk.coolantPressureKpa, n)}::real[]) as u(v, t, c, a, s, r, b, l, p)`;
  }

  /**
   * The fast insert of a whole chunk, which fails with 23505 if any of its readings is already
   * stored: binary COPY on a PostgreSQL server (measured: 3.0 ms of backend CPU per 1,000 rows,
   * against 3.5–4.8 ms for INSERT … SELECT FROM unnest() and 6.4 ms for the ON CONFLICT …
   * RETURNING below), the plain INSERT on PGlite.
   */
  async function insertAll(conn: IngestConnection, chunk: ReadingChunk): Promise<Inserted> {
    if (conn.copyIn) await conn.copyIn(encodeReadingsCopy(chunk));
    else await conn.run(sql`insert into readings ${READINGS_INSERT_COLUMNS} ${unnestRows(chunk)}`);
    return insertedFromChunk(chunk);
  }

  /** The careful insert: skips readings already stored and reports what was new. */
  function insertNew(conn: IngestConnection, chunk: ReadingChunk): Promise<Inserted> {
    return conn.run(sql<Inserted[number]>`
      with ins as (
        insert into readings ${READINGS_INSERT_COLUMNS} ${unnestRows(chunk)}
        on conflict do nothing
        returning vehicle_id, ts
      )
      select vehicle_id, count(*) as n, min(ts) as first_ts from ins group by vehicle_id`);
  }

  /** Creates the partitions a chunk needs (months of its readings). */
  async function ensurePartitions(conn: IngestConnection, chunk: ReadingChunk): Promise<void> {
    const months = new Set<number>();
    let monthStart = Infinity;
    let monthEnd = -Infinity;
    for (let i = 0; i < chunk.length; i++) {
      const t = chunk.tsMs[i]!;
      if (t < monthStart || t >= monthEnd) {
        const m = monthIndexOf(t);
        months.add(m);
        monthStart = Date.UTC(1970, m, 1);
        monthEnd = Date.UTC(1970, m + 1, 1);
      }
    }
    // Partitions are attached on the handle's schema-change connection and committed at once
    // (attaching does not conflict with this transaction's inserts, and that connection is not
    // one of the pool's, so waiting for it cannot starve the pool); PGlite has one connection, so
    // there it happens inside this transaction.
    await partitions.ensure(conn.partitionTarget, months);
  }

  /**
   * One statement for the rest of a request (a round trip each cost as much as 1,000 rows),
   * prepared once per connection (measured: 0.65 against 1.25 ms of backend CPU when parsed and
   * planned every time):
   * refuse the batch if it names another fleet's vehicle, else register unknown vehicles, mark
   * vehicles with new rows for analysis (sorted ids: concurrent requests lock queue rows in the
   * same order) and write the audit row.
   *
   * Who owns a vehicle is decided inside the statement: a vehicle absent from its snapshot is
   * registered with `ON CONFLICT DO NOTHING`, which waits for a concurrent transaction registering
   * the same id; if that one won (`raced`), this statement writes nothing and is run again, with
   * a fresh snapshot that sees the winner. (Before, the readings of two fleets racing for a new id
   * both ended up under the winner: 103 of 150 trials.)
   */
  async function finish(
    conn: IngestConnection,
    fleetId: string,
    stored: StoredSoFar,
    audit: IngestAuditInput,
    started: number,
    alsoInsert?: ReadingChunk,
  ): Promise<void> {
    const ids = [...stored.vehicles].sort();
    const queued = [...stored.dirtyFrom.keys()].sort();
    const firsts = queued.map((id) => stored.dirtyFrom.get(id)!);
    for (let attempt = 1; ; attempt++) {
      const [outcome] = await conn.run(
        sql<{ foreign_ids: string[] | null; raced: number }>`
        with known as (
          select vehicle_id, fleet_id from vehicles where vehicle_id = any(${ids}::text[])
        ), foreign_vehicles as (
          select vehicle_id from known where fleet_id <> ${fleetId}
        ), registered as (
          insert into vehicles (vehicle_id, fleet_id)
          select v, ${fleetId} from unnest(${ids}::text[]) as v
          where not exists (select 1 from foreign_vehicles) and v not in (select vehicle_id from known)
          on conflict (vehicle_id) do nothing
          returning vehicle_id
        ), raced as (
          select v from unnest(${ids}::text[]) as v
          where v not in (select vehicle_id from known) and v not in (select vehicle_id from registered)
        ), verdict as (
          select not exists (select 1 from foreign_vehicles) and not exists (select 1 from raced) as ok
        ), marked as (
          insert into analysis_queue (vehicle_id, fleet_id, dirty_from)
          select v, ${fleetId}, to_timestamp(t / 1000.0) from unnest(${queued}::text[], ${firsts}::float8[]) as u(v, t)
          where (select ok from verdict)
          on conflict (vehicle_id) do update
            set dirty_from = least(analysis_queue.dirty_from, excluded.dirty_from),
                generation = analysis_queue.generation + 1,
                enqueued_at = now()
        ), audited as (
          insert into ingest_audit (key_id, fleet_id, content_type, body_bytes, accepted, duplicates, rejected, vehicles, duration_ms)
          select ${audit.keyId}, ${fleetId}, ${audit.contentType}, ${audit.bodyBytes()}, ${stored.accepted}, ${stored.staged - stored.accepted},
                 ${audit.rejected()}, ${stored.vehicles.size}, ${Date.now() - started}
          where (select ok from verdict)
        )${
          alsoInsert
            ? sql`, stored as (
          insert into readings ${READINGS_INSERT_COLUMNS} ${unnestRows(alsoInsert)}
          where (select ok from verdict)
        )`
            : sql``
        }
        select (select array_agg(vehicle_id order by vehicle_id) from (select vehicle_id from foreign_vehicles order by vehicle_id limit 10) f) as foreign_ids,
               (select count(*)::int from raced) as raced`,
        alsoInsert ? 'thermocline_ingest_one_chunk' : 'thermocline_ingest_finish',
      );
      const foreign = outcome?.foreign_ids ?? [];
      if (foreign.length > 0) throw new ForeignVehiclesError(foreign);
      if (!outcome || outcome.raced === 0) return;
      // The second run sees the winner's committed row; a third is only for a new race on another id.
      if (attempt >= MAX_REGISTRATION_ATTEMPTS)
        throw new TransientConflictError(
          'a vehicle of this body was being registered by another request at the same time',
        );
    }
  }

  /**
   * A body of one chunk (a gateway's batch, up to INSERT_CHUNK_ROWS readings) is stored by one
   * prepared statement, readings and the closing work together, with no transaction around it
   * (measured against BEGIN, binary COPY, closing statement, COMMIT: the same backend CPU and
   * 1.4 ms less in the service per 1,000 readings). A plain INSERT fails on a reading already
   * stored; the chunk, still in memory, is then stored the careful way in a transaction. The
   * chunk is in memory, so a deadlock with a concurrent request is retried whole.
   */
  function ingestOneChunk(
    fleetId: string,
    chunk: ReadingChunk | undefined,
    audit: IngestAuditInput,
    started: number,
  ): Promise<StoredSoFar> {
    return withTransientRetry(async () => {
      const stored = new StoredSoFar();
      if (!chunk) {
        await finish(autocommit, fleetId, stored, audit, started);
        return stored;
      }
      await ensurePartitions(autocommit, chunk);
      stored.stage(chunk);
      stored.add(insertedFromChunk(chunk));
      try {
        await finish(autocommit, fleetId, stored, audit, started, chunk);
        return stored;
      } catch (err) {
        if (!isUniqueViolation(err)) throw err;
      }
      return transaction(async (conn) => {
        const careful = new StoredSoFar();
        careful.stage(chunk);
        careful.add(await insertNew(conn, chunk));
        await finish(conn, fleetId, careful, audit, started);
        return careful;
      });
    });
  }

  /**
   * Runs `fn` inside a savepoint: on failure the transaction is rolled back to it and stays
   * usable (a duplicate switches to the careful insert, a deadlock is retried). If even the
   * rollback fails (the connection is gone), the original error is what the caller sees.
   */
  async function inSavepoint<T>(conn: IngestConnection, fn: () => Promise<T>): Promise<T> {
    await conn.run(sql`savepoint ingest_chunk`);
    try {
      const out = await fn();
      await conn.run(sql`release savepoint ingest_chunk`);
      return out;
    } catch (err) {
      await conn.run(sql`rollback to savepoint ingest_chunk`).catch(() => undefined);
      throw err;
    }
  }

  /**
   * A longer body, chunk by chunk as it streams in: while one chunk is inserted the next is
   * parsed. Each chunk runs in a savepoint: the fast insert first; a duplicate rolls back to the
   * savepoint and that chunk and every later one go the careful way (a retried body); a deadlock
   * with a concurrent request rolls back the chunk and runs it again, a few times at most (the
   * body is not held, so the whole cannot be retried: if the conflict persists the request fails
   * with nothing stored, and the client is told to retry later).
   */
  async function ingestStream(
    fleetId: string,
    chunks: AsyncIterable<ReadingChunk>,
    audit: IngestAuditInput,
    started: number,
  ): Promise<StoredSoFar> {
    return transaction(async (conn) => {
      const stored = new StoredSoFar();
      let careful = false;
      const store = (chunk: ReadingChunk): Promise<Inserted> =>
        withTransientRetry(async () => {
          if (!careful) {
            try {
              return await inSavepoint(conn, () => insertAll(conn, chunk));
            } catch (err) {
              if (!isUniqueViolation(err)) throw err;
              careful = true;
            }
          }
          return inSavepoint(conn, () => insertNew(conn, chunk));
        });
      let pending: Promise<void> | undefined;
      for await (const chunk of chunks) {
        await pending;
        await ensurePartitions(conn, chunk);
        stored.stage(chunk);
        pending = store(chunk).then((rows) => stored.add(rows));
        // Keep a failed insert from being an unhandled rejection while the next chunk is parsed.
        pending.catch(() => undefined);
      }
      await pending;
      await withTransientRetry(() => inSavepoint(conn, () => finish(conn, fleetId, stored, audit, started)));
      return stored;
    });
  }

  return {
    /**
     * Stores a stream of validated readings for one fleet in one transaction; a reading already
     * stored (same vehicle and ts) is a duplicate, never a second row. Registers unknown vehicles
     * to the fleet, marks vehicles with new rows for analysis (earliest new ts) and writes the
     * audit row. Resolves only after COMMIT; on any error nothing is stored.
     */
    async ingest(fleetId: string, chunks: AsyncIterable<ReadingChunk>, audit: IngestAuditInput): Promise<IngestResult> {
      const started = Date.now();
      // Look two chunks ahead: a body of one chunk is stored without savepoints.
      const it = chunks[Symbol.asyncIterator]();
      const nonEmpty = async (): Promise<ReadingChunk | undefined> => {
        for (;;) {
          const next = await it.next();
          if (next.done) return undefined;
          if (next.value.length > 0) return next.value;
        }
      };
      const first = await nonEmpty();
      const second = first ? await nonEmpty() : undefined;
      async function* all(): AsyncGenerator<ReadingChunk> {
        yield first!;
        yield second!;
        for (let next = await nonEmpty(); next; next = await nonEmpty()) yield next;
      }
      const stored = second
        ? await ingestStream(fleetId, all(), audit, started)
        : await ingestOneChunk(fleetId, first, audit, started);
      return {
        accepted: stored.accepted,
        duplicates: stored.staged - stored.accepted,
        staged: stored.staged,
        vehicles: stored.vehicles.size,
      };
    },

    /** Number of stored readings of a vehicle (tests, bench and the load check). */
    async count(vehicleIds?: string[]): Promise<number> {
      const q = vehicleIds
        ? sql<{ n: string | number }>`select count(*) as n from readings where vehicle_id = any(${vehicleIds}::text[])`
        : sql<{ n: string | number }>`select count(*) as n from readings`;
      return toNumber((await q.execute(db)).rows[0]?.n);
    },
  };
}

export type ReadingsRepository = ReturnType<typeof createReadingsRepository>;
