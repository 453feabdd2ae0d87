import pg from 'pg';
import type { TestProject } from 'vitest/node';
import { openDatabase } from '../../services/db/database.js';
import { migrateToLatest } from '../../services/db/migrator.js';
import { migrationsDigest } from './migrations-digest.js';

declare module 'vitest' {
  export interface ProvidedContext {
    postgresAdminUrl: string;
    postgresTemplate: string;
  }
}

const LOCAL_SERVER_URL = 'postgres://postgres@127.0.0.1:5432/postgres';

async function reachable(url: string): Promise<boolean> {
  const client = new pg.Client({ connectionString: url, connectionTimeoutMillis: 2000 });
  try {
    await client.connect();
    await client.query('select 1');
    return true;
  } catch {
    return false;
  } finally {
    await client.end().catch(() => undefined);
  }
}

/**
 * Finds a PostgreSQL server for the suites: DATABASE_URL if set; else a throw-away container when
 * a Docker engine answers; else the local server on 127.0.0.1:5432. Then builds a migrated
 * template database that each test file clones (CREATE DATABASE … TEMPLATE is fast).
 */
export default async function setup(project: TestProject): Promise<() => Promise<void>> {
  let adminUrl = process.env.DATABASE_URL;
  let stopContainer: (() => Promise<unknown>) | undefined;
  if (!adminUrl) {
    const dockerUp = await import('testcontainers')
      .then(async ({ getContainerRuntimeClient }) => {
        await getContainerRuntimeClient();
        return true;
      })
      .catch(() => false);
    if (dockerUp) {
      const { PostgreSqlContainer } = await import('@testcontainers/postgresql');
      const container = await new PostgreSqlContainer('postgres:15').start();
      adminUrl = container.getConnectionUri();
      stopContainer = () => container.stop();
    } else if (await reachable(LOCAL_SERVER_URL)) {
      adminUrl = LOCAL_SERVER_URL;
    } else {
      throw new Error(
        'No PostgreSQL server for the postgres test project: set DATABASE_URL, start a Docker engine, or run a server on 127.0.0.1:5432',
      );
    }
  }

  const template = `thermocline_tpl_${migrationsDigest()}`;

  const admin = new pg.Client({ connectionString: adminUrl });
  await admin.connect();
  // Several CI runs may share a server: build the template under an advisory lock.
  await admin.query('select pg_advisory_lock(727274)');
  try {
    const exists = await admin.query('select 1 from pg_database where datname = $1', [template]);
    if (exists.rowCount === 0) {
      await admin.query(`create database ${template}`);
      const url = new URL(adminUrl);
      url.pathname = `/${template}`;
      const handle = await openDatabase({ databaseUrl: url.toString(), pgliteDir: '' });
      try {
        await migrateToLatest(handle.db);
      } catch (err) {
        await handle.close();
        await admin.query(`drop database if exists ${template}`);
        throw err;
      }
      await handle.close();
    }
  } finally {
    await admin.query('select pg_advisory_unlock(727274)');
    await admin.end();
  }
  project.provide('postgresAdminUrl', adminUrl);
  project.provide('postgresTemplate', template);
  return async () => {
    await stopContainer?.();
  };
}
