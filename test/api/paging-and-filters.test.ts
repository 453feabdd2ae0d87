import { sql } from 'kysely';
import { beforeAll, describe, expect, it } from 'vitest';
import type { Finding } from '../../services/analysis/findings/finding.js';
import { refreshVehicleRisk } from '../../services/db/vehicle-risk.js';
import { syncFindings } from '../../services/db/findings-sync.js';
import { useTestApp } from '../helpers/test-app.js';
import { DAY_MS } from '../../services/time/durations.js';

const t = useTestApp();
const T = Date.UTC(2026, 10, 20);
const SEVERITIES: Finding['severity'][] = ['advisory', 'warning', 'critical'];
const KINDS: Finding['kind'][] = ['slow-warmup', 'boil-margin', 'overheating-trend'];
let read: string;
let ingest: string;
let other: string;

const get = (url: string, key = read) => t.app.inject({ method: 'GET', url, headers: t.auth(key) });

function finding(kind: Finding['kind'], severity: Finding['severity'], lastSeen: number): Finding {
  return {
    key: `${kind}@2026-09-01T00:00:00.000Z`,
    kind,
    subKind: null,
    severity,
    confidence: 0.7,
    firstSeen: lastSeen - 10 * DAY_MS,
    lastSeen,
    summary: `${kind} seen`,
    recommendedCheck: 'Check it.',
    troubleCode: null,
    metrics: {},
    evidence: [],
  };
}

/** Stores findings for a vehicle (and registers it) as the worker would. */
async function seedVehicle(fleetId: string, vehicleId: string, derived: Finding[]): Promise<void> {
  const db = t.tdb.handle.db;
  await sql`insert into vehicles (vehicle_id, fleet_id) values (${vehicleId}, ${fleetId}) on conflict do nothing`.execute(
    db,
  );
  await sql`insert into vehicle_analysis (vehicle_id, fleet_id, last_reading_at) values (${vehicleId}, ${fleetId}, to_timestamp(${T / 1000})) on conflict do nothing`.execute(
    db,
  );
  await db.transaction().execute(async (trx) => {
    await syncFindings(trx, { vehicleId, fleetId, asOfMs: T, derived, quietPeriodMs: 60 * DAY_MS });
    await refreshVehicleRisk(trx, vehicleId);
  });
}

/** Every item of a list, a page of `limit` at a time; `between` runs after each page. */
async function walk(
  url: string,
  field: string,
  limit: number,
  between?: (pageNo: number) => Promise<void>,
): Promise<Array<Record<string, unknown>>> {
  const seen: Array<Record<string, unknown>> = [];
  let cursor: string | null = null;
  let pageNo = 0;
  do {
    const res = await get(
      `${url}${url.includes('?') ? '&' : '?'}limit=${limit}${cursor ? `&cursor=${encodeURIComponent(cursor)}` : ''}`,
    );
    expect(res.statusCode, res.body).toBe(200);
    const body = res.json() as Record<string, unknown>;
    const items = body[field] as Array<Record<string, unknown>>;
    expect(items.length).toBeLessThanOrEqual(limit);
    seen.push(...items);
    cursor = body.nextCursor as string | null;
    pageNo++;
    if (between) await between(pageNo);
  } while (cursor);
  return seen;
}

beforeAll(async () => {
  read = await t.createKey('fleet-pg', ['read']);
  ingest = await t.createKey('fleet-pg', ['ingest']);
  other = await t.createKey('fleet-pg-other', ['read']);
  for (let i = 0; i < 9; i++) {
    const id = `PG-${String(i).padStart(2, '0')}`;
    await seedVehicle(
      'fleet-pg',
      id,
      KINDS.map((k, j) => finding(k, SEVERITIES[(i + j) % 3]!, T - ((i * 3 + j) % 5) * DAY_MS)),
    );
  }
  for (const id of ['PG-00', 'PG-01', 'PG-02']) {
    expect(
      (
        await t.app.inject({
          method: 'PUT',
          url: `/v1/vehicles/${id}`,
          headers: t.auth(ingest),
          payload: { depot: 'north-yard' },
        })
      ).statusCode,
    ).toBe(200);
  }
  await seedVehicle('fleet-pg-other', 'OTHER-1', [finding('boil-margin', 'critical', T)]);
  const db = t.tdb.handle.db;
  for (let d = 0; d < 12; d++) {
    const start = T - d * DAY_MS;
    await sql`insert into engine_runs (vehicle_id, start_ts, end_ts, start_kind, open, metrics)
              values ('PG-00', to_timestamp(${start / 1000}), to_timestamp(${(start + 3_600_000) / 1000}), 'cold', false, ${JSON.stringify({ peakCoolantC: 90 + d })}::jsonb)`.execute(
      db,
    );
    await sql`insert into vehicle_days (vehicle_id, day, metrics) values ('PG-00', ${new Date(start).toISOString().slice(0, 10)}::date, ${JSON.stringify({ peakCoolantC: 90 + d, sampleCount: 10 })}::jsonb)`.execute(
      db,
    );
  }
});

