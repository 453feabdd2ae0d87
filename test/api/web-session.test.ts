import { sql } from 'kysely';
import { beforeAll, describe, expect, it } from 'vitest';
import { SAFETY_CAUTION } from '../../services/analysis/findings/finding.js';
import { createApiKeysRepository } from '../../services/db/api-keys-repository.js';
import { seedBoardVehicle } from '../helpers/board-fleet.js';
import { createTestApp, useTestApp } from '../helpers/test-app.js';
import { DAY_MS } from '../../services/time/durations.js';

const t = useTestApp();
const NOW = Date.now();
let readKey: string;
let ingestKey: string;
let otherKey: string;
let adminKey: string;

interface SignedIn {
  cookie: string;
  csrf: string;
  setCookie: string;
  body: Record<string, unknown>;
}

async function signIn(key: string, headers: Record<string, string> = {}, app = t.app): Promise<SignedIn> {
  const res = await app.inject({ method: 'POST', url: '/app/session', payload: { key }, headers });
  expect(res.statusCode, res.body).toBe(201);
  const setCookie = String(res.headers['set-cookie']);
  return { cookie: setCookie.split(';')[0]!, csrf: res.json().csrfToken, setCookie, body: res.json() };
}

const withSession = (
  s: SignedIn,
  method: 'GET' | 'POST' | 'PUT' | 'DELETE',
  url: string,
  opts: { csrf?: string | null; payload?: Record<string, unknown> } = {},
) => {
  const csrf = opts.csrf === undefined ? s.csrf : opts.csrf;
  return t.app.inject({
    method,
    url,
    headers: { cookie: s.cookie, ...(csrf ? { 'x-csrf-token': csrf } : {}) },
    ...(opts.payload ? { payload: opts.payload } : {}),
  });
};

const findingOf = async (s: SignedIn, vehicleId: string) =>
  (
    (await withSession(s, 'GET', `/v1/vehicles/${vehicleId}/findings`)).json().findings as Array<{
      id: string;
      status: string;
    }>
  )[0]!;

beforeAll(async () => {
  const db = t.tdb.handle.db;
  readKey = await t.createKey('fleet-a', ['read']);
  ingestKey = await t.createKey('fleet-a', ['ingest']);
  otherKey = await t.createKey('fleet-b', ['read']);
  adminKey = await t.createAdminKey();
  await seedBoardVehicle(db, {
    vehicleId: 'A-1',
    fleetId: 'fleet-a',
    depot: 'north',
    lastReadingMs: NOW - 3_600_000,
    findings: [{ kind: 'overheating-trend', severity: 'critical', onsetMs: NOW - 3 * DAY_MS }],
  });
  await seedBoardVehicle(db, {
    vehicleId: 'B-1',
    fleetId: 'fleet-b',
    lastReadingMs: NOW - 3_600_000,
    findings: [{ kind: 'slow-warmup', severity: 'warning', onsetMs: NOW - 9 * DAY_MS }],
  });
});

