import { randomBytes } from 'node:crypto';
import pg from 'pg';
import { inject } from 'vitest';
import { openDatabase, type DatabaseHandle } from '../../services/db/database.js';
import { migrateToLatest } from '../../services/db/migrator.js';

export type TestDatabaseKind = 'postgres' | 'pglite';

/** Which engine this vitest project tests: set per project in vitest.config.ts. */
export function testDatabaseKind(): TestDatabaseKind {
  return process.env.TEST_DATABASE === 'postgres' ? 'postgres' : 'pglite';
}

export interface TestDatabase {
  handle: DatabaseHandle;
  /** Connection string (postgres only), for child processes and real servers. */
  url: string | undefined;
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
 * A fresh, migrated database for one test file: a clone of the migrated template on the
 * PostgreSQL server, or a new in-memory PGlite instance.
 */
export async function createTestDatabase(): Promise<TestDatabase> {
  if (testDatabaseKind() === 'pglite') {
    const handle = await openDatabase({ databaseUrl: undefined, pgliteDir: 'memory://' });
    await migrateToLatest(handle.db);
    return { handle, url: undefined, drop: () => handle.close() };
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
    drop: async () => {
      if (dropped) return;
      dropped = true;
      await handle.close();
      await adminQuery(adminUrl, `drop database if exists ${name} with (force)`);
    },
  };
}
