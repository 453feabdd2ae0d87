import { randomBytes } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { readFile, rename, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { PGlite } from '@electric-sql/pglite';
import { Kysely, PGliteDialect } from 'kysely';
import pg from 'pg';
import { inject } from 'vitest';
import { openDatabase, type DatabaseHandle } from '../../services/db/database.js';
import { migrateToLatest } from '../../services/db/migrator.js';
import { toNumber, type Database } from '../../services/db/schema.js';
import { migrationsDigest } from './migrations-digest.js';

export type TestDatabaseKind = 'postgres' | 'pglite';

/** Which engine this vitest project tests: set per project in vitest.config.ts. */
export function testDatabaseKind(): TestDatabaseKind {
  return process.env.TEST_DATABASE === 'postgres' ? 'postgres' : 'pglite';
}

export interface TestDatabase {
  handle: DatabaseHandle;
  /** Connection string (postgres only), for child processes and real servers. */
  url: string | undefined;
  /** Folder of a file-backed PGlite database (pglite with `pgliteDir` only). */
  dir: string | undefined;
  /** Closes the handle and drops the database. */
  drop(): Promise<void>;
}

async function adminQuery(adminUrl: string, text: string): Promise<void> {
  const client = new pg.Client({ connectionString: adminUrl });
  await client.connect();
  try {
    await client.query(text);
  } finally {
    await client.end();
  }
}

/**
 * The data directory of a migrated PGlite database, dumped to a file in the temp folder once per
 * migrations version: starting from it takes about a sixth of the time of initdb + migrations.
 * Parallel test files may build it at the same time; the rename makes that harmless.
 */
const PGLITE_VERSION = (
  JSON.parse(
    readFileSync(
      join(import.meta.dirname, '..', '..', 'node_modules', '@electric-sql', 'pglite', 'package.json'),
      'utf8',
    ),
  ) as { version: string }
).version;

async function pgliteTemplate(): Promise<Blob> {
  // The PGlite version is part of the name: a data directory is tied to the engine that made it.
  const file = join(tmpdir(), `thermocline-pglite-${PGLITE_VERSION}-${migrationsDigest()}.tar`);
  const cached = await readFile(file).catch(() => undefined);
  if (cached) return new Blob([cached]);
  const pglite = await PGlite.create('memory://');
  const db = new Kysely<Database>({ dialect: new PGliteDialect({ pglite }) });
  try {
    await migrateToLatest(db);
    const dump = await pglite.dumpDataDir('none');
    const partial = `${file}.${process.pid}.${randomBytes(4).toString('hex')}`;
    await writeFile(partial, Buffer.from(await dump.arrayBuffer()));
    await rename(partial, file);
    return dump;
  } finally {
    await db.destroy();
    if (!pglite.closed) await pglite.close();
  }
}

/**
 * A fresh, migrated database for one test file: a clone of the migrated template on the
 * PostgreSQL server, or a new PGlite instance loaded with the migrated data directory (in memory,
 * or in `pgliteDir` for a test that reopens it).
 */
export async function createTestDatabase(options: { pgliteDir?: string } = {}): Promise<TestDatabase> {
  if (testDatabaseKind() === 'pglite') {
    const handle = await openDatabase({
      databaseUrl: undefined,
      pgliteDir: options.pgliteDir ?? 'memory://',
      pgliteLoadDataDir: await pgliteTemplate(),
    });
    return { handle, url: undefined, dir: options.pgliteDir, drop: () => handle.close() };
  }
  const adminUrl = inject('postgresAdminUrl');
  const template = inject('postgresTemplate');
  const name = `thermocline_test_${randomBytes(6).toString('hex')}`;
  await adminQuery(adminUrl, `create database ${name} template ${template}`);
  const url = new URL(adminUrl);
  url.pathname = `/${name}`;
  const handle = await openDatabase({ databaseUrl: url.toString(), pgliteDir: '', poolSize: 10 });
  let dropped = false;
  return {
    handle,
    url: url.toString(),
    dir: undefined,
    drop: async () => {
      if (dropped) return;
      dropped = true;
      await handle.close();
      await adminQuery(adminUrl, `drop database if exists ${name} with (force)`);
    },
  };
}

/**
 * Readings stored in a test database, counted over a connection of its own: works after the app
 * (and its handle) closed, for a server database or a file-backed PGlite one.
 */
export async function countStoredReadings(tdb: TestDatabase): Promise<number> {
  if (!tdb.url && !tdb.dir) throw new Error('an in-memory PGlite database cannot be reopened: pass pgliteDir');
  const handle = await openDatabase({ databaseUrl: tdb.url, pgliteDir: tdb.dir ?? '', poolSize: 1 });
  try {
    const row = await handle.db
      .selectFrom('readings')
      .select((eb) => eb.fn.countAll().as('n'))
      .executeTakeFirstOrThrow();
    return toNumber(row.n);
  } finally {
    await handle.close();
  }
}