describe('signing in to the web view', () => {
  it('turns a read key into an HttpOnly, SameSite=Strict session cookie (not Secure over plain HTTP) with a CSRF token', async () => {
    const s = await signIn(readKey);
    expect(s.setCookie).toMatch(/^tc_session=[A-Za-z0-9_-]{40,};/);
    expect(s.setCookie).toMatch(/; HttpOnly/);
    expect(s.setCookie).toMatch(/; SameSite=Strict/);
    expect(s.setCookie).toMatch(/; Path=\//);
    expect(s.setCookie).not.toMatch(/Secure/);
    expect(s.body).toMatchObject({ fleetId: 'fleet-a', admin: false, canEditProfiles: false, scopes: ['read'] });
    expect(s.csrf).toMatch(/^[A-Za-z0-9_-]{30,}$/);
    // The key is not in the cookie: the session token is random.
    expect(s.cookie).not.toContain(readKey.split('_')[1]);
  });

  it('refuses an ingest-only key (403), an unknown key (401) and a sign-in from another origin (403)', async () => {
    const ingest = await t.app.inject({ method: 'POST', url: '/app/session', payload: { key: ingestKey } });
    expect(ingest.statusCode).toBe(403);
    expect(ingest.headers['set-cookie']).toBeUndefined();
    expect(
      (
        await t.app.inject({
          method: 'POST',
          url: '/app/session',
          payload: { key: 'tck_0123456789abcdef_notarealsecretnotarealsecretnotareal' },
        })
      ).statusCode,
    ).toBe(401);
    const cross = await t.app.inject({
      method: 'POST',
      url: '/app/session',
      payload: { key: readKey },
      headers: { origin: 'https://elsewhere.example' },
    });
    expect(cross.statusCode).toBe(403);
    expect((await t.app.inject({ method: 'POST', url: '/app/session', payload: {} })).statusCode).toBe(400);
  });

  it('is used by /v1 like a bearer key, with the same fleet isolation', async () => {
    const s = await signIn(readKey);
    const atRisk = await withSession(s, 'GET', '/v1/fleet/at-risk');
    expect(atRisk.statusCode).toBe(200);
    expect(atRisk.json().vehicles.map((v: { vehicleId: string }) => v.vehicleId)).toEqual(['A-1']);
    expect((await withSession(s, 'GET', '/v1/vehicles/B-1')).statusCode).toBe(403);
    expect((await withSession(s, 'GET', '/v1/vehicles/B-1/readings')).statusCode).toBe(403);
    expect((await withSession(s, 'GET', '/app/session')).json()).toMatchObject({
      fleetId: 'fleet-a',
      csrfToken: s.csrf,
    });
  });

  it('answers a vehicle page of another fleet 404, as for an unknown vehicle, and its own 200', async () => {
    const s = await signIn(readKey);
    const own = await withSession(s, 'GET', '/app/vehicles/A-1');
    expect(own.statusCode).toBe(200);
    expect(own.headers['content-type']).toMatch(/text\/html/);
    expect((await withSession(s, 'GET', '/app/vehicles/B-1')).statusCode).toBe(404);
    expect((await withSession(s, 'GET', '/app/vehicles/NO-SUCH')).statusCode).toBe(404);
    const malformed = await withSession(s, 'GET', '/app/vehicles/%20bad%20id');
    expect(malformed.statusCode).toBe(404);
    expect(malformed.headers['content-type']).toMatch(/text\/html/);
  });
});

describe('CSRF protection of a session', () => {
  it('refuses a state-changing request without the token or with a wrong one (403), and changes nothing', async () => {
    const s = await signIn(readKey);
    const f = await findingOf(s, 'A-1');
    const none = await withSession(s, 'POST', `/v1/findings/${f.id}/acknowledge`, { csrf: null });
    expect(none.statusCode).toBe(403);
    expect(none.json().error.code).toBe('csrf_failed');
    const wrong = await withSession(s, 'POST', `/v1/findings/${f.id}/acknowledge`, {
      csrf: `${s.csrf.slice(0, -2)}xx`,
    });
    expect(wrong.statusCode).toBe(403);
    const other = await signIn(readKey);
    expect((await withSession(s, 'POST', `/v1/findings/${f.id}/acknowledge`, { csrf: other.csrf })).statusCode).toBe(
      403,
    );
    expect((await findingOf(s, 'A-1')).status).toBe('open');
  });

  it("accepts the request with the session's token, and a bearer key needs none", async () => {
    const s = await signIn(readKey);
    const f = await findingOf(s, 'A-1');
    const ok = await withSession(s, 'POST', `/v1/findings/${f.id}/acknowledge`);
    expect(ok.statusCode, ok.body).toBe(200);
    expect(ok.json().status).toBe('acknowledged');
    const bearer = await t.app.inject({ method: 'POST', url: `/v1/findings/${f.id}/reopen`, headers: t.auth(readKey) });
    expect(bearer.json().status).toBe('open');
  });
});

describe('ending a session', () => {
  it('signs out only with the CSRF token; afterwards the cookie is cleared and refused', async () => {
    const s = await signIn(readKey);
    expect((await withSession(s, 'DELETE', '/app/session', { csrf: null })).statusCode).toBe(403);
    const out = await withSession(s, 'DELETE', '/app/session');
    expect(out.statusCode).toBe(200);
    expect(String(out.headers['set-cookie'])).toMatch(/^tc_session=; .*Max-Age=0/);
    expect((await withSession(s, 'GET', '/v1/fleet/at-risk')).statusCode).toBe(401);
  });

  it('expires: an expired session is refused; use slides the idle expiry but never past the absolute one', async () => {
    const db = t.tdb.handle.db;
    const s = await signIn(readKey);
    const expiresAt = Date.parse(s.body.expiresAt as string);
    expect(expiresAt - Date.now()).toBeGreaterThan(59 * 60_000);
    expect(expiresAt - Date.now()).toBeLessThanOrEqual(60 * 60_000);
    await sql`update web_sessions set expires_at = now() + interval '10 minutes', max_expires_at = now() + interval '20 minutes'
              where csrf_token = ${s.csrf}`.execute(db);
    expect((await withSession(s, 'GET', '/v1/fleet/at-risk')).statusCode).toBe(200);
    const row = await sql<{
      e: Date;
      m: Date;
    }>`select expires_at as e, max_expires_at as m from web_sessions where csrf_token = ${s.csrf}`.execute(db);
    expect(row.rows[0]!.e.getTime()).toBe(row.rows[0]!.m.getTime());
    await sql`update web_sessions set expires_at = now() - interval '1 second' where csrf_token = ${s.csrf}`.execute(
      db,
    );
    const expired = await withSession(s, 'GET', '/v1/fleet/at-risk');
    expect(expired.statusCode).toBe(401);
    expect(expired.json().error.message).toMatch(/sign in again/);
  });

  it('ends every session of a key that is revoked later', async () => {
    const key = await t.createKey('fleet-a', ['read']);
    const s1 = await signIn(key);
    const s2 = await signIn(key);
    expect((await withSession(s1, 'GET', '/v1/fleet/at-risk')).statusCode).toBe(200);
    expect(await createApiKeysRepository(t.tdb.handle.db).revoke(key)).toBe(true);
    expect((await withSession(s1, 'GET', '/v1/fleet/at-risk')).statusCode).toBe(401);
    expect((await withSession(s2, 'GET', '/app/session')).statusCode).toBe(401);
    // The next sign-in clears the revoked key's sessions from the table.
    await signIn(readKey);
    const left = await sql<{
      n: number;
    }>`select count(*)::int as n from web_sessions where csrf_token in (${s1.csrf}, ${s2.csrf})`.execute(
      t.tdb.handle.db,
    );
    expect(left.rows[0]!.n).toBe(0);
  });
});

describe('an admin in the web view', () => {
  it('chooses the fleet (with the CSRF token) and then sees exactly that fleet', async () => {
    const s = await signIn(adminKey);
    expect(s.body).toMatchObject({ fleetId: null, admin: true, canEditProfiles: true });
    const fleets = (await withSession(s, 'GET', '/app/fleets'))
      .json()
      .fleets.map((f: { fleetId: string }) => f.fleetId);
    expect(fleets).toEqual(expect.arrayContaining(['fleet-a', 'fleet-b']));
    expect(
      (await withSession(s, 'PUT', '/app/session/fleet', { csrf: null, payload: { fleetId: 'fleet-a' } })).statusCode,
    ).toBe(403);
    expect(
      (await withSession(s, 'PUT', '/app/session/fleet', { payload: { fleetId: 'no-such-fleet' } })).statusCode,
    ).toBe(404);
    const chosen = await withSession(s, 'PUT', '/app/session/fleet', { payload: { fleetId: 'fleet-a' } });
    expect(chosen.json()).toMatchObject({ fleetId: 'fleet-a', admin: true });
    expect(
      (await withSession(s, 'GET', '/v1/fleet/at-risk')).json().vehicles.map((v: { vehicleId: string }) => v.vehicleId),
    ).toEqual(['A-1']);
    expect((await withSession(s, 'GET', '/v1/vehicles/B-1')).statusCode).toBe(403);
    expect((await withSession(s, 'GET', '/app/vehicles/B-1')).statusCode).toBe(404);
  });

  it('is the only session that may change fleet', async () => {
    const s = await signIn(readKey);
    expect((await withSession(s, 'PUT', '/app/session/fleet', { payload: { fleetId: 'fleet-b' } })).statusCode).toBe(
      403,
    );
    expect(
      (await withSession(s, 'GET', '/app/fleets')).json().fleets.map((f: { fleetId: string }) => f.fleetId),
    ).toEqual(['fleet-a']);
  });
});

describe('the vehicle summary the vehicle page reads', () => {
  it('gives the priority, the checks without the safety caution and the cautions, for the own fleet only', async () => {
    const res = await t.app.inject({ method: 'GET', url: '/v1/vehicles/A-1/summary', headers: t.auth(readKey) });
    expect(res.statusCode, res.body).toBe(200);
    const body = res.json();
    expect(body).toMatchObject({
      vehicleId: 'A-1',
      priority: 'book now',
      unresolved: 1,
      checks: ['Check the overheating-trend.'],
    });
    expect(body.cautions[0]).toBe(SAFETY_CAUTION);
    expect(body.cautions.length).toBe(3);
    expect(body.peaks.boilingPointC).toBeGreaterThan(100);
    expect(
      (await t.app.inject({ method: 'GET', url: '/v1/vehicles/A-1/summary', headers: t.auth(otherKey) })).statusCode,
    ).toBe(403);
    expect(
      (await t.app.inject({ method: 'GET', url: '/v1/vehicles/NONE/summary', headers: t.auth(readKey) })).statusCode,
    ).toBe(404);
  });
});

describe('pages and files', () => {
  it('sends a browser from / to /app/ and answers an API client 404', async () => {
    const browser = await t.app.inject({
      method: 'GET',
      url: '/',
      headers: { accept: 'text/html,application/xhtml+xml,application/xml;q=0.9,*/*;q=0.8' },
    });
    expect(browser.statusCode).toBe(302);
    expect(browser.headers.location).toBe('/app/');
    expect((await t.app.inject({ method: 'GET', url: '/', headers: { accept: 'application/json' } })).statusCode).toBe(
      404,
    );
    expect(
      (await t.app.inject({ method: 'GET', url: '/', headers: { accept: 'application/json, text/html;q=0.5' } }))
        .statusCode,
    ).toBe(404);
  });

  it('serves the page with a strict content security policy and echarts from the installed package, gzipped', async () => {
    const page = await t.app.inject({ method: 'GET', url: '/app/' });
    expect(page.statusCode).toBe(200);
    expect(page.headers['content-security-policy']).toMatch(/default-src 'none'; script-src 'self'/);
    expect(page.body).toContain('/app/assets/app.js');
    expect(page.body).not.toMatch(/https?:\/\//);
    // The charting library is loaded by the page's own module, from the service.
    expect((await t.app.inject({ method: 'GET', url: '/app/assets/charts.js' })).body).toContain(
      "'/app/assets/vendor/echarts.min.js'",
    );
    const echarts = await t.app.inject({
      method: 'GET',
      url: '/app/assets/vendor/echarts.min.js',
      headers: { 'accept-encoding': 'gzip' },
    });
    expect(echarts.statusCode).toBe(200);
    expect(echarts.headers['content-encoding']).toBe('gzip');
    expect(echarts.headers['content-type']).toMatch(/javascript/);
    const again = await t.app.inject({
      method: 'GET',
      url: '/app/assets/vendor/echarts.min.js',
      headers: { 'if-none-match': String(echarts.headers.etag) },
    });
    expect(again.statusCode).toBe(304);
    expect((await t.app.inject({ method: 'GET', url: '/app/assets/../../package.json' })).statusCode).toBe(404);
    expect((await t.app.inject({ method: 'GET', url: '/app/assets/nothing.js' })).statusCode).toBe(404);
  });
});

describe('behind a TLS-terminating proxy', () => {
  it('marks the cookie Secure when TRUST_PROXY is set and the proxy says https, and not when the header is not trusted', async () => {
    const behind = await createTestApp({ trustProxy: true }, undefined);
    try {
      const key = await behind.createKey('fleet-p', ['read']);
      const secure = await signIn(key, { 'x-forwarded-proto': 'https', host: 'planner.example' }, behind.app);
      expect(secure.setCookie).toMatch(/; Secure/);
      const plain = await signIn(key, {}, behind.app);
      expect(plain.setCookie).not.toMatch(/Secure/);
    } finally {
      await behind.close();
    }
    expect((await signIn(readKey, { 'x-forwarded-proto': 'https' })).setCookie).not.toMatch(/Secure/);
  });
});

describe('rate limits of sessions', () => {
  it('counts failed sign-ins as failed authentications: the address is then answered 429, even with a good key', async () => {
    const limited = await createTestApp({ authFailuresPerMinute: 2 });
    try {
      const key = await limited.createKey('fleet-f', ['read']);
      const bad = () =>
        limited.app.inject({
          method: 'POST',
          url: '/app/session',
          payload: { key: 'tck_0123456789abcdef_guessguessguessguessguessguessguess' },
        });
      expect([(await bad()).statusCode, (await bad()).statusCode]).toEqual([401, 401]);
      const good = await limited.app.inject({ method: 'POST', url: '/app/session', payload: { key } });
      expect(good.statusCode).toBe(429);
      expect(good.headers['retry-after']).toBeDefined();
    } finally {
      await limited.close();
    }
  });

  it('gives each session its own bucket, so planners behind one office address do not share one', async () => {
    const limited = await createTestApp({ rateLimitPerMinute: 3 });
    try {
      const key = await limited.createKey('fleet-r', ['read']);
      const a = await signIn(key, {}, limited.app);
      const b = await signIn(key, {}, limited.app);
      const get = (s: SignedIn) =>
        limited.app.inject({ method: 'GET', url: '/v1/fleet/at-risk', headers: { cookie: s.cookie } });
      const statuses = [];
      for (let i = 0; i < 4; i++) statuses.push((await get(a)).statusCode);
      expect(statuses).toEqual([200, 200, 200, 429]);
      expect((await get(b)).statusCode).toBe(200);
    } finally {
      await limited.close();
    }
  });
});