describe('cursor paging', () => {
  it('walks /v1/findings a page at a time and returns every finding once, in the order of one big page', async () => {
    const all = (await get('/v1/findings?limit=1000')).json().findings as Array<{ id: string }>;
    expect(all).toHaveLength(27);
    const walked = await walk('/v1/findings', 'findings', 4);
    expect(walked.map((f) => f.id)).toEqual(all.map((f) => f.id));
  });

  it('returns every finding once while findings of new vehicles are inserted between the pages', async () => {
    const before = (await get('/v1/findings?limit=1000')).json().findings as Array<{ id: string }>;
    let added = 0;
    const walked = await walk('/v1/findings', 'findings', 5, async (pageNo) => {
      await seedVehicle('fleet-pg', `PG-NEW-${pageNo}`, [
        finding(KINDS[pageNo % 3]!, SEVERITIES[pageNo % 3]!, T - (pageNo % 4) * DAY_MS),
      ]);
      added++;
    });
    const ids = walked.map((f) => f.id as string);
    expect(new Set(ids).size).toBe(ids.length);
    for (const f of before) expect(ids).toContain(f.id);
    expect(added).toBeGreaterThan(3);
  });

  it("walks vehicles, a vehicle's findings, runs, days, the at-risk list and depots the same way, each item once", async () => {
    const vehicles = await walk('/v1/vehicles', 'vehicles', 2, async (pageNo) => {
      await sql`insert into vehicles (vehicle_id, fleet_id) values (${`PG-ADDED-${pageNo}`}, 'fleet-pg')`.execute(
        t.tdb.handle.db,
      );
    });
    const vehicleIds = vehicles.map((v) => v.vehicleId as string);
    expect(new Set(vehicleIds).size).toBe(vehicleIds.length);
    for (let i = 0; i < 9; i++) expect(vehicleIds).toContain(`PG-0${i}`);
    expect([...vehicleIds].sort()).toEqual(vehicleIds);

    const own = await walk('/v1/vehicles/PG-03/findings', 'findings', 1);
    expect(own.map((f) => f.kind).sort()).toEqual([...KINDS].sort());

    const runs = await walk('/v1/vehicles/PG-00/runs', 'runs', 5);
    expect(runs).toHaveLength(12);
    expect(runs.map((r) => r.startTs)).toEqual([...runs.map((r) => r.startTs as string)].sort().reverse());
    const days = await walk('/v1/vehicles/PG-00/days?from=2026-11-10', 'days', 4);
    expect(days.map((d) => d.day)).toEqual(
      Array.from({ length: 11 }, (_, d) => new Date(T - d * DAY_MS).toISOString().slice(0, 10)),
    );

    const atRisk = await walk('/v1/fleet/at-risk', 'vehicles', 3);
    const atRiskIds = atRisk.map((v) => v.vehicleId as string);
    expect(new Set(atRiskIds).size).toBe(atRiskIds.length);
    const risks = atRisk.map((v) => v.riskScore as number);
    expect([...risks].sort((a, b) => b - a)).toEqual(risks);
    expect(atRiskIds).not.toContain('OTHER-1');

    const depots = await walk('/v1/depots', 'depots', 1);
    expect(depots.map((d) => d.depotId)).toEqual(['north-yard']);
  });

  it('keeps the older vehicle paging (after / nextAfter) beside the cursor', async () => {
    const first = (await get('/v1/vehicles?limit=2')).json() as {
      vehicles: Array<{ vehicleId: string }>;
      nextAfter: string;
      nextCursor: string;
    };
    expect(first.nextAfter).toBe(first.vehicles[1]!.vehicleId);
    const byAfter = (await get(`/v1/vehicles?limit=2&after=${first.nextAfter}`)).json().vehicles;
    const byCursor = (await get(`/v1/vehicles?limit=2&cursor=${first.nextCursor}`)).json().vehicles;
    expect(byAfter).toEqual(byCursor);
    expect((await get(`/v1/vehicles?limit=2&after=x&cursor=${first.nextCursor}`)).statusCode).toBe(400);
  });

  it('answers 400 for a cursor it did not give out, one of another list, a limit over the maximum, and a cursor with an offset', async () => {
    const vehiclesCursor = (await get('/v1/vehicles?limit=1')).json().nextCursor as string;
    const findingsCursor = (await get('/v1/findings?limit=1')).json().nextCursor as string;
    for (const url of [
      '/v1/findings?cursor=bm9wZQ',
      `/v1/findings?cursor=${vehiclesCursor}`,
      `/v1/vehicles?cursor=${findingsCursor}`,
      `/v1/fleet/at-risk?cursor=${vehiclesCursor}`,
      `/v1/vehicles/PG-00/runs?cursor=${vehiclesCursor}`,
      '/v1/findings?limit=1001',
      '/v1/fleet/at-risk?limit=0',
      `/v1/findings?cursor=${findingsCursor}&offset=2`,
      `/v1/vehicles/PG-00/days?cursor=${Buffer.from('[12]').toString('base64url')}`,
    ]) {
      const res = await get(url);
      expect(res.statusCode, url).toBe(400);
      expect(res.json().error.code, url).toBe('validation_failed');
    }
  });
});

