import { readdir } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { sql, type Kysely } from 'kysely';
import { Migrator, type Migration, type MigrationProvider } from 'kysely/migration';

const MIGRATIONS_DIR = join(dirname(fileURLToPath(import.meta.url)), '..', '..', 'migrations');

/** Loads `migrations/NNNN-name.ts` in name order. */
class FolderMigrationProvider implements MigrationProvider {
  constructor(private readonly dir: string) {}

  async getMigrations(): Promise<Record<string, Migration>> {
    const files = (await readdir(this.dir)).filter((f) => /^\d{4}-[a-z0-9-]+\.ts$/.test(f)).sort();
    const migrations: Record<string, Migration> = {};
    for (const file of files) {
      const mod = (await import(pathToFileURL(join(this.dir, file)).href)) as Migration;
      migrations[file.replace(/\.ts$/, '')] = mod;
    }
    return migrations;
  }
}

export class MigrationError extends Error {
  override name = 'MigrationError';
}

/**
 * Applies all pending migrations, each in its own transaction. Safe to run concurrently from
 * several processes (Kysely takes a lock). Throws MigrationError naming the failed migration.
 */
export async function migrateToLatest(db: Kysely<any>): Promise<string[]> {
  const migrator = new Migrator({ db, provider: new FolderMigrationProvider(MIGRATIONS_DIR) });
  const { error, results } = await migrator.migrateToLatest();
  const applied = (results ?? []).filter((r) => r.status === 'Success').map((r) => r.migrationName);
  if (error) {
    const failed = (results ?? []).find((r) => r.status === 'Error');
    const cause = error instanceof Error ? error : new Error(String(error));
    throw new MigrationError(`migration ${failed?.migrationName ?? '(unknown)'} failed: ${cause.message}`, { cause });
  }
  return applied;
}

/** Longest wait for the database's answer to a readiness check, ms. */
export const READY_TIMEOUT_MS = 1000;

/** True when the database answers `select 1` within `timeoutMs` (getting a pool client included). */
export async function ping(db: Kysely<any>, timeoutMs = READY_TIMEOUT_MS): Promise<boolean> {
  let timer: NodeJS.Timeout | undefined;
  const timedOut = new Promise<false>((resolve) => {
    timer = setTimeout(() => resolve(false), timeoutMs);
  });
  // A query that has to wait for a pool client counts as failed after timeoutMs: a pool whose
  // every client is held (a stuck transaction) makes the service unready, not a readiness check
  // that never answers. The late query still returns its client to the pool when it ends.
  const answered = sql`select 1`.execute(db).then(
    () => true,
    () => false,
  );
  try {
    return await Promise.race([answered, timedOut]);
  } finally {
    clearTimeout(timer);
  }
}
