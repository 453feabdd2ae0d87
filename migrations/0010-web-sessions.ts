import { sql, type Kysely } from 'kysely';

/**
 * Sessions of the planner web view (`/app/`): a planner signs in with an API key once and the
 * browser then holds only an opaque session cookie.
 * - `session_hash`: SHA-256 of the cookie's random token (the token itself is never stored, as
 *   with API keys);
 * - `key_id`: the API key that signed in; the session's scopes and fleet come from that key at
 *   every request, so revoking the key ends its sessions at once;
 * - `fleet_id`: the fleet the session acts on (the key's own fleet, or the one an admin chose;
 *   null: an admin that has not chosen yet);
 * - `csrf_token`: the synchroniser token every state-changing request must echo in a header;
 * - `expires_at`: slides with use up to `max_expires_at` (idle and absolute expiry).
 * A small table that does not grow with the fleet: on Citus it would be a reference table.
 */
export async function up(db: Kysely<any>): Promise<void> {
  await sql`
    CREATE TABLE web_sessions (
      session_hash   text PRIMARY KEY,
      key_id         text NOT NULL,
      fleet_id       text,
      csrf_token     text NOT NULL,
      created_at     timestamptz NOT NULL DEFAULT now(),
      expires_at     timestamptz NOT NULL,
      max_expires_at timestamptz NOT NULL
    )`.execute(db);
  await sql`CREATE INDEX web_sessions_key_idx ON web_sessions (key_id)`.execute(db);
  await sql`CREATE INDEX web_sessions_expires_idx ON web_sessions (expires_at)`.execute(db);
}