describe('GET /v1/findings filters', () => {
  const ids = async (url: string, key = read) =>
    (await get(url, key)).json().findings as Array<{
      vehicleId: string;
      severity: string;
      kind: string;
      lastSeen: string;
      status: string;
    }>;

  it('filters by vehicle, severity (list or minimum), since, depot and status, combined', async () => {
    const one = await ids('/v1/findings?vehicle=PG-04&limit=1000');
    expect(one.map((f) => f.vehicleId)).toEqual(['PG-04', 'PG-04', 'PG-04']);
    const two = await ids('/v1/findings?vehicle=PG-04,PG-05&severity=critical&limit=1000');
    expect(two.map((f) => `${f.vehicleId} ${f.severity}`).sort()).toEqual(['PG-04 critical', 'PG-05 critical']);
    const atLeast = await ids('/v1/findings?minSeverity=warning&limit=1000');
    expect(atLeast.length).toBeGreaterThan(0);
    expect(atLeast.every((f) => f.severity !== 'advisory')).toBe(true);
    const list = await ids('/v1/findings?severity=advisory,critical&limit=1000');
    expect(new Set(list.map((f) => f.severity))).toEqual(new Set(['advisory', 'critical']));
    const since = new Date(T - DAY_MS).toISOString();
    const recent = await ids(`/v1/findings?since=${since}&limit=1000`);
    expect(recent.length).toBeGreaterThan(0);
    expect(recent.every((f) => f.lastSeen >= since)).toBe(true);
    expect((await ids(`/v1/findings?since=${T - DAY_MS}&limit=1000`)).length).toBe(recent.length);
    const depot = await ids('/v1/findings?depot=north-yard&limit=1000');
    expect([...new Set(depot.map((f) => f.vehicleId))].sort()).toEqual(['PG-00', 'PG-01', 'PG-02']);
    expect(
      (await ids('/v1/findings?status=open,acknowledged&kind=boil-margin,slow-warmup&vehicle=PG-01'))
        .map((f) => f.kind)
        .sort(),
    ).toEqual(['boil-margin', 'slow-warmup']);
    expect(await ids('/v1/findings?status=resolved')).toEqual([]);
  });

  it("never shows another fleet's findings, even when asked for its vehicle or depot", async () => {
    expect(await ids('/v1/findings?vehicle=OTHER-1')).toEqual([]);
    expect(await ids('/v1/findings?vehicle=PG-01', other)).toEqual([]);
    expect((await get('/v1/findings?depot=north-yard', other)).json().findings).toEqual([]);
  });

  it('answers 400 with a clear message for bad filter values', async () => {
    for (const url of [
      '/v1/findings?severity=severe',
      '/v1/findings?severity=warning&minSeverity=critical',
      '/v1/findings?since=yesterday',
      '/v1/findings?status=closed',
      '/v1/findings?status=open,',
      '/v1/findings?vehicle=bad%20id',
      '/v1/findings?kind=leak',
      '/v1/findings?minSeverity=high',
      '/v1/findings?depot=',
      '/v1/findings?unit=K',
    ]) {
      const res = await get(url);
      expect(res.statusCode, url).toBe(400);
      expect(res.json().error.message.length, url).toBeGreaterThan(5);
    }
  });

  it('documents the filters, the paging and the unit in /openapi.json', async () => {
    const doc = (await t.app.inject({ method: 'GET', url: '/openapi.json' })).json() as {
      paths: Record<
        string,
        Record<string, { parameters?: Array<{ name: string }>; responses: Record<string, unknown> }>
      >;
    };
    const params = (path: string) => (doc.paths[path]!.get!.parameters ?? []).map((p) => p.name);
    expect(params('/v1/findings')).toEqual(
      expect.arrayContaining([
        'vehicle',
        'severity',
        'minSeverity',
        'since',
        'depot',
        'status',
        'kind',
        'limit',
        'cursor',
        'unit',
      ]),
    );
    for (const path of [
      '/v1/vehicles',
      '/v1/vehicles/{vehicleId}/findings',
      '/v1/vehicles/{vehicleId}/runs',
      '/v1/vehicles/{vehicleId}/days',
      '/v1/fleet/at-risk',
      '/v1/vehicles/{vehicleId}/service-events',
      '/v1/depots',
      '/v1/fleet/vehicles',
      '/v1/reports/weekly/archive',
    ]) {
      expect(params(path), path).toEqual(expect.arrayContaining(['limit', 'cursor']));
      expect(params(path), path).not.toContain('offset');
      expect(JSON.stringify(doc.paths[path]!.get!.responses['200']), path).toContain('nextCursor');
    }
    expect(params('/v1/fleet/vehicles')).toEqual(
      expect.arrayContaining(['severity', 'kind', 'depot', 'mark', 'q', 'sort', 'order', 'unit']),
    );
    expect(params('/v1/vehicles/{vehicleId}/summary')).toContain('unit');
  });
});
