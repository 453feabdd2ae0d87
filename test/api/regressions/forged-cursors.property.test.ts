import fc from 'fast-check';
import { sql } from 'kysely';
import { beforeAll, describe, expect, it } from 'vitest';
import { seedBoardVehicle } from '../../helpers/board-fleet.js';
import { useTestApp } from '../../helpers/test-app.js';
import { DAY_MS } from '../../../services/time/durations.js';

// Regression: a forged or garbage `?cursor=` answered 500 where Postgres refused the key it carried
// (a NUL byte in a text part, "invalid byte sequence"; a number out of the range of a `real`
// column, "value out of range") instead of 400. Every cursor endpoint, against the real routes on
// both databases: whatever the cursor, the answer is 200 (a cursor that happens to be well formed)
// or 400 validation_failed, never 5xx.

const t = useTestApp();
const NOW = Date.UTC(2026, 10, 30);
const NUM_RUNS = 60;
let key: string;

/** Every list that pages by cursor, each with a query that has more than one item at limit=1. */
const LISTS = [
  '/v1/findings',
  '/v1/vehicles',
  '/v1/fleet/at-risk',
  '/v1/fleet/vehicles',
  '/v1/fleet/vehicles?sort=priority&order=asc',
  '/v1/fleet/vehicles?sort=since',
  '/v1/fleet/vehicles?sort=vehicle&order=asc',
  '/v1/fleet/vehicles?sort=depot',
  '/v1/depots',
  '/v1/reports/weekly/archive',
  '/v1/vehicles/CUR-1/findings',
  '/v1/vehicles/CUR-1/runs',
  '/v1/vehicles/CUR-1/days',
  '/v1/vehicles/CUR-1/service-events',
];
const withParam = (path: string, name: string, value: string) =>
  `${path}${path.includes('?') ? '&' : '?'}${name}=${encodeURIComponent(value)}`;
const get = (url: string) => t.app.inject({ method: 'GET', url, headers: t.auth(key) });
const b64 = (text: string) => Buffer.from(text, 'utf8').toString('base64url');

/** Each list's first real cursor (limit=1), decoded: the shape a forged cursor imitates. */
const real = new Map<string, { cursor: string; parts: unknown[] }>();

beforeAll(async () => {
  key = await t.createKey('cursors', ['read', 'ingest']);
  const db = t.tdb.handle.db;
  for (const [i, depot] of ['north', 'south', null].entries())
    await seedBoardVehicle(db, {
      vehicleId: `CUR-${i + 1}`,
      fleetId: 'cursors',
      label: `van ${i + 1}`,
      ...(depot ? { depot } : {}),
      lastReadingMs: NOW,
      findings: [
        { kind: 'slow-warmup', severity: 'warning', onsetMs: NOW - (5 + i) * DAY_MS },
        { kind: 'overshoot', severity: i === 0 ? 'critical' : 'advisory', onsetMs: NOW - (9 + i) * DAY_MS },
      ],
    });
  for (const depot of ['north', 'south'])
    await sql`insert into depots (fleet_id, depot_id) values ('cursors', ${depot})`.execute(db);
  for (let d = 0; d < 2; d++) {
    const start = NOW - d * DAY_MS;
    await sql`insert into engine_runs (vehicle_id, start_ts, end_ts, start_kind, open, metrics)
              values ('CUR-1', to_timestamp(${start / 1000}), to_timestamp(${(start + 3_600_000) / 1000}), 'cold', false, '{}'::jsonb)`.execute(
      db,
    );
    await sql`insert into vehicle_days (vehicle_id, day, metrics) values ('CUR-1', ${new Date(start).toISOString().slice(0, 10)}::date, '{}'::jsonb)`.execute(
      db,
    );
    await sql`insert into service_events (vehicle_id, event_id, fleet_id, kind, at)
              values ('CUR-1', ${`ev-${d}`}, 'cursors', 'coolant-refilled', to_timestamp(${(start - 30 * DAY_MS) / 1000}))`.execute(
      db,
    );
    await sql`insert into weekly_reports (fleet_id, iso_week, report_json, report_html, worklist_csv)
              values ('cursors', ${`2026-W4${d}`}, '{}'::jsonb, '<p></p>', '')`.execute(db);
  }
  for (const path of LISTS) {
    const res = await get(withParam(path, 'limit', '1'));
    expect(res.statusCode, `${path}: ${res.body}`).toBe(200);
    const cursor = res.json().nextCursor as string | null;
    expect(cursor, `${path} gives a cursor at limit=1`).toBeTypeOf('string');
    const parts = JSON.parse(Buffer.from(cursor!, 'base64url').toString('utf8')) as unknown[];
    expect(Array.isArray(parts)).toBe(true);
    real.set(path, { cursor: cursor!, parts });
  }
});

