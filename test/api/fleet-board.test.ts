import { sql } from 'kysely';
import { beforeAll, describe, expect, it } from 'vitest';
import { refreshVehicleRisk } from '../../services/db/vehicle-risk.js';
import { fillOpenSinceMs } from '../../migrations/0011-fleet-board-keyset.js';
import { type BoardVehicle, seedBoardVehicle } from '../helpers/board-fleet.js';
import { useTestApp } from '../helpers/test-app.js';
import { HOUR_MS, DAY_MS } from '../../services/time/durations.js';

const t = useTestApp();
const NOW = Date.now();
let key: string;
let adminKey: string;

/** A made-up fleet: kinds, severities, depots, labels and reporting states chosen so every filter keeps a different set. */
const FLEET: BoardVehicle[] = [
  {
    vehicleId: 'V-01',
    fleetId: 'board',
    label: 'Tipper 100%_A',
    depot: 'harbour',
    lastReadingMs: NOW - HOUR_MS,
    findings: [{ kind: 'boil-margin', severity: 'critical', onsetMs: NOW - 2 * DAY_MS }],
  },
  {
    vehicleId: 'V-02',
    fleetId: 'board',
    label: 'bus fifteen',
    depot: 'hill',
    lastReadingMs: NOW - 2 * HOUR_MS,
    findings: [
      { kind: 'slow-warmup', severity: 'warning', onsetMs: NOW - 20 * DAY_MS },
      { kind: 'overshoot', severity: 'advisory', onsetMs: NOW - 10 * DAY_MS },
    ],
  },
  {
    vehicleId: 'V-03',
    fleetId: 'board',
    depot: 'harbour',
    lastReadingMs: NOW - 3 * DAY_MS,
    findings: [{ kind: 'overshoot', severity: 'advisory', onsetMs: NOW - 30 * DAY_MS }],
  },
  {
    vehicleId: 'V-04',
    fleetId: 'board',
    label: 'van',
    depot: 'hill',
    lastReadingMs: NOW - HOUR_MS,
    findings: [{ kind: 'overheating-trend', severity: 'warning', onsetMs: NOW - 5 * DAY_MS }],
  },
  {
    vehicleId: 'V-05',
    fleetId: 'board',
    label: 'healthy',
    depot: 'harbour',
    lastReadingMs: NOW - HOUR_MS,
    findings: [],
  },
  { vehicleId: 'V-06', fleetId: 'board', label: 'never reported', lastReadingMs: null, findings: [] },
  // A fleet with a vehicle without a depot, for the depot sort.
  {
    vehicleId: 'V-07',
    fleetId: 'board-depotless',
    lastReadingMs: NOW - HOUR_MS,
    findings: [{ kind: 'overshoot', severity: 'critical', onsetMs: NOW - DAY_MS }],
  },
  {
    vehicleId: 'V-08',
    fleetId: 'board-depotless',
    depot: 'yard',
    lastReadingMs: NOW - HOUR_MS,
    findings: [{ kind: 'overshoot', severity: 'advisory', onsetMs: NOW - DAY_MS }],
  },
  {
    vehicleId: 'W-01',
    fleetId: 'elsewhere',
    label: 'van of another fleet',
    depot: 'hill',
    lastReadingMs: NOW - HOUR_MS,
    findings: [{ kind: 'boil-margin', severity: 'critical', onsetMs: NOW - DAY_MS }],
  },
];

interface Row {
  vehicleId: string;
  riskScore: number;
  maxSeverity: string;
  priority: string;
  since: string;
  depot: string | null;
  acknowledged: number;
  findings: Array<{ id: string; kind: string; status: string; label: string }>;
}
interface Board {
  total: number;
  counts: Record<string, number>;
  depots: string[];
  vehicles: Row[];
}

async function board(query = '', k = key): Promise<Board> {
  const res = await t.app.inject({ method: 'GET', url: `/v1/fleet/vehicles${query}`, headers: t.auth(k) });
  expect(res.statusCode, res.body).toBe(200);
  return res.json();
}
const ids = (b: Board) => b.vehicles.map((v) => v.vehicleId);

beforeAll(async () => {
  key = await t.createKey('board', ['read']);
  await t.createKey('elsewhere', ['read']);
  adminKey = await t.createAdminKey();
  for (const v of FLEET) await seedBoardVehicle(t.tdb.handle.db, v);
});

