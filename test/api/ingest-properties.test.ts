import { gzipSync } from 'node:zlib';
import fc from 'fast-check';
import { beforeAll, describe, expect, it } from 'vitest';
import { useTestApp } from '../helpers/test-app.js';

// Property-based tests of the ingest parser and validator through the HTTP API: whatever the body,
// the server answers 2xx or 4xx with a well-formed body (never 500), stores exactly what it
// reports as accepted and nothing it reports as rejected.

const t = useTestApp({ maxBodyBytes: 512 * 1024 });
let key: string;
beforeAll(async () => {
  key = await t.createKey('fleet-p', ['ingest']);
});

const NUM_RUNS = 30;
const CONTENT_TYPES = { json: 'application/json', ndjson: 'application/x-ndjson', csv: 'text/csv' } as const;
type Format = keyof typeof CONTENT_TYPES;
let run = 0;

interface Reply {
  accepted: number;
  duplicates: number;
  rejected: Array<{ index: number; reason: string }>;
}

/** Posts a body (already compressed when `gzip`) and checks the invariants every answer must keep; returns the reply on 200. */
async function postAndCheck(body: string | Buffer, format: Format, gzip = false): Promise<Reply | undefined> {
  const before = await t.countReadings();
  const res = await t.app.inject({
    method: 'POST',
    url: '/v1/readings',
    headers: { ...t.auth(key), 'content-type': CONTENT_TYPES[format], ...(gzip ? { 'content-encoding': 'gzip' } : {}) },
    payload: body,
  });
  const stored = (await t.countReadings()) - before;
  expect([200, 400, 413], res.body).toContain(res.statusCode);
  if (res.statusCode !== 200) {
    expect(res.json()).toEqual({ error: { code: expect.any(String), message: expect.any(String) } });
    expect(stored).toBe(0);
    return undefined;
  }
  const reply = res.json() as Reply;
  expect(stored).toBe(reply.accepted);
  const indexes = reply.rejected.map((r) => r.index);
  expect(indexes).toEqual([...new Set(indexes)].sort((a, b) => a - b));
  for (const r of reply.rejected) expect(r.reason.length).toBeGreaterThan(0);
  return reply;
}

// Readings: valid ones (each must be accepted), ones that break exactly one rule (each must be
// rejected) and arbitrary JSON values (either, but never a crash).
type Item =
  | { kind: 'valid' | 'invalid'; v: number; tsMs: number; fields: Record<string, unknown> }
  | { kind: 'any'; value: unknown };

const AGO_MIN_MS = 60_000;
const AGO_MAX_MS = 30 * 86_400_000;
const tsFormat = fc.constantFrom('iso', 'ms', 'ms-text');
const formatTs = (ms: number, f: string) => (f === 'iso' ? new Date(ms).toISOString() : f === 'ms' ? ms : String(ms));
const celsiusInRange = fc.double({ min: -39.9, max: 209.9, noNaN: true });
const NUMERIC_TEXT = /^\s*-?\d+(\.\d+)?([eE][+-]?\d+)?\s*$/;

const validItem = fc
  .record({
    v: fc.integer({ min: 0, max: 3 }),
    agoS: fc.integer({ min: AGO_MIN_MS / 1000, max: AGO_MAX_MS / 1000 }),
    f: tsFormat,
    coolant: celsiusInRange,
    ambient: fc.option(fc.double({ min: -89, max: 89, noNaN: true })),
    unit: fc.constantFrom(undefined, 'C', 'F', 'K'),
  })
  .map(({ v, agoS, f, coolant, ambient, unit }): Item => {
    const tsMs = Math.floor(Date.now() / 1000) * 1000 - agoS * 1000;
    const toUnit = (c: number) => (unit === 'F' ? (c * 9) / 5 + 32 : unit === 'K' ? c + 273.15 : c);
    return {
      kind: 'valid',
      v,
      tsMs,
      fields: {
        ts: formatTs(tsMs, f),
        coolant: toUnit(coolant),
        ...(ambient !== null ? { ambient: toUnit(ambient) } : {}),
        ...(unit ? { unit } : {}),
      },
    };
  });

