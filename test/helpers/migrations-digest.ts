import { createHash } from 'node:crypto';
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';

/** A short hash of the migrations folder: names a template database built from it. */
export function migrationsDigest(): string {
  const dir = join(import.meta.dirname, '..', '..', 'migrations');
  const digest = createHash('sha256');
  for (const f of readdirSync(dir).sort()) digest.update(f).update(readFileSync(join(dir, f)));
  return digest.digest('hex').slice(0, 12);
}
