import type { AddressInfo } from 'node:net';
import type { FastifyInstance } from 'fastify';
import type { Kysely } from 'kysely';
import { afterAll, beforeAll } from 'vitest';
import { buildApp } from '../../services/api/app.js';
import { loadConfig, type Config } from '../../services/config.js';
import { createApiKeysRepository, type Scope } from '../../services/db/api-keys-repository.js';
import { createFleetsRepository } from '../../services/db/fleets-repository.js';
import type { Database } from '../../services/db/schema.js';
import { PartitionKeeper } from '../../services/db/partitions.js';
import { createReadingsRepository } from '../../services/db/readings-repository.js';
import { createTestDatabase, type TestDatabase } from './test-database.js';

/** The app of one test file on its own fresh database, with helpers to make fleets and keys. */
export interface TestApp {
  app: FastifyInstance;
  tdb: TestDatabase;
  config: Config;
  /** Creates the fleet (if new) and a key for it with the given scopes; returns the plain key. */
  createKey(fleetId: string, scopes: Scope[]): Promise<string>;
  /** An admin key (every fleet). */
  createAdminKey(): Promise<string>;
  /** `Authorization` header for a key. */
  auth(key: string): { authorization: string };
  /** Stored readings, optionally of some vehicles only. */
  countReadings(vehicleIds?: string[]): Promise<number>;
  /** Closes the app and drops the database. */
  close(): Promise<void>;
}

/** Creates the fleet (if new) and a key for it; returns the plain key. */
export async function createFleetKey(db: Kysely<Database>, fleetId: string, scopes: Scope[]): Promise<string> {
  await createFleetsRepository(db).ensure(fleetId);
  return (await createApiKeysRepository(db).create({ fleetId, scopes })).key;
}

/** The configuration the tests run with: the defaults of an empty environment plus `overrides`. */
export function testConfig(overrides: Partial<Config> = {}): Config {
  return { ...loadConfig({}), inProcessWorker: false, logLevel: 'silent', ...overrides };
}

/**
 * Builds the app on a fresh test database (see test-database.ts), or on `tdb` when given. The
 * caller must `close()` it, which drops the database too.
 */
export async function createTestApp(overrides: Partial<Config> = {}, given?: TestDatabase): Promise<TestApp> {
  const tdb = given ?? (await createTestDatabase());
  const config = testConfig(overrides);
  let app: FastifyInstance;
  try {
    app = await buildApp({ config, database: tdb.handle });
    await app.ready();
  } catch (err) {
    await tdb.drop();
    throw err;
  }
  const db = tdb.handle.db;
  const keys = createApiKeysRepository(db);
  const readings = createReadingsRepository(tdb.handle, new PartitionKeeper());
  return {
    app,
    tdb,
    config,
    createKey: (fleetId, scopes) => createFleetKey(db, fleetId, scopes),
    async createAdminKey() {
      return (await keys.create({ fleetId: null, scopes: ['admin'] })).key;
    },
    auth: (key) => ({ authorization: `Bearer ${key}` }),
    countReadings: (vehicleIds) => readings.count(vehicleIds),
    async close() {
      await app.close();
      await tdb.drop();
    },
  };
}

/**
 * Registers beforeAll/afterAll hooks that give the calling test file its own app and database;
 * the returned object is filled in before the first test runs.
 */
export function useTestApp(overrides: Partial<Config> = {}): TestApp {
  const holder = {} as TestApp;
  beforeAll(async () => {
    Object.assign(holder, await createTestApp(overrides));
  });
  afterAll(async () => {
    await holder.close?.();
  });
  return holder;
}

/** A test app listening on loopback with an ingest key, for tests that need a real socket. */
export interface ServedTestApp {
  t: TestApp;
  /** `http://127.0.0.1:<port>` */
  base: string;
  /** A plain ingest key of the fleet. */
  key: string;
}

/**
 * Like useTestApp, and the app listens on a free loopback port with an ingest key of `fleetId`;
 * filled in before the first test runs.
 */
export function useServedTestApp(fleetId: string, overrides: Partial<Config> = {}): ServedTestApp {
  const served = { t: useTestApp(overrides), base: '', key: '' };
  beforeAll(async () => {
    served.key = await served.t.createKey(fleetId, ['ingest']);
    await served.t.app.listen({ port: 0, host: '127.0.0.1' });
    served.base = `http://127.0.0.1:${(served.t.app.server.address() as AddressInfo).port}`;
  });
  return served;
}
