import { gzipSync } from 'node:zlib';
import { sql } from 'kysely';
import { beforeAll, describe, expect, it } from 'vitest';
import { useTestApp } from '../helpers/test-app.js';

const t = useTestApp({ maxBodyBytes: 256 * 1024, maxReadingsPerRequest: 1000 });
let key: string;

beforeAll(async () => {
  key = await t.createKey('fleet-r', ['ingest', 'read']);
});

interface IngestReply {
  accepted: number;
  duplicates: number;
  rejected: Array<{ index: number; reason: string }>;
}

async function post(
  body: string | Buffer,
  contentType = 'application/json',
  extra: Record<string, string> = {},
  query = '',
) {
  return t.app.inject({
    method: 'POST',
    url: `/v1/readings${query}`,
    headers: { ...t.auth(key), 'content-type': contentType, ...extra },
    payload: body,
  });
}

function json(readings: unknown[], unit?: string): string {
  return JSON.stringify(unit ? { unit, readings } : { readings });
}

async function storedRows(vehicleId: string) {
  return t.tdb.handle.db.selectFrom('readings').selectAll().where('vehicle_id', '=', vehicleId).orderBy('ts').execute();
}

/** Base instant of a test's readings: whole minutes, an hour ago. */
const BASE_MS = Math.floor((Date.now() - 3_600_000) / 60_000) * 60_000;
const iso = (offsetS: number) => new Date(BASE_MS + offsetS * 1000).toISOString();

describe('POST /v1/readings body formats', () => {
  it('stores a JSON batch and answers with the accepted count after commit', async () => {
    const res = await post(
      json([
        { vehicleId: 'J-1', ts: iso(0), coolant: 20.5, ambient: 4, speedKph: 0, rpm: 800 },
        { vehicleId: 'J-1', ts: iso(10), coolant: 25 },
      ]),
    );
    expect(res.statusCode).toBe(200);
    expect(res.json()).toEqual({ accepted: 2, duplicates: 0, rejected: [] });
    const rows = await storedRows('J-1');
    expect(rows.map((r) => [r.ts.toISOString(), r.coolant_c, r.ambient_c, r.speed_kph, r.rpm])).toEqual([
      [iso(0), 20.5, 4, 0, 800],
      [iso(10), 25, null, null, null],
    ]);
  });

  it('stores NDJSON, one reading per line, skipping blank lines and CRLF endings', async () => {
    const body = `{"vehicleId":"N-1","ts":"${iso(0)}","coolant":30}\r\n\n{"vehicleId":"N-1","ts":"${iso(1)}","coolant":31}\n`;
    const res = await post(body, 'application/x-ndjson');
    expect(res.json()).toEqual({ accepted: 2, duplicates: 0, rejected: [] });
    expect((await storedRows('N-1')).map((r) => r.coolant_c)).toEqual([30, 31]);
  });

  it('reads CSV columns by their header names in any order, with quoted fields', async () => {
    const body = `rpm,coolant,"ts",vehicleId,ambient\n900,"40.5",${iso(0)},"C-1",\n,41,"${iso(5)}",C-1,"-3.5"\n`;
    const res = await post(body, 'text/csv');
    expect(res.json()).toEqual({ accepted: 2, duplicates: 0, rejected: [] });
    const rows = await storedRows('C-1');
    expect(rows.map((r) => [r.coolant_c, r.ambient_c, r.rpm])).toEqual([
      [40.5, null, 900],
      [41, -3.5, null],
    ]);
  });

  it('rejects a CSV body whose header lacks a required column', async () => {
    const res = await post(`vehicleId,coolant\nC-2,40\n`, 'text/csv');
    expect(res.statusCode).toBe(400);
    expect(res.json().error.message).toMatch(/'ts' is missing/);
  });

  it('accepts gzip-compressed JSON, NDJSON and CSV bodies', async () => {
    const gz = { 'content-encoding': 'gzip' };
    const a = await post(gzipSync(json([{ vehicleId: 'G-1', ts: iso(0), coolant: 50 }])), 'application/json', gz);
    const b = await post(gzipSync(`{"vehicleId":"G-1","ts":"${iso(1)}","coolant":51}\n`), 'application/x-ndjson', gz);
    const c = await post(gzipSync(`vehicleId,ts,coolant\nG-1,${iso(2)},52\n`), 'text/csv', gz);
    for (const res of [a, b, c]) expect(res.json()).toEqual({ accepted: 1, duplicates: 0, rejected: [] });
    expect((await storedRows('G-1')).map((r) => r.coolant_c)).toEqual([50, 51, 52]);
  });

  it('answers 400 for a body that is not valid gzip', async () => {
    const res = await post('not gzip at all', 'application/json', { 'content-encoding': 'gzip' });
    expect(res.statusCode).toBe(400);
    expect(res.json().error.code).toBe('malformed_body');
  });
});