const brokenRule = fc.oneof(
  fc.double({ min: 210.01, max: 1e9, noNaN: true }).map((coolant) => ({ coolant, unit: 'C' })),
  fc.double({ min: -1e9, max: -40.01, noNaN: true }).map((coolant) => ({ coolant, unit: 'C' })),
  fc
    .oneof(
      fc.string().filter((s) => !NUMERIC_TEXT.test(s)),
      fc.boolean(),
      fc.array(fc.integer()),
    )
    .map((coolant) => ({ coolant })),
  fc.integer({ min: 0, max: Date.UTC(2000, 0, 1) - 1 }).map((ts) => ({ ts })),
  fc.integer({ min: 10 * 60_000, max: 1e11 }).map((ahead) => ({ ts: Date.now() + ahead })),
  fc
    .string()
    .filter((s) => !/^\d+$/.test(s.trim()) && !/^\d{4}-/.test(s))
    .map((ts) => ({ ts })),
  fc.constant({ vehicleId: undefined }),
  fc
    .string({ minLength: 1 })
    .filter((s) => !/^[A-Za-z0-9][A-Za-z0-9_.:-]{0,63}$/.test(s))
    .map((vehicleId) => ({ vehicleId })),
);
const invalidItem = fc
  .tuple(validItem, brokenRule)
  .map(([item, broken]): Item =>
    item.kind === 'valid' ? { ...item, kind: 'invalid', fields: { ...item.fields, ...broken } } : item,
  );
const anyItem = fc.jsonValue().map((value): Item => ({ kind: 'any', value }));
const items = fc.array(
  fc.oneof(
    { weight: 3, arbitrary: validItem },
    { weight: 2, arbitrary: invalidItem },
    { weight: 1, arbitrary: anyItem },
  ),
  { maxLength: 40 },
);

function materialise(list: Item[], prefix: string): unknown[] {
  return list.map((item) => (item.kind === 'any' ? item.value : { vehicleId: `${prefix}-${item.v}`, ...item.fields }));
}

/** The (vehicle, ts) keys stored for a run's vehicles. */
async function storedKeys(prefix: string): Promise<string[]> {
  const rows = await t.tdb.handle.db
    .selectFrom('readings')
    .select(['vehicle_id', 'ts'])
    .where('vehicle_id', 'like', `${prefix}-%`)
    .execute();
  return rows.map((r) => `${r.vehicle_id}@${r.ts.getTime()}`).sort();
}

