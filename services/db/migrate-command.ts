import { parseArgs } from 'node:util';
import { loadConfig } from '../config.js';
import { openDatabase } from './database.js';
import { migrateToLatest } from './migrator.js';

export async function run(argv: string[]): Promise<number> {
  const { values } = parseArgs({ args: argv, options: { help: { type: 'boolean', short: 'h' } } });
  if (values.help) {
    process.stdout.write(
      'usage: thermocline migrate\n\nApplies pending migrations to DATABASE_URL (or the embedded database in PGLITE_DIR) and exits.\n',
    );
    return 0;
  }
  const config = loadConfig();
  const database = await openDatabase({ databaseUrl: config.databaseUrl, pgliteDir: config.pgliteDir });
  try {
    process.stderr.write(`migrating ${database.description}\n`);
    const applied = await migrateToLatest(database.db);
    process.stderr.write(applied.length ? `applied: ${applied.join(', ')}\n` : 'already up to date\n');
    return 0;
  } catch (err) {
    process.stderr.write(`${err instanceof Error ? err.message : String(err)}\n`);
    return 1;
  } finally {
    await database.close();
  }
}
