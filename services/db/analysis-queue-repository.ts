import { sql, type Kysely, type RawBuilder } from 'kysely';
import type { Database } from './schema.js';

/** One leased vehicle: analyse readings from `windowFromMs` on, then `finish` or `fail`. */
export interface Lease {
  vehicleId: string;
  fleetId: string;
  /** Earliest reading not yet analysed (or re-delivered late), epoch ms. */
  windowFromMs: number;
  /** Queue generation at lease time: finishing removes the row only if it is unchanged. */
  generation: string;
  /** Attempts including this one. */
  attempts: number;
}

export interface LeaseOptions {
  /** Only this fleet's vehicles (explicit analysis runs). */
  fleetId?: string;
  /** Also take vehicles still backing off after a failure (explicit analysis runs). */
  ignoreBackoff?: boolean;
}

export interface QueueCounts {
  /** Rows waiting to be leased now. */
  ready: number;
  /** Rows under a live lease. */
  leased: number;
  /** Rows backing off after a failure. */
  backingOff: number;
}

/** First retry after a failure, ms; doubles per attempt up to BACKOFF_MAX_MS. */
export const BACKOFF_BASE_MS = 5_000;
export const BACKOFF_MAX_MS = 3_600_000;

/** Retry delay after `attempts` failed attempts, as an SQL interval expression. */
const backoff = sql`least(${BACKOFF_MAX_MS}::float8, ${BACKOFF_BASE_MS}::float8 * power(2, greatest(attempts - 1, 0))) * interval '1 millisecond'`;

const ms = (d: Date) => d.getTime();

/**
 * The queue rows matching `where`, locked one after another in vehicle id order (byte order,
 * "C", which is the order of the ingest's JavaScript sort of ASCII ids). Every statement that
 * locks several queue rows goes through this, so two of them never wait for each other in a
 * cycle: an ingest marking vehicles and a worker's heartbeat updating them in heap order used to
 * deadlock (1 in 13,421 small batches in one probe).
 */
function lockedInIdOrder(where: RawBuilder<unknown>, skipLocked = false) {
  return sql`select vehicle_id from analysis_queue where ${where} order by vehicle_id collate "C" for update${skipLocked ? sql` skip locked` : sql``}`;
}

/**
 * The analysis queue (table `analysis_queue`, one row per vehicle with unanalysed data), leased
 * in SQL so any number of workers in any number of processes share it:
 * - `lease` takes ready rows with `FOR UPDATE SKIP LOCKED`, stamps `locked_by`/`locked_until`,
 *   counts the attempt and moves `dirty_from` into `leased_from` (see migrations/0003);
 * - `finish` deletes the row if its generation is unchanged, else releases it for another pass
 *   (new data arrived during the lease, and `dirty_from` now holds exactly its earliest ts);
 * - `fail` releases with exponential backoff in `run_after` and records `last_error`;
 * - `sweepExpired` releases leases whose holder died (backoff, error 'lease expired').
 * Methods take an optional transaction so finishing commits together with the results.
 */