describe('units and timestamps', () => {
  // Kelvin and Fahrenheit by their SI definitions (BIPM SI Brochure, 9th ed.): T/°C = T/K − 273.15,
  // T/°F = 9/5·T/°C + 32, so 212 °F = 100 °C, 32 °F = 0 °C, 373.15 K = 100 °C, 273.15 K = 0 °C.
  it('converts a batch in °F to °C', async () => {
    const res = await post(json([{ vehicleId: 'U-F', ts: iso(0), coolant: 212, ambient: 32 }], 'F'));
    expect(res.json().accepted).toBe(1);
    const [row] = await storedRows('U-F');
    expect([row?.coolant_c, row?.ambient_c]).toEqual([100, 0]);
  });

  it('converts a batch in K to °C', async () => {
    const res = await post(json([{ vehicleId: 'U-K', ts: iso(0), coolant: 373.15, ambient: 273.15 }], 'K'));
    expect(res.json().accepted).toBe(1);
    const [row] = await storedRows('U-K');
    expect([row?.coolant_c, row?.ambient_c]).toEqual([100, 0]);
  });

  it('takes the unit from the query string, and from a reading that names its own', async () => {
    const body = `{"vehicleId":"U-Q","ts":"${iso(0)}","coolant":212}\n{"vehicleId":"U-Q","ts":"${iso(1)}","coolant":373.15,"unit":"K"}\n{"vehicleId":"U-Q","ts":"${iso(2)}","coolant":100,"unit":"C"}\n`;
    const res = await post(body, 'application/x-ndjson', {}, '?unit=F');
    expect(res.json().accepted).toBe(3);
    expect((await storedRows('U-Q')).map((r) => r.coolant_c)).toEqual([100, 100, 100]);
  });

  it('refuses a non-Celsius unit placed after the readings it would convert', async () => {
    const res = await post(`{"readings":[{"vehicleId":"U-L","ts":"${iso(0)}","coolant":212}],"unit":"F"}`);
    expect(res.statusCode).toBe(400);
    expect(await t.countReadings(['U-L'])).toBe(0);
  });

  it('accepts ts as RFC 3339 with any offset and as epoch milliseconds (number or text)', async () => {
    const ms = BASE_MS + 7_000;
    const offset = new Date(BASE_MS + 8_000 + 2 * 3_600_000).toISOString().replace('Z', '+02:00');
    const body = json([
      { vehicleId: 'T-1', ts: ms, coolant: 60 },
      { vehicleId: 'T-1', ts: offset, coolant: 61 },
      { vehicleId: 'T-1', ts: String(BASE_MS + 9_000), coolant: 62 },
    ]);
    expect((await post(body)).json().accepted).toBe(3);
    expect((await storedRows('T-1')).map((r) => r.ts.getTime())).toEqual([
      BASE_MS + 7_000,
      BASE_MS + 8_000,
      BASE_MS + 9_000,
    ]);
  });
});