describe('ingest properties', () => {
  it('accepts every valid reading, rejects every reading that breaks a rule and stores exactly the accepted ones (JSON and NDJSON, plain or gzip)', async () => {
    await fc.assert(
      fc.asyncProperty(items, fc.constantFrom<Format>('json', 'ndjson'), fc.boolean(), async (list, format, gzip) => {
        const prefix = `pv${run++}`;
        const readings = materialise(list, prefix);
        const body =
          format === 'json'
            ? JSON.stringify({ readings })
            : readings.map((r) => JSON.stringify(r) ?? 'null').join('\n');
        const reply = await postAndCheck(gzip ? gzipSync(body) : body, format, gzip);
        expect(reply).toBeDefined();
        const rejected = new Set(reply!.rejected.map((r) => r.index));
        list.forEach((item, i) => {
          if (item.kind === 'valid') expect(rejected.has(i), `reading ${i} ${JSON.stringify(readings[i])}`).toBe(false);
          if (item.kind === 'invalid')
            expect(rejected.has(i), `reading ${i} ${JSON.stringify(readings[i])}`).toBe(true);
        });
        expect(reply!.accepted + reply!.duplicates + rejected.size).toBe(list.length);
        const expected = new Set(
          list.flatMap((item, i) =>
            item.kind === 'valid' && !rejected.has(i) ? [`${prefix}-${item.v}@${item.tsMs}`] : [],
          ),
        );
        expect(await storedKeys(prefix)).toEqual([...expected].sort());
      }),
      { numRuns: NUM_RUNS },
    );
  });

  it('keeps its counts for CSV rows with random, quoted and misplaced fields', async () => {
    const field = fc.oneof(
      fc.string({ maxLength: 12 }),
      fc.string({ maxLength: 12 }).map((s) => `"${s.replace(/"/g, '""')}"`),
      fc.constantFrom('80', '-41', '211', '""', '"', 'a,b'),
    );
    const row = fc.oneof(
      validItem.map((item) =>
        item.kind === 'valid' && !item.fields.unit
          ? { valid: true, v: item.v, tsMs: item.tsMs, coolant: item.fields.coolant }
          : { valid: false, fields: ['x'] },
      ),
      fc.array(field, { minLength: 1, maxLength: 5 }).map((fields) => ({ valid: false, fields })),
    );
    await fc.assert(
      fc.asyncProperty(fc.array(row, { maxLength: 30 }), async (rows) => {
        const prefix = `pc${run++}`;
        const lines = rows.map((r) =>
          'v' in r ? `${prefix}-${r.v},${r.tsMs},${String(r.coolant)}` : r.fields.join(',').replace(/[\r\n]/g, ' '),
        );
        const counted = lines.filter((l) => l.trim() !== '').length;
        const reply = await postAndCheck(`vehicleId,ts,coolant\n${lines.join('\n')}\n`, 'csv');
        expect(reply).toBeDefined();
        expect(reply!.accepted + reply!.duplicates + reply!.rejected.length).toBe(counted);
        const stored = await storedKeys(prefix);
        const expected = new Set(rows.flatMap((r) => ('v' in r ? [`${prefix}-${r.v}@${r.tsMs}`] : [])));
        expect(stored).toEqual([...expected].sort());
      }),
      { numRuns: NUM_RUNS },
    );
  });

  it('never crashes on random bytes or JSON-like text, whatever the declared format and encoding', async () => {
    const token = fc.constantFrom(
      '{',
      '{"',
      '}',
      '[',
      ']',
      '"',
      ':',
      ',',
      '\\',
      '\\q',
      '\\u00',
      ' ',
      '\n',
      '\t',
      'readings',
      'unit',
      'vehicleId',
      '1',
      '-',
      'e',
      'x',
      'null',
      '\u0000',
      '\u00e9',
    );
    const jsonish = fc.array(token, { maxLength: 60 }).map((parts) => parts.join(''));
    // Field names as raw text: escapes and control characters that JSON does not allow.
    const rawFieldName = fc
      .tuple(fc.string({ maxLength: 8 }), fc.constantFrom('\\q', '\\', '\n', '\\u12', ''))
      .map(([a, b]) => `{"${a.replace(/["\\]/g, '')}${b}":1,"readings":[]}`);
    const text = fc.oneof(
      jsonish,
      jsonish.map((j) => `{"${j}`),
      rawFieldName,
      fc.string({ unit: 'binary', maxLength: 200 }),
      fc.uint8Array({ maxLength: 300 }).map((b) => Buffer.from(b)),
    );
    await fc.assert(
      fc.asyncProperty(
        text,
        fc.constantFrom<Format>('json', 'ndjson', 'csv'),
        fc.boolean(),
        async (body, format, gzip) => {
          await postAndCheck(gzip ? gzipSync(body) : body, format, gzip);
        },
      ),
      { numRuns: NUM_RUNS * 2 },
    );
  });

  it('never crashes on a valid body cut short, and stores nothing of a cut JSON object', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.array(validItem, { minLength: 1, maxLength: 20 }),
        fc.constantFrom<Format>('json', 'ndjson', 'csv'),
        fc.double({ min: 0, max: 1, noNaN: true, maxExcluded: true }),
        async (list, format, cut) => {
          const prefix = `pt${run++}`;
          const readings = materialise(list, prefix) as Array<{ vehicleId: string; ts: unknown; coolant: unknown }>;
          const full =
            format === 'json'
              ? JSON.stringify({ readings })
              : format === 'ndjson'
                ? readings.map((r) => JSON.stringify(r)).join('\n')
                : `vehicleId,ts,coolant,unit\n${readings.map((r) => `${r.vehicleId},${String(r.ts)},${String(r.coolant)},${(r as { unit?: string }).unit ?? ''}`).join('\n')}`;
          const body = full.slice(0, Math.floor(full.length * cut));
          const reply = await postAndCheck(body, format);
          if (format === 'json') expect(reply).toBeUndefined();
          // A cut gzip stream is malformed as a whole: 400, nothing stored.
          const compressed = gzipSync(full);
          expect(
            await postAndCheck(compressed.subarray(0, Math.floor(compressed.length * cut)), format, true),
          ).toBeUndefined();
        },
      ),
      { numRuns: NUM_RUNS },
    );
  });
});