describe('the fleet page list', () => {
  it('has one row per vehicle with unresolved findings, in the order and with the risk of GET /v1/fleet/at-risk', async () => {
    const b = await board();
    const atRisk = (await t.app.inject({ method: 'GET', url: '/v1/fleet/at-risk', headers: t.auth(key) })).json()
      .vehicles as Array<{ vehicleId: string; riskScore: number; findings: Array<{ id: string }> }>;
    expect(ids(b)).toEqual(atRisk.map((v) => v.vehicleId));
    expect(ids(b)).toEqual(['V-01', 'V-02', 'V-04', 'V-03']);
    expect(b.total).toBe(4);
    for (const row of b.vehicles) {
      const ref = atRisk.find((v) => v.vehicleId === row.vehicleId)!;
      expect(row.riskScore).toBe(ref.riskScore);
      expect(row.findings.map((f) => f.id)).toEqual(ref.findings.map((f) => f.id));
    }
    const v2 = b.vehicles.find((v) => v.vehicleId === 'V-02')!;
    expect(v2).toMatchObject({ maxSeverity: 'warning', priority: 'book this week', depot: 'hill', acknowledged: 0 });
    expect(v2.findings.map((f) => f.label)).toEqual(['slow warm-up', 'temperature overshoot']);
    // Since when: the earliest onset of its findings.
    expect(Date.parse(v2.since)).toBeCloseTo(NOW - 20 * DAY_MS, -3);
    expect(b.depots).toEqual(['harbour', 'hill']);
  });

  it('counts the vehicles, those reporting within 48 h, the silent gateways and those with a finding new this week', async () => {
    const { counts } = await board();
    // V-03 last reported 3 days ago and V-06 never: silent. V-01 and V-04 have onsets within 7 days.
    expect(counts).toEqual({
      vehicles: 6,
      atRisk: 4,
      reporting: 4,
      silentGateways: 2,
      newThisWeek: 2,
      silentGatewayHours: 48,
    });
  });

  it.each([
    ['?severity=critical', ['V-01']],
    ['?severity=advisory', ['V-03']],
    ['?kind=overshoot', ['V-02', 'V-03']],
    ['?depot=hill', ['V-02', 'V-04']],
    ['?depot=hill&kind=overshoot', ['V-02']],
    ['?q=v-0', ['V-01', 'V-02', 'V-04', 'V-03']],
    ['?q=FIFTEEN', ['V-02']],
    // LIKE wildcards in the search are plain characters.
    ['?q=100%25_A', ['V-01']],
    ['?q=%25', ['V-01']],
    ['?q=_', ['V-01']],
    ['?q=another', []],
  ])('filters %s', async (query, expected) => {
    const b = await board(query);
    expect(ids(b)).toEqual(expected);
    expect(b.total).toBe(expected.length);
  });

  it('sorts by vehicle, since, depot and priority in both directions', async () => {
    expect(ids(await board('?sort=vehicle&order=asc'))).toEqual(['V-01', 'V-02', 'V-03', 'V-04']);
    expect(ids(await board('?sort=vehicle'))).toEqual(['V-04', 'V-03', 'V-02', 'V-01']);
    expect(ids(await board('?sort=since&order=asc'))).toEqual(['V-03', 'V-02', 'V-04', 'V-01']);
    expect(ids(await board('?sort=depot&order=asc'))).toEqual(['V-01', 'V-03', 'V-02', 'V-04']);
    expect(ids(await board('?sort=priority&order=asc'))).toEqual(['V-01', 'V-02', 'V-04', 'V-03']);
  });

  it('pages by cursor in every sort and direction: each row once, in the order of one big page, the total that of the filter', async () => {
    for (const sort of ['risk', 'priority', 'since', 'vehicle', 'depot'])
      for (const order of ['asc', 'desc']) {
        const all = ids(await board(`?sort=${sort}&order=${order}&limit=200`));
        expect(all).toHaveLength(4);
        const walked: string[] = [];
        let cursor: string | null = null;
        do {
          const page: Board & { nextCursor: string | null } = (await board(
            `?sort=${sort}&order=${order}&limit=1${cursor ? `&cursor=${cursor}` : ''}`,
          )) as Board & { nextCursor: string | null };
          expect(page.total).toBe(4);
          walked.push(...ids(page));
          cursor = page.nextCursor;
        } while (cursor);
        expect(walked, `${sort} ${order}`).toEqual(all);
        // desc is the exact reverse of asc.
        if (order === 'desc') expect(all).toEqual(ids(await board(`?sort=${sort}&order=asc&limit=200`)).reverse());
      }
  });

  it("keeps each vehicle's earliest unresolved onset for the since sort, and migration 0011 fills it the same for existing rows", async () => {
    const db = t.tdb.handle.db;
    const since = async () =>
      (
        await sql<{ vehicle_id: string; open_since_ms: number | null }>`
          select vehicle_id, open_since_ms from vehicle_analysis where fleet_id = 'board' order by vehicle_id`.execute(
          db,
        )
      ).rows;
    const kept = await since();
    const v2 = kept.find((r) => r.vehicle_id === 'V-02')!;
    // V-02's findings began 20 and 10 days ago: the earlier one.
    expect(v2.open_since_ms).toBeCloseTo(NOW - 20 * DAY_MS, -3);
    expect(kept.find((r) => r.vehicle_id === 'V-05')!.open_since_ms).toBeNull();
    await sql`update vehicle_analysis set open_since_ms = null where fleet_id = 'board'`.execute(db);
    await fillOpenSinceMs(db);
    expect(await since()).toEqual(kept);
  });

  it('pages with a filter: the cursor carries the position, the filter stays the query', async () => {
    const p1 = (await board('?kind=overshoot&limit=1')) as Board & { nextCursor: string | null };
    expect(ids(p1)).toEqual(['V-02']);
    const p2 = (await board(`?kind=overshoot&limit=1&cursor=${p1.nextCursor}`)) as Board & {
      nextCursor: string | null;
    };
    expect(ids(p2)).toEqual(['V-03']);
    expect([p1.total, p2.total]).toEqual([2, 2]);
    expect(p2.nextCursor).toBeNull();
  });

  it('sorts vehicles without a depot after every depot (asc), before them in desc', async () => {
    const asc = ids(await board('?fleet=board-depotless&sort=depot&order=asc', adminKey));
    expect(asc).toEqual(['V-08', 'V-07']);
    const first = (await board('?fleet=board-depotless&sort=depot&order=asc&limit=1', adminKey)) as Board & {
      nextCursor: string;
    };
    expect(
      ids(await board(`?fleet=board-depotless&sort=depot&order=asc&limit=1&cursor=${first.nextCursor}`, adminKey)),
    ).toEqual(['V-07']);
    expect(ids(await board('?fleet=board-depotless&sort=depot&order=desc', adminKey))).toEqual(['V-07', 'V-08']);
  });

  it('answers the finding sentences in °F with ?unit=F', async () => {
    const db = t.tdb.handle.db;
    await sql`update findings set summary = 'Daily peaks reach 112 °C.' where vehicle_id = 'V-03'`.execute(db);
    await db.transaction().execute((trx) => refreshVehicleRisk(trx, 'V-03'));
    const c = await t.app.inject({ method: 'GET', url: '/v1/fleet/vehicles?q=V-03', headers: t.auth(key) });
    const f = await t.app.inject({ method: 'GET', url: '/v1/fleet/vehicles?q=V-03&unit=F', headers: t.auth(key) });
    expect([c.headers['x-temperature-unit'], f.headers['x-temperature-unit']]).toEqual(['C', 'F']);
    expect(c.json().vehicles[0].findings[0].summary).toBe('Daily peaks reach 112 °C.');
    // 112 °C = 233.6 °F (°F = °C · 9/5 + 32, NIST SP 811 — from memory), written to the sentence's whole degrees.
    expect(f.json()).toMatchObject({
      unit: 'F',
      vehicles: [{ findings: [{ summary: 'Daily peaks reach 234 °F.' }] }],
    });
  });

  it('keeps an acknowledged vehicle in the list, marked, and filters by the marks', async () => {
    const id = (await board('?q=V-04')).vehicles[0]!.findings[0]!.id;
    const ack = await t.app.inject({ method: 'POST', url: `/v1/findings/${id}/acknowledge`, headers: t.auth(key) });
    expect(ack.statusCode).toBe(200);
    const b = await board();
    expect(ids(b)).toEqual(['V-01', 'V-02', 'V-04', 'V-03']);
    expect(b.vehicles.find((v) => v.vehicleId === 'V-04')).toMatchObject({
      acknowledged: 1,
      findings: [{ status: 'acknowledged' }],
    });
    expect(ids(await board('?mark=acknowledged'))).toEqual(['V-04']);
    expect(ids(await board('?mark=marked'))).toEqual(['V-04']);
    expect(ids(await board('?mark=deferred'))).toEqual([]);
    expect(ids(await board('?mark=unmarked'))).toEqual(['V-01', 'V-02', 'V-03']);
    await t.app.inject({ method: 'POST', url: `/v1/findings/${id}/reopen`, headers: t.auth(key) });
  });

  it('shows a key only its own fleet; an admin sees every fleet or the one named', async () => {
    expect(ids(await board())).not.toContain('W-01');
    expect(new Set(ids(await board('', adminKey)))).toEqual(
      new Set(['V-01', 'V-02', 'V-03', 'V-04', 'V-07', 'V-08', 'W-01']),
    );
    expect(ids(await board('?fleet=elsewhere', adminKey))).toEqual(['W-01']);
    expect(
      (await t.app.inject({ method: 'GET', url: '/v1/fleet/vehicles?fleet=elsewhere', headers: t.auth(key) }))
        .statusCode,
    ).toBe(403);
  });

  it.each([
    ['?sort=colour'],
    ['?order=up'],
    ['?limit=0'],
    ['?limit=201'],
    ['?offset=30'],
    ['?cursor='],
    ['?cursor=bm9wZQ'],
    ['?q=%00'],
    ['?q=a%00b'],
    ['?depot=%00'],
    ['?severity=bad'],
    ['?kind=rust'],
    ['?mark=maybe'],
    [`?q=${'x'.repeat(101)}`],
  ])('answers 400 to %s', async (query) => {
    const res = await t.app.inject({ method: 'GET', url: `/v1/fleet/vehicles${query}`, headers: t.auth(key) });
    expect(res.statusCode).toBe(400);
    expect(res.json().error.code).toBe('validation_failed');
  });

  it('answers 401 without a key', async () => {
    expect((await t.app.inject({ method: 'GET', url: '/v1/fleet/vehicles' })).statusCode).toBe(401);
  });
});
