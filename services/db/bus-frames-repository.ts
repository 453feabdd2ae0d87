import { sql } from 'kysely';
import { DEFAULT_SAMPLE_PERIOD_S } from '../bus-decoding/bus-channels.js';
import { applyIncoming, diffReadings, windowToLoad } from '../bus-decoding/slot-update.js';
import { rollUp, VehicleSlots } from '../bus-decoding/vehicle-slots.js';
import { decodeSlotRecord, SlotWrites } from './bus-slot-writes.js';
import type { DatabaseHandle } from './database.js';
import { inTransaction, type IngestConnection } from './ingest-connection.js';
import { monthIndexOf, type PartitionKeeper } from './partitions.js';
import { encodeReadingsCopy } from './pg-wire/binary-copy-in.js';
import { ForeignVehiclesError, READINGS_INSERT_COLUMNS, type IngestAuditInput } from './readings-repository.js';
import type { ReadingChunk } from './reading-chunk.js';
import { withTransientRetry } from './transient-conflict.js';

export interface FrameIngestResult {
  /** Readings stored or changed by this request. */
  accepted: number;
  /** Readings of the affected time range this request left as they were (all of them on a retry). */
  duplicates: number;
  vehicles: number;
}

const MS_PER_S = 1000;
const UNIQUE_VIOLATION = '23505';

/** A text literal of a float8/real array, NaN as NULL (`nullNaN`) or as NaN. */
function floatLiteral(values: ArrayLike<number>, nullNaN: boolean): string {
  const parts = new Array<string>(values.length);
  for (let i = 0; i < values.length; i++) {
    const v = values[i]!;
    parts[i] = Number.isNaN(v) ? (nullNaN ? 'NULL' : 'NaN') : String(v);
  }
  return `{${parts.join(',')}}`;
}

/** Vehicle ids are validated against VEHICLE_ID_PATTERN (no quotes, backslashes or commas). */
function textLiteral(values: readonly string[]): string {
  return `{"${values.join('","')}"}`;
}

/**
 * Storage of readings derived from bus frames (POST /v1/frames/…). Per vehicle, under a
 * transaction-scoped advisory lock: the request's slots are merged into the vehicle's stored
 * slots (`bus_slots`), the readings of the time range that can change are derived before and
 * after, and only the difference is written (upserted, or deleted where a slot's coolant time
 * moved earlier). Requests for the same vehicle therefore run one after the other and the
 * readings depend only on the frames, not on how they were split into requests or ordered.
 */
