import { createHash, randomBytes, timingSafeEqual } from 'node:crypto';
import type { Kysely } from 'kysely';
import type { Database } from './schema.js';

export const SCOPES = ['ingest', 'read', 'admin'] as const;
export type Scope = (typeof SCOPES)[number];

/** Who a request acts for, once its key is verified. `fleetId` null means every fleet (admin). */
export interface Principal {
  keyId: string;
  fleetId: string | null;
  scopes: ReadonlySet<Scope>;
}

export interface ApiKeyRow {
  keyId: string;
  fleetId: string | null;
  scopes: Scope[];
  label: string | null;
  createdAt: Date;
  revokedAt: Date | null;
}

const KEY_FORMAT = /^tck_([a-f0-9]{16})_([A-Za-z0-9_-]{32,})$/;

// Keys are 192 random bits, so one round of SHA-256 is enough: a slow password hash would only
// cost time on every request without making a guess any less hopeless.
function hashSecret(secret: string): string {
  return createHash('sha256').update(secret).digest('hex');
}

/**
 * Splits a presented key into its id and secret. Keys made here look like `tck_<id>_<secret>`;
 * any other string (the operator's ADMIN_API_KEY) gets an id derived from its hash.
 */
export function splitKey(key: string): { keyId: string; secret: string } {
  const m = KEY_FORMAT.exec(key);
  if (m) return { keyId: m[1]!, secret: m[2]! };
  return { keyId: `env_${hashSecret(key).slice(0, 16)}`, secret: key };
}

export function parseScopes(text: string): Scope[] {
  const scopes = text
    .split(',')
    .map((s) => s.trim())
    .filter(Boolean);
  const bad = scopes.filter((s) => !(SCOPES as readonly string[]).includes(s));
  if (bad.length > 0 || scopes.length === 0) {
    throw new Error(`scopes must be a comma-separated list of ${SCOPES.join(', ')}; got '${text}'`);
  }
  return [...new Set(scopes)] as Scope[];
}

export function createApiKeysRepository(db: Kysely<Database>) {
  return {
    /** Makes a new key; the plain key is returned once and never stored. */
    async create(input: {
      fleetId: string | null;
      scopes: Scope[];
      label?: string | null;
    }): Promise<{ key: string; keyId: string }> {
      if (input.fleetId === null && !input.scopes.includes('admin'))
        throw new Error('a key without a fleet must have the admin scope');
      const keyId = randomBytes(8).toString('hex');
      const secret = randomBytes(24).toString('base64url');
      await db
        .insertInto('api_keys')
        .values({
          key_id: keyId,
          fleet_id: input.fleetId,
          scopes: input.scopes,
          secret_hash: hashSecret(secret),
          label: input.label ?? null,
          revoked_at: null,
        })
        .execute();
      return { key: `tck_${keyId}_${secret}`, keyId };
    },

    /** Stores the operator's bootstrap admin key (idempotent; re-enables it if it was revoked). */
    async ensureBootstrapAdmin(key: string): Promise<string> {
      const { keyId, secret } = splitKey(key);
      await db
        .insertInto('api_keys')
        .values({
          key_id: keyId,
          fleet_id: null,
          scopes: ['admin', 'read', 'ingest'],
          secret_hash: hashSecret(secret),
          label: 'ADMIN_API_KEY',
          revoked_at: null,
        })
        .onConflict((oc) => oc.column('key_id').doUpdateSet({ secret_hash: hashSecret(secret), revoked_at: null }))
        .execute();
      return keyId;
    },

    /** The principal for a presented key, or undefined when unknown, wrong or revoked. */
    async verify(key: string): Promise<Principal | undefined> {
      const { keyId, secret } = splitKey(key);
      const row = await db
        .selectFrom('api_keys')
        .select(['key_id', 'fleet_id', 'scopes', 'secret_hash', 'revoked_at'])
        .where('key_id', '=', keyId)
        .executeTakeFirst();
      if (!row || row.revoked_at !== null) return undefined;
      const presented = Buffer.from(hashSecret(secret), 'hex');
      const stored = Buffer.from(row.secret_hash, 'hex');
      if (presented.length !== stored.length || !timingSafeEqual(presented, stored)) return undefined;
      return { keyId: row.key_id, fleetId: row.fleet_id, scopes: new Set(row.scopes as Scope[]) };
    },

    async list(fleetId?: string): Promise<ApiKeyRow[]> {
      let q = db
        .selectFrom('api_keys')
        .select(['key_id', 'fleet_id', 'scopes', 'label', 'created_at', 'revoked_at'])
        .orderBy('created_at')
        .orderBy('key_id');
      if (fleetId) q = q.where('fleet_id', '=', fleetId);
      const rows = await q.execute();
      return rows.map((r) => ({
        keyId: r.key_id,
        fleetId: r.fleet_id,
        scopes: r.scopes as Scope[],
        label: r.label,
        createdAt: r.created_at,
        revokedAt: r.revoked_at,
      }));
    },

    /** Revokes a key by id (or by the whole key); returns false when there is no such key. */
    async revoke(keyIdOrKey: string): Promise<boolean> {
      const keyId =
        /^[a-f0-9]{16}$/.test(keyIdOrKey) || keyIdOrKey.startsWith('env_') ? keyIdOrKey : splitKey(keyIdOrKey).keyId;
      const result = await db
        .updateTable('api_keys')
        .set({ revoked_at: new Date() })
        .where('key_id', '=', keyId)
        .where('revoked_at', 'is', null)
        .executeTakeFirst();
      return Number(result.numUpdatedRows) > 0;
    },
  };
}

export type ApiKeysRepository = ReturnType<typeof createApiKeysRepository>;
