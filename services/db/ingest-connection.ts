import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import type { Kysely, RawBuilder, Transaction } from 'kysely';
import type pg from 'pg';
import { from as copyFrom } from 'pg-copy-streams';
import type { DatabaseHandle } from './database.js';
import { READINGS_COPY_COLUMNS } from './pg-wire/binary-copy-in.js';
import type { Database } from './schema.js';

/**
 * The connection an ingest transaction runs on: statements, and on a PostgreSQL server a binary
 * COPY into `readings` (PGlite's driver has no COPY FROM STDIN).
 */
export interface IngestConnection {
  /** Runs a statement; a `name` makes it a prepared statement on a PostgreSQL server (parsed and planned once per connection). */
  run<R>(query: RawBuilder<R>, name?: string): Promise<R[]>;
  copyIn: ((data: Buffer) => Promise<void>) | undefined;
  /**
   * Where new partitions are attached (see `partitions.ensure`): never the pool the transaction
   * holds a client of (`DatabaseHandle.ddl`), or the transaction itself on PGlite.
   */
  partitionTarget: Kysely<Database> | Transaction<Database>;
}

/** Runs statements compiled by Kysely straight on a pg pool or client, named ones as prepared statements. */
function pgRunner(target: pg.Pool | pg.PoolClient, db: Kysely<Database>): IngestConnection['run'] {
  return async <R>(query: RawBuilder<R>, name?: string) => {
    const compiled = query.compile(db);
    return (
      await target.query({ text: compiled.sql, values: compiled.parameters as unknown[], ...(name ? { name } : {}) })
    ).rows as R[];
  };
}

/** Runs `fn` in a transaction on one client checked out of the pool (COPY needs the client itself). */
async function inPoolTransaction<T>(
  pool: pg.Pool,
  db: Kysely<Database>,
  ddl: Kysely<Database>,
  fn: (conn: IngestConnection) => Promise<T>,
): Promise<T> {
  const client = await pool.connect();
  let broken: Error | undefined;
  const conn: IngestConnection = {
    run: pgRunner(client, db),
    copyIn: async (data) => {
      const stream = client.query(copyFrom(`copy readings ${READINGS_COPY_COLUMNS} from stdin (format binary)`));
      await pipeline(Readable.from([data]), stream);
    },
    partitionTarget: ddl,
  };
  try {
    await client.query('begin');
    try {
      const out = await fn(conn);
      await client.query('commit');
      return out;
    } catch (err) {
      await client.query('rollback').catch((rollbackErr: unknown) => {
        broken = rollbackErr instanceof Error ? rollbackErr : new Error(String(rollbackErr));
      });
      throw err;
    }
  } finally {
    // A client whose rollback failed is not handed out again.
    client.release(broken);
  }
}

/** Single statements outside a transaction (each is atomic on its own). */
export function autocommitConnection(handle: DatabaseHandle): IngestConnection {
  const { db, pool, ddl } = handle;
  return {
    run: pool ? pgRunner(pool, db) : async <R>(query: RawBuilder<R>) => (await query.execute(db)).rows,
    copyIn: undefined,
    partitionTarget: ddl,
  };
}

/** Runs `fn` in one transaction: on a pg client of its own (PostgreSQL), else a Kysely transaction (PGlite). */
export function inTransaction<T>(handle: DatabaseHandle, fn: (conn: IngestConnection) => Promise<T>): Promise<T> {
  const { db, pool, ddl } = handle;
  if (pool) return inPoolTransaction(pool, db, ddl, fn);
  return db.transaction().execute((trx) =>
    fn({
      run: async <R>(query: RawBuilder<R>) => (await query.execute(trx)).rows,
      copyIn: undefined,
      partitionTarget: trx,
    }),
  );
}
