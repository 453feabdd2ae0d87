import { mkdirSync } from 'node:fs';
import { PGlite } from '@electric-sql/pglite';
import { Kysely, PGliteDialect, PostgresDialect } from 'kysely';
import pg from 'pg';
import { pgSocket } from './pg-wire/receive-buffer-socket.js';
import type { Database } from './schema.js';

export type DatabaseKind = 'postgres' | 'pglite';

/** An open database: Kysely plus what the service needs to know about the engine underneath. */
export interface DatabaseHandle {
  db: Kysely<Database>;
  kind: DatabaseKind;
  /** Where the data lives, for the first log line (password removed). */
  description: string;
  /** The pg pool (postgres only), for streaming COPY. */
  pool: pg.Pool | undefined;
  /**
   * Where schema changes made on the ingest path run (new monthly partitions): on PostgreSQL a
   * connection of its own, outside `pool`, because an ingest transaction that needs a partition
   * already holds a pool client, and asking the same pool for a second one hangs once every
   * client is held that way (seen: DB_POOL_SIZE=1 and one long body, or 12 backfills at once).
   * On PGlite, which has one connection, the database itself.
   */
  ddl: Kysely<Database>;
  close(): Promise<void>;
}

export interface DatabaseOptions {
  databaseUrl: string | undefined;
  pgliteDir: string;
  poolSize?: number;
  /** PGlite only: start from this dumped data directory (tests start from a migrated one). */
  pgliteLoadDataDir?: Blob;
  /** Called when an idle pooled client fails (server restart, network): logged, not fatal. */
  onPoolError?: (err: Error) => void;
}

/**
 * Longest wait for a pool client (or a new connection), ms: past it the query fails as "database
 * unavailable" (503) instead of waiting for ever behind clients that are stuck.
 */
const POOL_WAIT_MS = 30_000;

/** The schema-change connection closes after this long unused, ms: partitions are made rarely. */
const DDL_IDLE_MS = 10_000;

/** Removes the password from a connection string so it can be logged. */
export function redactUrl(url: string): string {
  try {
    const parsed = new URL(url);
    if (parsed.password) parsed.password = '***';
    return parsed.toString();
  } catch {
    return '(unparseable DATABASE_URL)';
  }
}

/**
 * Opens Postgres through a pg Pool when `databaseUrl` is set, otherwise the embedded PGlite
 * database in `pgliteDir` (created if missing). Both run the same migrations and queries.
 */
export async function openDatabase(options: DatabaseOptions): Promise<DatabaseHandle> {
  if (options.databaseUrl) {
    const pool = new pg.Pool({
      connectionString: options.databaseUrl,
      max: options.poolSize ?? 10,
      stream: pgSocket,
      connectionTimeoutMillis: POOL_WAIT_MS,
    });
    // Without a listener an idle client's error would crash the process.
    pool.on('error', (err) => options.onPoolError?.(err));
    // pg-pool listens only on idle clients: a checked-out client whose connection dies between
    // queries (a transaction waiting for more of a streamed body when the server restarts) would
    // emit an unhandled 'error' and crash the process. Ignoring it here is safe: the client's next
    // query fails with the error, and the request answers 503.
    pool.on('connect', (client) => client.on('error', () => undefined));
    const db = new Kysely<Database>({ dialect: new PostgresDialect({ pool }) });
    const ddlPool = new pg.Pool({
      connectionString: options.databaseUrl,
      max: 1,
      idleTimeoutMillis: DDL_IDLE_MS,
      connectionTimeoutMillis: POOL_WAIT_MS,
    });
    ddlPool.on('error', (err) => options.onPoolError?.(err));
    const ddl = new Kysely<Database>({ dialect: new PostgresDialect({ pool: ddlPool }) });
    return {
      db,
      kind: 'postgres',
      description: `PostgreSQL at ${redactUrl(options.databaseUrl)}`,
      pool,
      ddl,
      close: async () => {
        await Promise.all([db.destroy(), ddl.destroy()]);
      },
    };
  }
  const dir = options.pgliteDir;
  if (dir !== 'memory://') mkdirSync(dir, { recursive: true });
  const pglite = await PGlite.create({
    dataDir: dir,
    ...(options.pgliteLoadDataDir ? { loadDataDir: options.pgliteLoadDataDir } : {}),
  });
  const db = new Kysely<Database>({ dialect: new PGliteDialect({ pglite }) });
  return {
    db,
    kind: 'pglite',
    description:
      dir === 'memory://' ? 'embedded PostgreSQL (PGlite) in memory' : `embedded PostgreSQL (PGlite) in ${dir}`,
    pool: undefined,
    ddl: db,
    close: async () => {
      await db.destroy();
      if (!pglite.closed) await pglite.close();
    },
  };
}
