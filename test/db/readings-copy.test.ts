import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import fc from 'fast-check';
import { from as copyFrom } from 'pg-copy-streams';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { encodeReadingsCopy, READINGS_COPY_COLUMNS } from '../../services/db/pg-wire/binary-copy-in.js';
import type { ReadingChunk } from '../../services/db/reading-chunk.js';
import { createTestDatabase, testDatabaseKind, type TestDatabase } from '../helpers/test-database.js';

// On a PostgreSQL server long bodies are stored by binary COPY; elsewhere readings go as text.
// The server's own text input functions are the reference: what the binary encoder sends must
// decode to exactly what the text form of the same values gives.

let tdb: TestDatabase;
beforeAll(async () => {
  tdb = await createTestDatabase();
});
afterAll(async () => {
  await tdb.drop();
});

/** A channel value as ingest keeps it (rounded to 1e-6), or NaN for a missing one. */
const channel = fc.oneof(
  { weight: 9, arbitrary: fc.double({ min: -273, max: 20_000, noNaN: true }).map((v) => Math.round(v * 1e6) / 1e6) },
  { weight: 1, arbitrary: fc.constant(NaN) },
);
/** 2000-01-01 to 2040, whole milliseconds or with microseconds. */
const tsMs = fc.oneof(
  fc.integer({ min: 946_684_800_000, max: 2_208_988_800_000 }),
  fc.integer({ min: 946_684_800_000_000, max: 2_208_988_800_000_000 }).map((us) => us / 1000),
);
const vehicleId = fc.stringMatching(/^[A-Za-z0-9][A-Za-z0-9_.:-]{0,63}$/);
const chunk = fc
  .array(
    fc.record({
      v: vehicleId,
      t: tsMs,
      c: channel,
      a: channel,
      s: channel,
      r: channel,
      b: channel,
      l: channel,
      p: channel,
    }),
    { minLength: 1, maxLength: 40 },
  )
  .map((rows): ReadingChunk => ({
    length: rows.length,
    vehicleIds: rows.map((x) => x.v),
    tsMs: Float64Array.from(rows, (x) => x.t),
    coolantC: Float64Array.from(rows, (x) => x.c),
    ambientC: Float64Array.from(rows, (x) => x.a),
    speedKph: Float64Array.from(rows, (x) => x.s),
    rpm: Float64Array.from(rows, (x) => x.r),
    barometricKpa: Float64Array.from(rows, (x) => x.b),
    coolantLevelPct: Float64Array.from(rows, (x) => x.l),
    coolantPressureKpa: Float64Array.from(rows, (x) => x.p),
  }));

/** The ISO form with microseconds, which timestamptz's text input reads exactly. */
function isoMicros(ms: number): string {
  let whole = Math.floor(ms);
  let us = Math.round((ms - whole) * 1000);
  if (us === 1000) {
    whole += 1;
    us = 0;
  }
  return `${new Date(whole).toISOString().slice(0, -1)}${String(us).padStart(3, '0')}Z`;
}
const tsText = (values: Float64Array) => `{${Array.from(values, isoMicros).join(',')}}`;
const text = (values: ArrayLike<number>) =>
  `{${Array.from(values, (v) => (Number.isNaN(v) ? 'NULL' : String(v))).join(',')}}`;

describe.skipIf(testDatabaseKind() !== 'postgres')('binary COPY of readings', () => {
  it('binary COPY stores what an INSERT of the text form stores', async () => {
    const client = await tdb.handle.pool!.connect();
    try {
      await client.query(
        `create temp table via_copy (vehicle_id text, ts timestamptz, coolant_c real, ambient_c real, speed_kph real, rpm real, barometric_kpa real, coolant_level_pct real, coolant_pressure_kpa real)`,
      );
      await client.query(`create temp table via_text (like via_copy)`);
      await fc.assert(
        fc.asyncProperty(chunk, async (c) => {
          await client.query('truncate via_copy, via_text');
          await pipeline(
            Readable.from([encodeReadingsCopy(c)]),
            client.query(copyFrom(`copy via_copy ${READINGS_COPY_COLUMNS} from stdin (format binary)`)),
          );
          await client.query(
            `insert into via_text select * from unnest($1::text[], $2::timestamptz[], $3::real[], $4::real[], $5::real[], $6::real[], $7::real[], $8::real[], $9::real[])`,
            [
              `{"${c.vehicleIds.join('","')}"}`,
              tsText(c.tsMs),
              text(c.coolantC),
              text(c.ambientC),
              text(c.speedKph),
              text(c.rpm),
              text(c.barometricKpa!),
              text(c.coolantLevelPct!),
              text(c.coolantPressureKpa!),
            ],
          );
          const diff = await client.query(
            `select count(*)::int as n from ((table via_copy except all table via_text) union all (table via_text except all table via_copy)) d`,
          );
          const stored = await client.query(`select count(*)::int as n from via_copy`);
          expect({ differing: diff.rows[0].n, stored: stored.rows[0].n }).toEqual({ differing: 0, stored: c.length });
        }),
        { numRuns: 150 },
      );
    } finally {
      client.release();
    }
  });
});