/** Values no list's key holds, or that the database refuses in a key. */
const junkValue = fc.oneof(
  fc.constantFrom(
    1e39,
    -1e39,
    1e-40,
    -1e-46,
    3.5e38,
    Number.MAX_VALUE,
    -Number.MAX_VALUE,
    5e-324,
    1e300,
    -0,
    '\u0000',
    'V\u0000-1',
    '\ud800',
    'a\udfffb',
    '',
    'x'.repeat(300),
    null,
    true,
    false,
    [],
    {},
    [1, 'a'],
    { k: 1 },
  ),
  fc.double(),
  fc.integer(),
  fc.string({ maxLength: 20 }),
  fc.string({ unit: 'binary', maxLength: 20 }),
);

/** A cursor: a real one with one part replaced, a part added or dropped; an array of junk; junk text; broken base64. */
const forged = (parts: unknown[], realCursor: string) =>
  fc.oneof(
    fc
      .tuple(fc.nat({ max: parts.length - 1 }), junkValue)
      .map(([i, v]) => b64(JSON.stringify(parts.map((p, j) => (i === j ? v : p))))),
    junkValue.map((v) => b64(JSON.stringify([...parts, v]))),
    fc.constant(b64(JSON.stringify(parts.slice(1)))),
    fc.array(junkValue, { maxLength: 6 }).map((a) => b64(JSON.stringify(a))),
    fc.constantFrom('NaN', 'null', '{}', '"x"', '[NaN]', '[Infinity]', '[1e999]', '[-1e999, "a"]').map(b64),
    fc.string({ minLength: 1, maxLength: 60 }),
    fc.string({ unit: 'binary', minLength: 1, maxLength: 60 }).map(b64),
    fc.constant(`${realCursor}!!`),
    fc.constant(`${realCursor}=`),
    fc.constant(`${realCursor.slice(0, -1)}`),
    fc.constant(realCursor.replace(/[A-Za-z]/, '+')),
    fc.constant('%00'),
    fc.nat({ max: 100_000 }).map((n) => 'A'.repeat(n + 1)),
  );

describe('a forged or garbage cursor', () => {
  it.each(LISTS)('answers %s with 200 or 400, never 5xx', async (path) => {
    const { cursor, parts } = real.get(path)!;
    await fc.assert(
      fc.asyncProperty(forged(parts, cursor), async (c) => {
        const res = await get(withParam(path, 'cursor', c));
        if (res.statusCode === 200) return;
        expect(res.statusCode, `${path} cursor=${JSON.stringify(c)}: ${res.body}`).toBe(400);
        expect(res.json().error.code).toBe('validation_failed');
      }),
      { numRuns: NUM_RUNS },
    );
  });

  it.each(LISTS)(
    'answers %s with 400 for a NUL byte, an out-of-range number, NaN or a wrong type in any part',
    async (path) => {
      const { parts } = real.get(path)!;
      for (let i = 0; i < parts.length; i++) {
        const bad = typeof parts[i] === 'string' ? ['V\u0000', 7, null, '\ud800'] : [1e39, -1e39, 'NaN', null, [1]];
        for (const v of bad) {
          const c = b64(JSON.stringify(parts.map((p, j) => (i === j ? v : p))));
          const res = await get(withParam(path, 'cursor', c));
          expect(res.statusCode, `${path} part ${i} = ${JSON.stringify(v)}: ${res.body}`).toBe(400);
        }
      }
      for (const c of [b64('[NaN]'), b64('[1e999]'), '!!!', b64(JSON.stringify(parts)).replace(/.$/, '*')]) {
        const res = await get(withParam(path, 'cursor', c));
        expect(res.statusCode, `${path} cursor ${c}: ${res.body}`).toBe(400);
      }
    },
  );

  it('answers 400 for a fleet page cursor of another sort or order than the one asked', async () => {
    const risk = real.get('/v1/fleet/vehicles')!.cursor;
    const byVehicle = real.get('/v1/fleet/vehicles?sort=vehicle&order=asc')!.cursor;
    for (const url of [
      withParam('/v1/fleet/vehicles?sort=vehicle&order=asc', 'cursor', risk),
      withParam('/v1/fleet/vehicles?sort=risk&order=asc', 'cursor', risk),
      withParam('/v1/fleet/vehicles', 'cursor', byVehicle),
      withParam('/v1/fleet/vehicles?sort=vehicle', 'cursor', byVehicle),
      withParam('/v1/fleet/at-risk', 'cursor', risk),
    ]) {
      const res = await get(url);
      expect(res.statusCode, `${url}: ${res.body}`).toBe(400);
    }
  });

  it('answers 400 for a NUL byte in the older vehicle paging (?after=)', async () => {
    const res = await get('/v1/vehicles?after=V%00');
    expect(res.statusCode, res.body).toBe(400);
  });
});
