import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { PassThrough } from 'node:stream';
import { once } from 'node:events';
import type { Response as LightMyRequestResponse } from 'light-my-request';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, useTestApp } from '../helpers/test-app.js';
import { countStoredReadings, createTestDatabase, testDatabaseKind } from '../helpers/test-database.js';

const t = useTestApp();
let key: string;
beforeAll(async () => {
  key = await t.createKey('fleet-o', ['ingest', 'read']);
});

const HOUR_AGO_MS = Date.now() - 3_600_000;
const ndjsonLines = (vehicleId: string, from: number, count: number) =>
  Array.from(
    { length: count },
    (_, i) => `{"vehicleId":"${vehicleId}","ts":${HOUR_AGO_MS + (from + i) * 100},"coolant":85}\n`,
  ).join('');

/** Prometheus text exposition format (prometheus.io, "Exposition formats"): sample lines by series. */
function parseMetrics(text: string): Map<string, number> {
  const samples = new Map<string, number>();
  for (const line of text.split('\n')) {
    if (line === '' || line.startsWith('# HELP ') || line.startsWith('# TYPE ')) continue;
    const m = /^([a-zA-Z_:][a-zA-Z0-9_:]*(?:\{[^}]*\})?) (\S+)$/.exec(line);
    expect(m, `metrics line '${line}'`).not.toBeNull();
    samples.set(m![1]!, Number(m![2]));
  }
  return samples;
}

describe('health and readiness', () => {
  it('answers /healthz and /readyz without a key', async () => {
    const health = await t.app.inject({ method: 'GET', url: '/healthz' });
    expect([health.statusCode, health.json()]).toEqual([200, { status: 'ok' }]);
    const ready = await t.app.inject({ method: 'GET', url: '/readyz' });
    expect([ready.statusCode, ready.json()]).toEqual([200, { status: 'ready', database: testDatabaseKind() }]);
  });
});

describe('GET /metrics', () => {
  it('counts ingested, duplicate and rejected readings, batches, failures and request latency', async () => {
    const before = parseMetrics((await t.app.inject({ method: 'GET', url: '/metrics' })).body);
    const delta = (after: Map<string, number>, series: string) => (after.get(series) ?? 0) - (before.get(series) ?? 0);
    const body = `${ndjsonLines('M-1', 0, 3)}${ndjsonLines('M-1', 0, 1)}{"vehicleId":"M-1"}\n`;
    const ok = await t.app.inject({
      method: 'POST',
      url: '/v1/readings',
      headers: { ...t.auth(key), 'content-type': 'application/x-ndjson' },
      payload: body,
    });
    expect(ok.json()).toMatchObject({ accepted: 3, duplicates: 1 });
    const refused = await t.app.inject({
      method: 'POST',
      url: '/v1/readings',
      headers: { ...t.auth(key), 'content-type': 'text/plain' },
      payload: 'x',
    });
    expect(refused.statusCode).toBe(415);

    const res = await t.app.inject({ method: 'GET', url: '/metrics' });
    expect(res.statusCode).toBe(200);
    expect(res.headers['content-type']).toMatch(/^text\/plain/);
    expect(res.body).toContain('# TYPE thermocline_http_request_duration_seconds histogram');
    const after = parseMetrics(res.body);
    expect(delta(after, 'thermocline_ingest_readings_total{result="accepted"}')).toBe(3);
    expect(delta(after, 'thermocline_ingest_readings_total{result="duplicate"}')).toBe(1);
    expect(delta(after, 'thermocline_ingest_readings_total{result="rejected"}')).toBe(1);
    expect(delta(after, 'thermocline_ingest_batches_total{format="ndjson"}')).toBe(1);
    expect(delta(after, 'thermocline_ingest_failures_total{status="415"}')).toBe(1);

    // The histogram's buckets are cumulative and end at +Inf = _count.
    const series = 'method="POST",route="/v1/readings",status="200"';
    const buckets = [...after]
      .filter(([k]) => k.startsWith(`thermocline_http_request_duration_seconds_bucket{${series},`))
      .map(([, v]) => v);
    expect(buckets.length).toBeGreaterThan(1);
    expect(buckets).toEqual([...buckets].sort((a, b) => a - b));
    expect(buckets.at(-1)).toBe(after.get(`thermocline_http_request_duration_seconds_count{${series}}`));
    expect(delta(after, `thermocline_http_request_duration_seconds_count{${series}}`)).toBe(1);
    expect(after.get(`thermocline_http_request_duration_seconds_sum{${series}}`)).toBeGreaterThan(0);
  });
});

