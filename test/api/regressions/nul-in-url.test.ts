import { beforeAll, describe, expect, it } from 'vitest';
import { useTestApp } from '../../helpers/test-app.js';

// Regression: a NUL character in a query or path value (%00) reached Postgres, which cannot hold
// U+0000 in text, and the failed query answered 500 (a depot filter, a depot id). Now 400, before
// any database work.

const t = useTestApp();
let key: string;
beforeAll(async () => {
  key = await t.createKey('nul-fleet', ['read']);
});

describe('a NUL character in the URL', () => {
  it.each([
    '/v1/fleet/at-risk?depot=%00',
    '/v1/findings?depot=a%00',
    '/v1/vehicles?depot=%00',
    '/v1/depots/%00',
    '/v1/fleet/vehicles?q=%00',
    '/v1/fleet/vehicles?depot=x%00y',
    '/v1/findings/%00',
  ])('answers 400 to %s', async (url) => {
    const res = await t.app.inject({ method: 'GET', url, headers: t.auth(key) });
    expect(res.statusCode, res.body).toBe(400);
    expect(res.json().error.code).toBe('validation_failed');
  });

  it('still takes a literal percent sign followed by 00 (%2500)', async () => {
    const res = await t.app.inject({ method: 'GET', url: '/v1/fleet/vehicles?q=%2500', headers: t.auth(key) });
    expect(res.statusCode, res.body).toBe(200);
  });

  it('answers 401, not 400, without a key', async () => {
    expect((await t.app.inject({ method: 'GET', url: '/v1/findings?depot=%00' })).statusCode).toBe(401);
  });
});