describe('per-reading rejection', () => {
  it('rejects each invalid reading with its index and reason and stores the rest', async () => {
    const future = new Date(Date.now() + 10 * 60_000).toISOString();
    const cases: Array<[unknown, RegExp]> = [
      [{ ts: iso(0), coolant: 80 }, /vehicleId is missing/],
      [{ vehicleId: 'bad id!', ts: iso(0), coolant: 80 }, /vehicleId must be/],
      [{ vehicleId: 'R-1', coolant: 80 }, /ts is missing/],
      [{ vehicleId: 'R-1', ts: 'yesterday', coolant: 80 }, /ts is neither/],
      [{ vehicleId: 'R-1', ts: '2026-11-30T10:00:00', coolant: 80 }, /ts is neither/], // no time zone
      // RFC 3339 §5.7: mday at most the month's length, hour 00–23.
      [{ vehicleId: 'R-1', ts: '2026-02-30T10:00:00Z', coolant: 80 }, /ts is neither/],
      [{ vehicleId: 'R-1', ts: '2026-11-30T24:00:00Z', coolant: 80 }, /ts is neither/],
      [{ vehicleId: 'R-1', ts: future, coolant: 80 }, /more than 5 minutes in the future/],
      [{ vehicleId: 'R-1', ts: '1999-12-31T23:59:59Z', coolant: 80 }, /before 2000/],
      [{ vehicleId: 'R-1', ts: iso(0) }, /coolant is missing/],
      [{ vehicleId: 'R-1', ts: iso(0), coolant: 'hot' }, /coolant is not a number/],
      // SAE J1939-71 SPN 110: 1 °C/bit, offset −40 °C, largest valid raw 0xFA → −40 … 210 °C.
      [{ vehicleId: 'R-1', ts: iso(0), coolant: 210.5 }, /outside the sensor's valid range/],
      [{ vehicleId: 'R-1', ts: iso(0), coolant: -40.5 }, /outside the sensor's valid range/],
      [{ vehicleId: 'R-1', ts: iso(0), coolant: 80, ambient: 'cold' }, /ambient is not a number/],
      [{ vehicleId: 'R-1', ts: iso(0), coolant: 80, ambient: 95 }, /ambient .* outside/],
      [{ vehicleId: 'R-1', ts: iso(0), coolant: 80, speedKph: -1 }, /speedKph .* outside/],
      [{ vehicleId: 'R-1', ts: iso(0), coolant: 80, rpm: 'fast' }, /rpm is not a number/],
      [{ vehicleId: 'R-1', ts: iso(0), coolant: 80, rpm: 9000 }, /rpm .* outside/],
      [{ vehicleId: 'R-1', ts: iso(0), coolant: 80, unit: 'R' }, /unit must be/],
      [42, /must be a JSON object/],
    ];
    const valid = [
      { vehicleId: 'R-1', ts: iso(1), coolant: -40 },
      { vehicleId: 'R-1', ts: iso(2), coolant: 210 },
    ];
    const res = await post(json([valid[0], ...cases.map((c) => c[0]), valid[1]]));
    expect(res.statusCode).toBe(200);
    const reply = res.json() as IngestReply;
    expect(reply.accepted).toBe(2);
    expect(reply.rejected.map((r) => r.index)).toEqual(cases.map((_, i) => i + 1));
    cases.forEach(([, reason], i) => expect(reply.rejected[i]?.reason).toMatch(reason));
    expect((await storedRows('R-1')).map((r) => r.coolant_c)).toEqual([-40, 210]);
  });

  it('rejects a malformed NDJSON line by its index, not counting blank lines', async () => {
    const body = `{"vehicleId":"R-2","ts":"${iso(0)}","coolant":70}\n\n{"vehicleId":"R-2","ts":\n{"vehicleId":"R-2","ts":"${iso(1)}","coolant":71}\n`;
    const reply = (await post(body, 'application/x-ndjson')).json() as IngestReply;
    expect(reply).toEqual({ accepted: 2, duplicates: 0, rejected: [{ index: 1, reason: 'not valid JSON' }] });
  });

  it('rejects a malformed element of a JSON batch and keeps the others', async () => {
    const body = `{"readings":[{"vehicleId":"R-3","ts":"${iso(0)}","coolant":70},{"vehicleId":R-3},{"vehicleId":"R-3","ts":"${iso(1)}","coolant":71}]}`;
    const reply = (await post(body)).json() as IngestReply;
    expect(reply).toEqual({ accepted: 2, duplicates: 0, rejected: [{ index: 1, reason: 'not valid JSON' }] });
  });

  it('rejects a CSV row with the wrong number of fields or an unclosed quote', async () => {
    const body = `vehicleId,ts,coolant\nR-4,${iso(0)},70\nR-4,${iso(1)}\nR-4,${iso(2)},71,9\n"R-4,${iso(3)},72\nR-4,${iso(4)},73\n`;
    const reply = (await post(body, 'text/csv')).json() as IngestReply;
    expect(reply.accepted).toBe(2);
    expect(reply.rejected.map((r) => r.index)).toEqual([1, 2, 3]);
    for (const r of reply.rejected) expect(r.reason).toMatch(/number of fields/);
    expect((await storedRows('R-4')).map((r) => r.coolant_c)).toEqual([70, 73]);
  });
});

describe('stored values', () => {
  it('stores a value too small for a 4-byte float as 0 instead of failing the batch', async () => {
    // float4 (IEEE 754 binary32) holds no magnitude below about 1.4e-45; Postgres refuses them.
    const res = await post(json([{ vehicleId: 'S-1', ts: iso(0), coolant: -5e-324, ambient: 1e-40 }]));
    expect(res.json()).toEqual({ accepted: 1, duplicates: 0, rejected: [] });
    const [row] = await storedRows('S-1');
    expect([Math.abs(row!.coolant_c), Math.abs(row!.ambient_c!)]).toEqual([0, 0]);
  });
});

describe('duplicates', () => {
  it('counts a repeated reading as a duplicate and stores it once, in a batch and on retry', async () => {
    const batch = json([
      { vehicleId: 'D-1', ts: iso(0), coolant: 70 },
      { vehicleId: 'D-1', ts: iso(0), coolant: 70 },
      { vehicleId: 'D-1', ts: iso(1), coolant: 71 },
    ]);
    expect((await post(batch)).json()).toEqual({ accepted: 2, duplicates: 1, rejected: [] });
    // A gateway that lost the first answer retries the same batch.
    expect((await post(batch)).json()).toEqual({ accepted: 0, duplicates: 3, rejected: [] });
    expect(await t.countReadings(['D-1'])).toBe(2);
  });
});

describe('malformed and oversized requests', () => {
  it.each([
    ['a truncated object', `{"readings":[{"vehicleId":"M-1","ts":"${iso(0)}","coolant":70}`],
    ['an array instead of an object', `[{"vehicleId":"M-1","ts":"${iso(0)}","coolant":70}]`],
    ['readings that are not an array', `{"readings":5}`],
    ['no readings field', `{"unit":"C"}`],
    [
      'a field name with an escape JSON does not allow',
      `{"\\q":1,"readings":[{"vehicleId":"M-1","ts":"${iso(0)}","coolant":70}]}`,
    ],
    ['text after the object', `{"readings":[{"vehicleId":"M-1","ts":"${iso(0)}","coolant":70}]} trailing`],
  ])('answers 400 with the uniform body for %s and stores nothing', async (_name, body) => {
    const res = await post(body);
    expect(res.statusCode).toBe(400);
    expect(res.json()).toEqual({ error: { code: expect.any(String), message: expect.any(String) } });
    expect(await t.countReadings(['M-1'])).toBe(0);
  });

  it('answers 413 for a body over the limit and stores nothing', async () => {
    const line = (i: number) => `{"vehicleId":"L-1","ts":${BASE_MS + i * 1000},"coolant":80,"ambient":10.25}\n`;
    const body = Array.from({ length: 4000 }, (_, i) => line(i)).join('');
    expect(body.length).toBeGreaterThan(t.config.maxBodyBytes);
    const res = await post(body, 'application/x-ndjson');
    expect(res.statusCode).toBe(413);
    expect(res.json().error.code).toBe('payload_too_large');
    expect(await t.countReadings(['L-1'])).toBe(0);
  });

  it('answers 413 for a gzip bomb: small compressed, over the limit decompressed', async () => {
    const bomb = gzipSync(Buffer.alloc(50 * 1024 * 1024, 0x20));
    expect(bomb.length).toBeLessThan(t.config.maxBodyBytes);
    const res = await post(bomb, 'application/x-ndjson', { 'content-encoding': 'gzip' });
    expect(res.statusCode).toBe(413);
  });

  it('answers 413 for more readings than one request may carry', async () => {
    const body = Array.from(
      { length: t.config.maxReadingsPerRequest + 1 },
      (_, i) => `L-2,${BASE_MS + i * 1000},80`,
    ).join('\n');
    const res = await post(`vehicleId,ts,coolant\n${body}\n`, 'text/csv');
    expect(res.statusCode).toBe(413);
    expect(await t.countReadings(['L-2'])).toBe(0);
  });

  it('answers 415 for an unsupported media type or Content-Encoding', async () => {
    const body = json([{ vehicleId: 'W-1', ts: iso(0), coolant: 70 }]);
    const plain = await post(body, 'text/plain');
    expect(plain.statusCode).toBe(415);
    expect(plain.json().error.code).toBe('unsupported_media_type');
    const brotli = await post(body, 'application/json', { 'content-encoding': 'br' });
    expect(brotli.statusCode).toBe(415);
    expect(brotli.json().error.code).toBe('unsupported_media_type');
    expect(await t.countReadings(['W-1'])).toBe(0);
  });
});

describe('side effects of an ingest', () => {
  it("registers an unknown vehicle to the key's fleet with the default profile", async () => {
    await post(json([{ vehicleId: 'NEW-1', ts: iso(0), coolant: 70 }]));
    const v = await t.tdb.handle.db
      .selectFrom('vehicles')
      .selectAll()
      .where('vehicle_id', '=', 'NEW-1')
      .executeTakeFirstOrThrow();
    expect([v.fleet_id, v.engine_family, v.thermostat_open_c, v.cap_pressure_kpa, v.glycol_percent]).toEqual([
      'fleet-r',
      'unknown',
      88,
      100,
      50,
    ]);
  });

  it('marks the vehicle for analysis from its earliest new reading, ignoring duplicates', async () => {
    const queue = () =>
      t.tdb.handle.db.selectFrom('analysis_queue').selectAll().where('vehicle_id', '=', 'Q-1').executeTakeFirst();
    await post(json([3, 1, 2].map((s) => ({ vehicleId: 'Q-1', ts: iso(s * 60), coolant: 70 }))));
    expect((await queue())?.dirty_from.toISOString()).toBe(iso(60));
    // The worker has analysed it; a retry of an old reading plus one new reading follows.
    await t.tdb.handle.db.deleteFrom('analysis_queue').where('vehicle_id', '=', 'Q-1').execute();
    await post(
      json([
        { vehicleId: 'Q-1', ts: iso(60), coolant: 70 },
        { vehicleId: 'Q-1', ts: iso(240), coolant: 71 },
      ]),
    );
    expect((await queue())?.dirty_from.toISOString()).toBe(iso(240));
    // Only duplicates: nothing new to analyse.
    await t.tdb.handle.db.deleteFrom('analysis_queue').where('vehicle_id', '=', 'Q-1').execute();
    await post(json([{ vehicleId: 'Q-1', ts: iso(240), coolant: 71 }]));
    expect(await queue()).toBeUndefined();
  });

  it('writes an audit row naming the key, the fleet and the counts', async () => {
    const body = `{"vehicleId":"A-1","ts":"${iso(0)}","coolant":70}\n{"vehicleId":"A-2","ts":"${iso(0)}","coolant":70}\n{"vehicleId":"A-1","ts":"${iso(0)}","coolant":70}\nnope\n`;
    await post(body, 'application/x-ndjson');
    const keyId = key.split('_')[1];
    const audit = await t.tdb.handle.db
      .selectFrom('ingest_audit')
      .selectAll()
      .where('key_id', '=', keyId!)
      .orderBy('audit_id', 'desc')
      .executeTakeFirstOrThrow();
    expect([
      audit.fleet_id,
      audit.content_type,
      audit.accepted,
      audit.duplicates,
      audit.rejected,
      audit.vehicles,
      Number(audit.body_bytes),
    ]).toEqual(['fleet-r', 'ndjson', 2, 1, 1, 2, Buffer.byteLength(body)]);
  });

  it('creates the partition of a back-filled old month and stores the reading in it', async () => {
    // 20 months ago: inside the default INGEST_MAX_AGE_DAYS (730), older than any partition made ahead.
    const old = new Date(Date.now());
    old.setUTCMonth(old.getUTCMonth() - 20, 14);
    const res = await post(json([{ vehicleId: 'B-1', ts: old.toISOString(), coolant: 20 }]));
    expect(res.json().accepted).toBe(1);
    const part = await sql<{
      part: string;
    }>`select tableoid::regclass::text as part from readings where vehicle_id = 'B-1'`.execute(t.tdb.handle.db);
    expect(part.rows).toEqual([
      { part: `readings_y${old.getUTCFullYear()}m${String(old.getUTCMonth() + 1).padStart(2, '0')}` },
    ]);
  });

  it('rejects, one by one, readings older than INGEST_MAX_AGE_DAYS and creates no partition for them', async () => {
    const partitionsBefore = await sql<{
      n: number;
    }>`select count(*)::int as n from pg_inherits where inhparent = 'readings'::regclass`.execute(t.tdb.handle.db);
    const readings = Array.from({ length: 40 }, (_, i) => ({
      vehicleId: 'B-2',
      ts: Date.UTC(2001 + Math.floor(i / 12), i % 12, 15),
      coolant: 20,
    }));
    readings.push({ vehicleId: 'B-2', ts: BASE_MS, coolant: 20 });
    const reply = (await post(json(readings))).json() as IngestReply;
    expect(reply.accepted).toBe(1);
    expect(reply.rejected).toHaveLength(40);
    expect(reply.rejected[0]!.reason).toMatch(/more than 730 days old/);
    const partitionsAfter = await sql<{
      n: number;
    }>`select count(*)::int as n from pg_inherits where inhparent = 'readings'::regclass`.execute(t.tdb.handle.db);
    expect(partitionsAfter.rows[0]!.n).toBe(partitionsBefore.rows[0]!.n);
  });

  it('stores exactly the readings it accepted across many vehicles', async () => {
    const readings = Array.from({ length: 600 }, (_, i) => ({
      vehicleId: `E-${i % 7}`,
      ts: BASE_MS - i * 1000,
      coolant: i % 50 === 0 ? 999 : 60 + (i % 40),
    }));
    const reply = (await post(json(readings))).json() as IngestReply;
    const rejected = new Set(reply.rejected.map((r) => r.index));
    const expected = readings
      .filter((_, i) => !rejected.has(i))
      .map((r) => `${r.vehicleId}@${r.ts}`)
      .sort();
    const ids = Array.from({ length: 7 }, (_, i) => `E-${i}`);
    const rows = await t.tdb.handle.db
      .selectFrom('readings')
      .select(['vehicle_id', 'ts'])
      .where('vehicle_id', 'in', ids)
      .execute();
    expect(rejected.size).toBe(12);
    expect(reply.accepted).toBe(588);
    expect(rows.map((r) => `${r.vehicle_id}@${r.ts.getTime()}`).sort()).toEqual(expected);
  });
});