interface Operation {
  tags?: string[];
  summary?: string;
  security?: unknown[];
  parameters?: Array<{ in: string; name: string; schema?: unknown }>;
  requestBody?: { content: Record<string, { schema?: unknown }> };
  responses: Record<string, { content?: Record<string, { schema?: { $ref?: string } }> }>;
}

describe('API documentation', () => {
  let spec: {
    openapi: string;
    tags: Array<{ name: string }>;
    paths: Record<string, Record<string, Operation>>;
    components: { schemas: Record<string, unknown> };
  };
  beforeAll(async () => {
    const res = await t.app.inject({ method: 'GET', url: '/openapi.json' });
    expect(res.statusCode).toBe(200);
    spec = res.json();
  });

  it('describes every operation with tags, a summary, a success response and its parameters', () => {
    const declaredTags = new Set(spec.tags.map((tag) => tag.name));
    const operations = Object.entries(spec.paths).flatMap(([path, methods]) =>
      Object.entries(methods).map(([method, op]) => ({ path, method, op })),
    );
    expect(operations.length).toBeGreaterThanOrEqual(6);
    for (const { path, method, op } of operations) {
      const where = `${method.toUpperCase()} ${path}`;
      expect(op.tags?.length, `${where} tags`).toBeGreaterThan(0);
      for (const tag of op.tags!) expect(declaredTags.has(tag), `${where} tag ${tag}`).toBe(true);
      expect(op.summary, `${where} summary`).toBeTruthy();
      const statuses = Object.keys(op.responses);
      expect(
        statuses.some((s) => /^2\d\d$/.test(s)),
        `${where} 2xx`,
      ).toBe(true);
      for (const pathParam of path.match(/\{[^}]+\}/g) ?? []) {
        const name = pathParam.slice(1, -1);
        expect(
          op.parameters?.find((p) => p.in === 'path' && p.name === name)?.schema,
          `${where} path parameter ${name}`,
        ).toBeDefined();
      }
      if (op.requestBody)
        for (const [type, media] of Object.entries(op.requestBody.content))
          expect(media.schema, `${where} body ${type}`).toBeDefined();
      if (op.security) {
        // An authenticated route can fail authentication, authorisation, the rate limit and the database.
        for (const s of ['401', '403', '429', '503']) expect(statuses, `${where} responses`).toContain(s);
      }
      for (const s of statuses.filter((x) => /^[45]/.test(x) && path !== '/readyz')) {
        expect(op.responses[s]!.content?.['application/json']?.schema?.$ref, `${where} ${s} error body`).toMatch(
          /ErrorBody$/,
        );
      }
    }
    expect(spec.components.schemas.ErrorBody).toBeDefined();
  });

  it('documents the bodies and queries of the ingest and vehicle routes', () => {
    const ingest = spec.paths['/v1/readings']!.post!;
    expect(Object.keys(ingest.requestBody!.content).sort()).toEqual([
      'application/json',
      'application/x-ndjson',
      'text/csv',
    ]);
    expect(Object.keys(ingest.responses)).toEqual(
      expect.arrayContaining(['200', '400', '401', '403', '413', '415', '429', '503']),
    );
    expect(
      ingest
        .parameters!.filter((p) => p.in === 'query')
        .map((p) => p.name)
        .sort(),
    ).toEqual(['fleet', 'unit']);
    expect(spec.paths['/v1/vehicles/{vehicleId}']!.put!.requestBody).toBeDefined();
    expect(Object.keys(spec.paths['/v1/vehicles/{vehicleId}']!.put!.responses)).toEqual(
      expect.arrayContaining(['200', '201', '400']),
    );
    expect(
      spec.paths['/v1/vehicles']!.get!.parameters!.filter((p) => p.in === 'query')
        .map((p) => p.name)
        .sort(),
    ).toEqual(['after', 'cursor', 'depot', 'fleet', 'limit', 'unit']);
    expect(Object.keys(spec.paths['/readyz']!.get!.responses).sort()).toEqual(['200', '503']);
  });

  it('serves the interactive documentation as HTML at /docs', async () => {
    let res = await t.app.inject({ method: 'GET', url: '/docs' });
    if (res.statusCode >= 300 && res.statusCode < 400)
      res = await t.app.inject({ method: 'GET', url: res.headers.location as string });
    expect(res.statusCode).toBe(200);
    expect(res.headers['content-type']).toMatch(/text\/html/);
    expect(res.body).toMatch(/<html/i);
  });
});