export function createQueueRepository(db: Kysely<Database>) {
  return {
    async lease(
      workerId: string,
      limit: number,
      leaseMs: number,
      options: LeaseOptions = {},
      trx: Kysely<Database> = db,
    ): Promise<Lease[]> {
      const fleet = options.fleetId ?? null;
      const rows = await sql<{
        vehicle_id: string;
        fleet_id: string;
        leased_from: Date;
        generation: string | number;
        attempts: number;
      }>`
        with picked as (
          select vehicle_id from analysis_queue
          where (locked_until is null or locked_until < now())
            and (${options.ignoreBackoff === true} or run_after <= now())
            and (${fleet}::text is null or fleet_id = ${fleet})
          order by run_after, enqueued_at, vehicle_id
          limit ${limit}
          for update skip locked
        )
        update analysis_queue q
        set locked_by = ${workerId},
            locked_until = now() + ${leaseMs}::float8 * interval '1 millisecond',
            attempts = q.attempts + 1,
            leased_from = least(q.dirty_from, q.leased_from),
            dirty_from = 'infinity'
        from picked where q.vehicle_id = picked.vehicle_id
        returning q.vehicle_id, q.fleet_id, q.leased_from, q.generation::text as generation, q.attempts`.execute(trx);
      return rows.rows
        .map((r) => ({
          vehicleId: r.vehicle_id,
          fleetId: r.fleet_id,
          windowFromMs: ms(r.leased_from),
          generation: String(r.generation),
          attempts: r.attempts,
        }))
        .sort((a, b) => a.vehicleId.localeCompare(b.vehicleId));
    },

    /** Locks the row and tells whether `workerId` still holds a live lease on it. */
    async holds(workerId: string, vehicleId: string, trx: Kysely<Database> = db): Promise<boolean> {
      const r =
        await sql`select 1 from analysis_queue where vehicle_id = ${vehicleId} and locked_by = ${workerId} and locked_until > now() for update`.execute(
          trx,
        );
      return r.rows.length > 0;
    },

    /** Pushes the expiry of `workerId`'s leases out by `leaseMs` (a heartbeat between vehicles). */
    async extend(
      workerId: string,
      vehicleIds: readonly string[],
      leaseMs: number,
      trx: Kysely<Database> = db,
    ): Promise<number> {
      if (vehicleIds.length === 0) return 0;
      const r = await sql`
        update analysis_queue q set locked_until = now() + ${leaseMs}::float8 * interval '1 millisecond'
        from (${lockedInIdOrder(sql`locked_by = ${workerId} and vehicle_id = any(${[...vehicleIds]}::text[])`)}) l
        where q.vehicle_id = l.vehicle_id`.execute(trx);
      return Number(r.numAffectedRows ?? 0);
    },

    /** Completes a lease: 'done' (row removed) or 'again' (new data arrived meanwhile; row released). */
    async finish(
      workerId: string,
      lease: Pick<Lease, 'vehicleId' | 'generation'>,
      trx: Kysely<Database> = db,
    ): Promise<'done' | 'again' | 'lost'> {
      const deleted = await sql`
        delete from analysis_queue where vehicle_id = ${lease.vehicleId} and locked_by = ${workerId} and generation = ${lease.generation}::bigint`.execute(
        trx,
      );
      if (Number(deleted.numAffectedRows ?? 0) > 0) return 'done';
      const released = await sql`
        update analysis_queue
        set locked_by = null, locked_until = null, leased_from = null, attempts = 0, last_error = null, run_after = now()
        where vehicle_id = ${lease.vehicleId} and locked_by = ${workerId}`.execute(trx);
      return Number(released.numAffectedRows ?? 0) > 0 ? 'again' : 'lost';
    },

    /** Gives a lease back after a failure: the window is kept, the retry waits (exponential backoff). */
    async fail(workerId: string, vehicleId: string, error: string, trx: Kysely<Database> = db): Promise<void> {
      await sql`
        update analysis_queue
        set locked_by = null, locked_until = null, dirty_from = least(dirty_from, leased_from), leased_from = null,
            run_after = now() + ${backoff}, last_error = ${error.slice(0, 2000)}
        where vehicle_id = ${vehicleId} and locked_by = ${workerId}`.execute(trx);
    },

    /** Gives leases back untouched (a stopping worker): no backoff, the attempt does not count. */
    async release(workerId: string, vehicleIds: readonly string[], trx: Kysely<Database> = db): Promise<number> {
      if (vehicleIds.length === 0) return 0;
      const r = await sql`
        update analysis_queue q
        set locked_by = null, locked_until = null, dirty_from = least(q.dirty_from, q.leased_from), leased_from = null,
            attempts = greatest(q.attempts - 1, 0), run_after = now()
        from (${lockedInIdOrder(sql`locked_by = ${workerId} and vehicle_id = any(${[...vehicleIds]}::text[])`)}) l
        where q.vehicle_id = l.vehicle_id`.execute(trx);
      return Number(r.numAffectedRows ?? 0);
    },

    /** Releases every expired lease (its worker died or stalled); returns the vehicles freed. */
    async sweepExpired(trx: Kysely<Database> = db): Promise<string[]> {
      // SKIP LOCKED: a row an ingest is marking right now is swept next time, not waited for.
      const r = await sql<{ vehicle_id: string }>`
        update analysis_queue q
        set last_error = 'lease of ' || q.locked_by || ' expired', locked_by = null, locked_until = null,
            dirty_from = least(q.dirty_from, q.leased_from), leased_from = null, run_after = now() + ${backoff}
        from (${lockedInIdOrder(sql`locked_until < now()`, true)}) l
        where q.vehicle_id = l.vehicle_id
        returning q.vehicle_id`.execute(trx);
      return r.rows.map((x) => x.vehicle_id).sort();
    },

    /** Marks a vehicle for analysis from `fromMs` (service events, tests); same rule as ingest. */
    async enqueue(vehicleId: string, fleetId: string, fromMs: number, trx: Kysely<Database> = db): Promise<void> {
      await sql`
        insert into analysis_queue (vehicle_id, fleet_id, dirty_from) values (${vehicleId}, ${fleetId}, to_timestamp(${fromMs}::float8 / 1000))
        on conflict (vehicle_id) do update
          set dirty_from = least(analysis_queue.dirty_from, excluded.dirty_from), generation = analysis_queue.generation + 1, enqueued_at = now()`.execute(
        trx,
      );
    },

    async counts(fleetId?: string, trx: Kysely<Database> = db): Promise<QueueCounts> {
      const fleet = fleetId ?? null;
      const r = await sql<{ ready: number; leased: number; backing_off: number }>`
        select count(*) filter (where (locked_until is null or locked_until < now()) and run_after <= now())::int as ready,
               count(*) filter (where locked_until >= now())::int as leased,
               count(*) filter (where (locked_until is null or locked_until < now()) and run_after > now())::int as backing_off
        from analysis_queue where (${fleet}::text is null or fleet_id = ${fleet})`.execute(trx);
      const row = r.rows[0];
      return { ready: row?.ready ?? 0, leased: row?.leased ?? 0, backingOff: row?.backing_off ?? 0 };
    },
  };
}

export type QueueRepository = ReturnType<typeof createQueueRepository>;
