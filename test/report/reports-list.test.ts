import { beforeAll, describe, expect, it } from 'vitest';
import { useTestApp } from '../helpers/test-app.js';

const t = useTestApp();
let key: string;
let other: string;
const WEEKS = ['2026-W44', '2026-W45', '2026-W46', '2026-W47', '2026-W48'];
const get = (url: string, k = key) => t.app.inject({ method: 'GET', url, headers: t.auth(k) });

beforeAll(async () => {
  key = await t.createKey('fleet-rl', ['read']);
  other = await t.createKey('fleet-rl-other', ['read']);
  for (const week of WEEKS) expect((await get(`/v1/reports/weekly?week=${week}`)).statusCode).toBe(200);
});

describe('GET /v1/reports/weekly/archive', () => {
  it('lists the archived weeks newest first, a page at a time, each once while another week is archived meanwhile', async () => {
    const seen: Array<{ isoWeek: string; url: string; complete: boolean | null; workItems: number | null }> = [];
    let cursor: string | null = null;
    let pages = 0;
    do {
      const res = await get(`/v1/reports/weekly/archive?limit=2${cursor ? `&cursor=${cursor}` : ''}`);
      expect(res.statusCode, res.body).toBe(200);
      seen.push(...res.json().reports);
      cursor = res.json().nextCursor;
      if (++pages === 1) expect((await get('/v1/reports/weekly?week=2026-W43')).statusCode).toBe(200);
    } while (cursor);
    expect(seen.map((r) => r.isoWeek)).toEqual([...WEEKS.reverse(), '2026-W43']);
    expect((await get('/v1/reports/weekly/archive')).json().fleetId).toBe('fleet-rl');
    expect(seen[0]).toMatchObject({ url: '/v1/reports/weekly?week=2026-W48', complete: true, workItems: 0 });
  });

  it('keeps fleets apart and refuses a cursor it did not give out', async () => {
    expect((await get('/v1/reports/weekly/archive', other)).json().reports).toEqual([]);
    expect((await get('/v1/reports/weekly/archive?fleet=fleet-rl', other)).statusCode).toBe(403);
    expect((await get('/v1/reports/weekly/archive?cursor=WzFd')).statusCode).toBe(400);
    expect((await get('/v1/reports/weekly/archive?limit=521')).statusCode).toBe(400);
  });
});