describe('database outage during an ingest', () => {
  let dir: string | undefined;
  afterAll(async () => {
    if (dir) await rm(dir, { recursive: true, force: true });
  });

  it('answers 503 with the uniform body and stores nothing of the batch; /readyz answers 503 while the database is gone', async () => {
    // On PGlite the database lives in a folder so that it can be reopened after the "outage".
    if (testDatabaseKind() === 'pglite') dir = await mkdtemp(join(tmpdir(), 'thermocline-outage-'));
    const tdb = await createTestDatabase(dir ? { pgliteDir: dir } : {});
    const outage = await createTestApp({}, tdb);
    const countStored = () => countStoredReadings(tdb);
    try {
      const k = await outage.createKey('fleet-o', ['ingest']);
      const headers = { ...outage.auth(k), 'content-type': 'application/x-ndjson' };
      const committed = await outage.app.inject({
        method: 'POST',
        url: '/v1/readings',
        headers,
        payload: ndjsonLines('O-1', 0, 10),
      });
      expect(committed.json().accepted).toBe(10);

      let reply: Promise<LightMyRequestResponse>;
      if (tdb.url) {
        const body = new PassThrough();
        reply = outage.app.inject({ method: 'POST', url: '/v1/readings', headers, payload: body });
        // More than one insert chunk (5,000 rows): part of the batch is written inside the
        // transaction by the time the server has read this much.
        if (!body.write(ndjsonLines('O-2', 0, 12_000))) await once(body, 'drain');
        const admin = new pg.Client({ connectionString: tdb.url });
        await admin.connect();
        await admin.query(
          'select pg_terminate_backend(pid) from pg_stat_activity where datname = current_database() and pid <> pg_backend_pid()',
        );
        await admin.end();
        body.end(ndjsonLines('O-2', 12_000, 100));
      } else {
        // PGlite's close() waits for a running transaction, so the embedded database cannot vanish
        // in the middle of one: here it is gone when the batch arrives.
        await tdb.handle.close();
        reply = outage.app.inject({
          method: 'POST',
          url: '/v1/readings',
          headers,
          payload: ndjsonLines('O-2', 0, 12_000),
        });
      }
      const res = await reply;
      expect(res.statusCode).toBe(503);
      expect(res.json()).toEqual({
        error: { code: 'database_unavailable', message: expect.stringMatching(/nothing was stored/) },
      });

      if (tdb.url) {
        // The pool replaces the dead connections: the gateway's retry succeeds.
        const retry = await outage.app.inject({
          method: 'POST',
          url: '/v1/readings',
          headers,
          payload: ndjsonLines('O-3', 0, 5),
        });
        expect(retry.json().accepted).toBe(5);
        expect(await countStored()).toBe(15);
      } else {
        expect(await countStored()).toBe(10);
      }
      await tdb.handle.close();
      const ready = await outage.app.inject({ method: 'GET', url: '/readyz' });
      expect([ready.statusCode, ready.json()]).toEqual([503, { status: 'unavailable', database: testDatabaseKind() }]);
      expect((await outage.app.inject({ method: 'GET', url: '/healthz' })).statusCode).toBe(200);
    } finally {
      await outage.close();
    }
  });
});
