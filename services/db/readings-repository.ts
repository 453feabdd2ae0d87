import { sql, type Transaction } from 'kysely';
import type { DatabaseHandle } from './database.js';
import { monthIndexOf, type PartitionKeeper } from './partitions.js';
import { toNumber, type Database } from './schema.js';

/** A column-wise chunk of validated readings in °C; absent optional channels are NaN. */
export interface ReadingChunk {
  length: number;
  vehicleIds: string[];
  tsMs: Float64Array;
  coolantC: Float64Array;
  ambientC: Float64Array;
  speedKph: Float64Array;
  rpm: Float64Array;
}

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

/** The batch names vehicles registered to another fleet: nothing of it is stored. */
export class ForeignVehiclesError extends Error {
  constructor(readonly vehicleIds: string[]) {
    super(`vehicles registered to another fleet: ${vehicleIds.join(', ')}`);
    this.name = 'ForeignVehiclesError';
  }
}

// Arrays go to Postgres as one text literal per column: building the literal ourselves is several
// times faster than letting the driver serialise a JS array element by element.
function floatArrayLiteral(values: Float64Array, length: number): string {
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

export function createReadingsRepository(handle: DatabaseHandle, partitions: PartitionKeeper) {
  const { db } = handle;

  async function stageChunk(trx: Transaction<Database>, chunk: ReadingChunk): Promise<void> {
    const n = chunk.length;
    await sql`
      insert into ingest_stage (vehicle_id, ts, coolant_c, ambient_c, speed_kph, rpm)
      select v, to_timestamp(t / 1000.0), c, a, s, r
      from unnest(${textArrayLiteral(chunk.vehicleIds, n)}::text[], ${floatArrayLiteral(chunk.tsMs, n)}::float8[],
                  ${floatArrayLiteral(chunk.coolantC, n)}::real[], ${floatArrayLiteral(chunk.ambientC, n)}::real[],
                  ${floatArrayLiteral(chunk.speedKph, n)}::real[], ${floatArrayLiteral(chunk.rpm, n)}::real[]) as u(v, t, c, a, s, r)`.execute(trx);
  }

  return {
    /**
     * Stores a stream of validated readings for one fleet in one transaction: rows go to a
     * temporary staging table as they arrive, then into `readings` with ON CONFLICT DO NOTHING
     * (a retried reading is a duplicate, never a second row). Registers unknown vehicles to the
     * fleet, marks vehicles with new rows for analysis and writes the audit row. Resolves only
     * after COMMIT; on any error nothing is stored.
     */
    async ingest(fleetId: string, chunks: AsyncIterable<ReadingChunk>, audit: IngestAuditInput): Promise<IngestResult> {
      const started = Date.now();
      const vehicles = new Set<string>();
      const months = new Set<number>();
      let staged = 0;

      const result = await db.transaction().execute(async (trx) => {
        await sql`create temp table ingest_stage (vehicle_id text not null, ts timestamptz not null, coolant_c real not null, ambient_c real, speed_kph real, rpm real) on commit drop`.execute(trx);
        for await (const chunk of chunks) {
          if (chunk.length === 0) continue;
          let lastMonthStart = Infinity;
          let lastMonthEnd = -Infinity;
          for (let i = 0; i < chunk.length; i++) {
            vehicles.add(chunk.vehicleIds[i]!);
            const t = chunk.tsMs[i]!;
            if (t < lastMonthStart || t >= lastMonthEnd) {
              const m = monthIndexOf(t);
              months.add(m);
              lastMonthStart = Date.UTC(1970, m, 1);
              lastMonthEnd = Date.UTC(1970, m + 1, 1);
            }
          }
          await stageChunk(trx, chunk);
          staged += chunk.length;
        }
        let accepted = 0;
        if (staged > 0) accepted = await moveStagedRows(trx);
        await trx
          .insertInto('ingest_audit')
          .values({
            key_id: audit.keyId,
            fleet_id: fleetId,
            content_type: audit.contentType,
            body_bytes: audit.bodyBytes(),
            accepted,
            duplicates: staged - accepted,
            rejected: audit.rejected(),
            vehicles: vehicles.size,
            duration_ms: Date.now() - started,
          })
          .execute();
        return accepted;
      });
      return { accepted: result, duplicates: staged - result, staged, vehicles: vehicles.size };

      async function moveStagedRows(trx: Transaction<Database>): Promise<number> {

        const ids = [...vehicles];
        const foreign = await sql<{ vehicle_id: string }>`
          select vehicle_id from vehicles where vehicle_id = any(${ids}::text[]) and fleet_id <> ${fleetId} order by vehicle_id limit 10`.execute(trx);
        if (foreign.rows.length > 0) throw new ForeignVehiclesError(foreign.rows.map((r) => r.vehicle_id));
        await sql`insert into vehicles (vehicle_id, fleet_id) select unnest(${ids}::text[]), ${fleetId} on conflict (vehicle_id) do nothing`.execute(trx);

        // This transaction has written only to its temporary table so far, so creating a
        // partition (which locks the parent table) cannot deadlock with another ingest. On a
        // server the partition is made on another connection and committed at once; PGlite has
        // one connection, so it is made here.
        await partitions.ensure(handle.kind === 'pglite' ? trx : db, months);

        const inserted = await sql<{ n: string | number }>`
          with ins as (
            insert into readings (vehicle_id, ts, coolant_c, ambient_c, speed_kph, rpm)
            select vehicle_id, ts, coolant_c, ambient_c, speed_kph, rpm from ingest_stage
            on conflict do nothing
            returning vehicle_id, ts
          ), queued as (
            insert into analysis_queue (vehicle_id, fleet_id, dirty_from)
            select vehicle_id, ${fleetId}, min(ts) from ins group by vehicle_id
            on conflict (vehicle_id) do update
              set dirty_from = least(analysis_queue.dirty_from, excluded.dirty_from),
                  generation = analysis_queue.generation + 1,
                  enqueued_at = now()
          )
          select count(*) as n from ins`.execute(trx);
        return toNumber(inserted.rows[0]?.n);
      }
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