export function createBusFramesRepository(handle: DatabaseHandle, partitions: PartitionKeeper) {
  /** Locks the vehicles (in hash order: the same order in every request, so no deadlock) and reads their profiles. */
  async function lockVehicles(conn: IngestConnection, fleetId: string, ids: string[]): Promise<Map<string, number>> {
    await conn.run(
      sql`select pg_advisory_xact_lock(k) from (select distinct hashtextextended('bus:' || v, 0) as k from unnest(${ids}::text[]) as v order by 1) s`,
    );
    const rows = await conn.run(sql<{ vehicle_id: string; fleet_id: string; sample_period_s: number }>`
      select vehicle_id, fleet_id, sample_period_s from vehicles where vehicle_id = any(${ids}::text[])`);
    const foreign = rows
      .filter((r) => r.fleet_id !== fleetId)
      .map((r) => r.vehicle_id)
      .sort();
    if (foreign.length > 0) throw new ForeignVehiclesError(foreign.slice(0, 10));
    return new Map(rows.map((r) => [r.vehicle_id, r.sample_period_s * MS_PER_S]));
  }

  /** The stored slots of each vehicle's window, in one statement. */
  async function loadSlots(
    conn: IngestConnection,
    incoming: Map<string, VehicleSlots>,
  ): Promise<Map<string, VehicleSlots>> {
    const ids = [...incoming.keys()];
    const periods = ids.map((id) => incoming.get(id)!.periodMs / MS_PER_S);
    const windows = ids.map((id) => windowToLoad(incoming.get(id)!));
    const rows = await conn.run(sql<{ vehicle_id: string; slot_ms: number; rec: Uint8Array }>`
      select s.vehicle_id, s.slot_ms, s.rec
      from unnest(${textLiteral(ids)}::text[], ${`{${periods.join(',')}}`}::int[], ${floatLiteral(
        windows.map((w) => w.fromMs),
        false,
      )}::float8[],
                  ${floatLiteral(
                    windows.map((w) => w.toMs),
                    false,
                  )}::float8[]) as w(v, p, f, t)
      join bus_slots s on s.vehicle_id = w.v and s.period_s = w.p and s.slot_ms >= w.f and s.slot_ms <= w.t`);
    const stored = new Map(ids.map((id) => [id, new VehicleSlots(incoming.get(id)!.periodMs)]));
    for (const r of rows) decodeSlotRecord(r.rec, stored.get(r.vehicle_id)!.record(r.slot_ms));
    return stored;
  }

  /** The readings as rows for INSERT … SELECT (column order of READINGS_INSERT_COLUMNS). */
  function readingRows(chunk: ReadingChunk) {
    const lit = (v: Float64Array | undefined) => floatLiteral(v ?? new Float64Array(chunk.length).fill(NaN), true);
    return sql`
      select v, to_timestamp(t / 1000.0), c, a, s, r, b, l, p
      from unnest(${textLiteral(chunk.vehicleIds)}::text[], ${floatLiteral(chunk.tsMs, false)}::float8[], ${lit(chunk.coolantC)}::real[], ${lit(chunk.ambientC)}::real[],
                  ${lit(chunk.speedKph)}::real[], ${lit(chunk.rpm)}::real[], ${lit(chunk.barometricKpa)}::real[], ${lit(chunk.coolantLevelPct)}::real[],
                  ${lit(chunk.coolantPressureKpa)}::real[]) as u(v, t, c, a, s, r, b, l, p)`;
  }

  function upsertReadings(conn: IngestConnection, chunk: ReadingChunk): Promise<unknown> {
    return conn.run(sql`
      insert into readings ${READINGS_INSERT_COLUMNS} ${readingRows(chunk)}
      on conflict (vehicle_id, ts) do update set
        coolant_c = excluded.coolant_c, ambient_c = excluded.ambient_c, speed_kph = excluded.speed_kph, rpm = excluded.rpm,
        barometric_kpa = excluded.barometric_kpa, coolant_level_pct = excluded.coolant_level_pct, coolant_pressure_kpa = excluded.coolant_pressure_kpa`);
  }

  /**
   * Readings at new times go by the readings' binary COPY where there is one (a server): they are
   * new rows unless /v1/readings stored a reading at the same time, in which case the COPY fails
   * with 23505 and they are upserted instead, inside a savepoint.
   */
  async function insertFresh(conn: IngestConnection, chunk: ReadingChunk): Promise<void> {
    if (!conn.copyIn) {
      await upsertReadings(conn, chunk);
      return;
    }
    await conn.run(sql`savepoint bus_fresh`);
    try {
      await conn.copyIn(encodeReadingsCopy(chunk));
      await conn.run(sql`release savepoint bus_fresh`);
    } catch (err) {
      if ((err as { code?: unknown }).code !== UNIQUE_VIOLATION) throw err;
      await conn.run(sql`rollback to savepoint bus_fresh`);
      await upsertReadings(conn, chunk);
    }
  }

  async function write(conn: IngestConnection, writes: SlotWrites): Promise<void> {
    const n = writes.slotVehicles.length;
    if (n > 0) {
      await conn.run(sql`
        insert into bus_slots (vehicle_id, period_s, slot_ms, rec)
        select v, p, s, r
        from unnest(${textLiteral(writes.slotVehicles)}::text[], ${`{${writes.slotPeriods.join(',')}}`}::int[], ${floatLiteral(writes.slotStarts, false)}::float8[],
                    ${writes.slotRecordsLiteral()}::bytea[]) as u(v, p, s, r)
        on conflict (vehicle_id, period_s, slot_ms) do update set rec = excluded.rec, updated_at = now()`);
    }
    if (writes.deleteVehicles.length > 0) {
      await conn.run(sql`
        delete from readings r using unnest(${textLiteral(writes.deleteVehicles)}::text[], ${floatLiteral(writes.deleteTs, false)}::float8[]) as d(v, t)
        where r.vehicle_id = d.v and r.ts = to_timestamp(d.t / 1000.0)`);
    }
    const fresh = writes.fresh.length > 0 ? writes.fresh.chunk() : undefined;
    const changed = writes.changed.length > 0 ? writes.changed.chunk() : undefined;
    const months = new Set<number>();
    for (const c of [fresh, changed]) if (c) for (let i = 0; i < c.length; i++) months.add(monthIndexOf(c.tsMs[i]!));
    if (months.size > 0) await partitions.ensure(conn.partitionTarget, months);
    if (changed) await upsertReadings(conn, changed);
    if (fresh) await insertFresh(conn, fresh);
  }

  /** Registers unknown vehicles, marks changed ones for analysis, writes the audit row; refuses another fleet's vehicle registered meanwhile. */
  async function finish(
    conn: IngestConnection,
    fleetId: string,
    ids: string[],
    writes: SlotWrites,
    audit: IngestAuditInput,
    started: number,
  ): Promise<void> {
    const queued = [...writes.dirtyFrom.keys()].sort();
    const firsts = queued.map((id) => writes.dirtyFrom.get(id)!);
    await conn.run(sql`
      with registered as (
        insert into vehicles (vehicle_id, fleet_id) select v, ${fleetId} from unnest(${ids}::text[]) as v
        on conflict (vehicle_id) do nothing
      ), marked as (
        insert into analysis_queue (vehicle_id, fleet_id, dirty_from)
        select v, ${fleetId}, to_timestamp(t / 1000.0) from unnest(${queued}::text[], ${firsts}::float8[]) as u(v, t)
        on conflict (vehicle_id) do update
          set dirty_from = least(analysis_queue.dirty_from, excluded.dirty_from), generation = analysis_queue.generation + 1, enqueued_at = now()
      )
      insert into ingest_audit (key_id, fleet_id, content_type, body_bytes, accepted, duplicates, rejected, vehicles, duration_ms)
      values (${audit.keyId}, ${fleetId}, ${audit.contentType}, ${audit.bodyBytes()}, ${writes.accepted}, ${writes.duplicates}, ${audit.rejected()}, ${ids.length}, ${Date.now() - started})`);
    const raced = await conn.run(
      sql<{
        vehicle_id: string;
      }>`select vehicle_id from vehicles where vehicle_id = any(${ids}::text[]) and fleet_id <> ${fleetId} order by vehicle_id limit 10`,
    );
    if (raced.length > 0) throw new ForeignVehiclesError(raced.map((r) => r.vehicle_id));
  }

  async function ingestOnce(
    fleetId: string,
    pre: ReadonlyMap<string, VehicleSlots>,
    audit: IngestAuditInput,
    started: number,
  ): Promise<FrameIngestResult> {
    const ids = [...pre.keys()].sort();
    return inTransaction(handle, async (conn) => {
      const w = new SlotWrites();
      if (ids.length > 0) {
        const periods = await lockVehicles(conn, fleetId, ids);
        const incoming = new Map(
          ids.map((id) => [id, rollUp(pre.get(id)!, periods.get(id) ?? DEFAULT_SAMPLE_PERIOD_S * MS_PER_S)]),
        );
        const stored = await loadSlots(conn, incoming);
        for (const id of ids) {
          const mine = stored.get(id)!;
          const u = applyIncoming(mine, incoming.get(id)!);
          for (const s of u.changedSlots) w.slot(id, mine.periodMs / MS_PER_S, s, mine.records.get(s)!);
          const d = diffReadings(u.before, u.after);
          for (const t of d.deletes) {
            w.deleteVehicles.push(id);
            w.deleteTs.push(t);
            w.dirty(id, t);
          }
          for (const i of d.upserts) w.reading(id, u.after, i, d.isNew[i] === 1);
          w.accepted += d.upserts.length;
          w.duplicates += d.unchanged;
        }
        await write(conn, w);
      }
      await finish(conn, fleetId, ids, w, audit, started);
      return { accepted: w.accepted, duplicates: w.duplicates, vehicles: ids.length };
    });
  }

  return {
    /**
     * Stores the readings a request's frames give, per vehicle `pre` (one-second slots from a
     * FrameCollector), in one transaction; retried on a deadlock with a concurrent request.
     * Resolves after COMMIT; on any error nothing is stored.
     * @example await repo.ingest('northside', collector.vehicles, audit)
     */
    ingest(
      fleetId: string,
      pre: ReadonlyMap<string, VehicleSlots>,
      audit: IngestAuditInput,
    ): Promise<FrameIngestResult> {
      const started = Date.now();
      return withTransientRetry(() => ingestOnce(fleetId, pre, audit, started));
    },
  };
}

export type BusFramesRepository = ReturnType<typeof createBusFramesRepository>;
