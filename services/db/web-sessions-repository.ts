import { createHash, randomBytes } from 'node:crypto';
import type { Kysely } from 'kysely';
import type { Scope } from './api-keys-repository.js';
import type { Database } from './schema.js';

/** A live web-view session with the scopes and fleet of the key that opened it. */
export interface WebSession {
  sessionHash: string;
  keyId: string;
  /** The key's own fleet (null: an admin key). */
  keyFleetId: string | null;
  /** The fleet the session acts on: the key's fleet, or the one an admin chose (null: not chosen). */
  fleetId: string | null;
  scopes: Scope[];
  csrfToken: string;
  expiresAt: Date;
  maxExpiresAt: Date;
}

/** The session tokens are 256 random bits: one round of SHA-256 is enough (as for API keys). */
export function sessionHash(token: string): string {
  return createHash('sha256').update(token).digest('hex');
}

/**
 * Server-side sessions of the planner web view (migrations/0010). A lookup joins the API key,
 * so a revoked key ends its sessions at the next request.
 */
export function createWebSessionsRepository(db: Kysely<Database>) {
  return {
    /** Opens a session; returns the cookie token (shown once, stored hashed) and the CSRF token. */
    async create(input: {
      keyId: string;
      fleetId: string | null;
      idleMs: number;
      maxMs: number;
      nowMs: number;
    }): Promise<{ token: string; csrfToken: string; expiresAt: Date }> {
      const token = randomBytes(32).toString('base64url');
      const csrfToken = randomBytes(24).toString('base64url');
      const expiresAt = new Date(input.nowMs + Math.min(input.idleMs, input.maxMs));
      await db
        .insertInto('web_sessions')
        .values({
          session_hash: sessionHash(token),
          key_id: input.keyId,
          fleet_id: input.fleetId,
          csrf_token: csrfToken,
          expires_at: expiresAt,
          max_expires_at: new Date(input.nowMs + input.maxMs),
        })
        .execute();
      return { token, csrfToken, expiresAt };
    },

    /** The live session of a cookie token: not expired at `nowMs`, its key not revoked. */
    async find(token: string, nowMs: number): Promise<WebSession | undefined> {
      const row = await db
        .selectFrom('web_sessions as s')
        .innerJoin('api_keys as k', 'k.key_id', 's.key_id')
        .select([
          's.session_hash',
          's.key_id',
          's.fleet_id',
          's.csrf_token',
          's.expires_at',
          's.max_expires_at',
          'k.fleet_id as key_fleet_id',
          'k.scopes',
        ])
        .where('s.session_hash', '=', sessionHash(token))
        .where('s.expires_at', '>', new Date(nowMs))
        .where('k.revoked_at', 'is', null)
        .executeTakeFirst();
      if (!row) return undefined;
      return {
        sessionHash: row.session_hash,
        keyId: row.key_id,
        keyFleetId: row.key_fleet_id,
        fleetId: row.key_fleet_id ?? row.fleet_id,
        scopes: row.scopes as Scope[],
        csrfToken: row.csrf_token,
        expiresAt: row.expires_at,
        maxExpiresAt: row.max_expires_at,
      };
    },

    /** Slides the idle expiry forward (never past the absolute one). */
    async extend(hash: string, expiresAt: Date): Promise<void> {
      await db.updateTable('web_sessions').set({ expires_at: expiresAt }).where('session_hash', '=', hash).execute();
    },

    /** The fleet an admin's session acts on from now. */
    async setFleet(hash: string, fleetId: string): Promise<void> {
      await db.updateTable('web_sessions').set({ fleet_id: fleetId }).where('session_hash', '=', hash).execute();
    },

    /** Ends a session (sign-out). */
    async remove(hash: string): Promise<void> {
      await db.deleteFrom('web_sessions').where('session_hash', '=', hash).execute();
    },

    /** Drops sessions that expired before `nowMs` or whose key is revoked; returns how many. */
    async purge(nowMs: number): Promise<number> {
      const result = await db
        .deleteFrom('web_sessions')
        .where((eb) =>
          eb.or([
            eb('expires_at', '<=', new Date(nowMs)),
            eb('key_id', 'in', eb.selectFrom('api_keys').select('key_id').where('revoked_at', 'is not', null)),
          ]),
        )
        .executeTakeFirst();
      return Number(result.numDeletedRows);
    },
  };
}

export type WebSessionsRepository = ReturnType<typeof createWebSessionsRepository>;
