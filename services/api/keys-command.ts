import { parseArgs } from 'node:util';
import { loadConfig } from '../config.js';
import { createApiKeysRepository, parseScopes } from '../db/api-keys-repository.js';
import { openDatabase } from '../db/database.js';
import { createFleetsRepository } from '../db/fleets-repository.js';
import { migrateToLatest } from '../db/migrator.js';

const HELP = `usage:
  thermocline keys create --fleet <fleetId> --scope ingest,read [--label text] [--fleet-name "Name"]
  thermocline keys create --admin [--label text]
  thermocline keys list [--fleet <fleetId>]
  thermocline keys revoke <keyId>

Scopes: ingest (post readings, set vehicle profiles), read (read data; planner actions such as
acknowledging findings and recording service events), admin (everything, every fleet).
'create' prints the new key once: store it, it cannot be shown again. A new fleet id is created.
`;

export async function run(argv: string[]): Promise<number> {
  const { values, positionals } = parseArgs({
    args: argv,
    allowPositionals: true,
    options: {
      fleet: { type: 'string' },
      'fleet-name': { type: 'string' },
      scope: { type: 'string' },
      admin: { type: 'boolean' },
      label: { type: 'string' },
      help: { type: 'boolean', short: 'h' },
    },
  });
  const [action, arg] = positionals;
  if (values.help || !action) {
    process.stdout.write(HELP);
    return values.help ? 0 : 2;
  }
  const config = loadConfig();
  const database = await openDatabase({ databaseUrl: config.databaseUrl, pgliteDir: config.pgliteDir });
  try {
    await migrateToLatest(database.db);
    const keys = createApiKeysRepository(database.db);
    if (action === 'create') {
      if (values.admin) {
        const { key, keyId } = await keys.create({
          fleetId: null,
          scopes: ['admin', 'read', 'ingest'],
          label: values.label ?? null,
        });
        process.stdout.write(`${key}\n`);
        process.stderr.write(`created admin key ${keyId} (every fleet)\n`);
        return 0;
      }
      if (!values.fleet || !values.scope) {
        process.stderr.write('keys create needs --fleet and --scope (or --admin)\n');
        return 2;
      }
      const scopes = parseScopes(values.scope);
      const created = await createFleetsRepository(database.db).ensure(values.fleet, values['fleet-name']);
      const { key, keyId } = await keys.create({ fleetId: values.fleet, scopes, label: values.label ?? null });
      process.stdout.write(`${key}\n`);
      process.stderr.write(
        `created key ${keyId} for fleet ${values.fleet}${created ? ' (new fleet)' : ''} with scopes ${scopes.join(',')}\n`,
      );
      return 0;
    }
    if (action === 'list') {
      const rows = await keys.list(values.fleet);
      process.stdout.write(
        `${'key id'.padEnd(22)} ${'fleet'.padEnd(16)} ${'scopes'.padEnd(20)} ${'created'.padEnd(24)} status\n`,
      );
      for (const r of rows) {
        const status = r.revokedAt ? `revoked ${r.revokedAt.toISOString()}` : 'active';
        process.stdout.write(
          `${r.keyId.padEnd(22)} ${(r.fleetId ?? '(all fleets)').padEnd(16)} ${r.scopes.join(',').padEnd(20)} ${r.createdAt.toISOString().padEnd(24)} ${status}${r.label ? `  ${r.label}` : ''}\n`,
        );
      }
      return 0;
    }
    if (action === 'revoke') {
      if (!arg) {
        process.stderr.write('keys revoke needs the key id (see keys list)\n');
        return 2;
      }
      if (await keys.revoke(arg)) {
        process.stderr.write(`revoked ${arg}\n`);
        return 0;
      }
      process.stderr.write(`no active key '${arg}'\n`);
      return 1;
    }
    process.stderr.write(`unknown keys action '${action}'\n${HELP}`);
    return 2;
  } catch (err) {
    process.stderr.write(`keys ${action}: ${err instanceof Error ? err.message : String(err)}\n`);
    return 1;
  } finally {
    await database.close();
  }
}
