import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ReusedBufferSocket } from '../../services/db/pg-wire/receive-buffer-socket.js';
import { copyOut } from '../../services/db/pg-wire/copy-out.js';
import { eachCopyData } from '../helpers/copy-data.js';
import { createTestDatabase, testDatabaseKind, type TestDatabase } from '../helpers/test-database.js';

// The pool's connections receive into one buffer each; pg must still see every byte exactly once,
// in order, also right after a COPY that took the connection's data over.

describe.skipIf(testDatabaseKind() !== 'postgres')('pg over a socket that reuses its receive buffer', () => {
  let tdb: TestDatabase;
  beforeAll(async () => {
    tdb = await createTestDatabase();
  });
  afterAll(async () => {
    await tdb.drop();
  });

  it('is what the pool connects with, and a result spanning many reads arrives intact', async () => {
    const client = await tdb.handle.pool!.connect();
    try {
      expect((client as unknown as { connection: { stream: unknown } }).connection.stream).toBeInstanceOf(
        ReusedBufferSocket,
      );
      // About 3 MB: dozens of 64 KiB reads, with rows split across them.
      const { rows } = await client.query<{ i: number; s: string }>(
        "select i, md5(i::text) || repeat('x', 1000) as s from generate_series(1, 3000) i",
      );
      expect(rows).toHaveLength(3000);
      const digest = await client.query<{ d: string }>(
        "select md5(string_agg(md5(i::text) || repeat('x', 1000), '' order by i)) as d from generate_series(1, 3000) i",
      );
      expect(
        createHash('md5')
          .update(rows.map((r) => r.s).join(''))
          .digest('hex'),
      ).toBe(digest.rows[0]!.d);
    } finally {
      client.release();
    }
  });

  it('hands every CopyData message to the sink once, and the connection back to pg after the copy', async () => {
    const client = await tdb.handle.pool!.connect();
    try {
      for (let round = 0; round < 3; round++) {
        const seen: number[] = [];
        // Text COPY: one message per row, 200k rows, so messages straddle the 64 KiB reads.
        await copyOut(
          client,
          'copy (select i from generate_series(1, 200000) i) to stdout',
          eachCopyData((bytes, _view, start, end) => {
            seen.push(Number(Buffer.from(bytes.subarray(start, end - 1)).toString('latin1')));
          }),
        );
        expect(seen).toHaveLength(200_000);
        expect(seen.every((v, k) => v === k + 1)).toBe(true);
        const after = await client.query<{ n: string }>('select 41 + $1::int as n', [round + 1]);
        expect(Number(after.rows[0]!.n)).toBe(42 + round);
      }
    } finally {
      client.release();
    }
  });

  it('reports a sink that fails mid-copy once the copy is over, and the connection still answers', async () => {
    const client = await tdb.handle.pool!.connect();
    try {
      let taken = 0;
      const copy = copyOut(
        client,
        'copy (select i from generate_series(1, 100000) i) to stdout',
        eachCopyData(() => {
          if (++taken === 50_000) throw new Error('sink gave up at row 50,000');
        }),
      );
      await expect(copy).rejects.toThrow('sink gave up at row 50,000');
      // Nothing after the failure reached the sink; the rest of the copy was read and dropped.
      expect(taken).toBe(50_000);
      const after = await client.query<{ n: number }>('select 6 * 7 as n');
      expect(after.rows[0]!.n).toBe(42);
    } finally {
      client.release();
    }
  });

  it('fails rather than drop rows when a sink leaves a whole CopyData message untaken', async () => {
    const client = await tdb.handle.pool!.connect();
    try {
      await expect(
        copyOut(client, 'copy (select i from generate_series(1, 10) i) to stdout', (_bytes, _view, start) => start),
      ).rejects.toThrow('the sink did not take a whole CopyData message');
      const after = await client.query<{ n: number }>('select 6 * 7 as n');
      expect(after.rows[0]!.n).toBe(42);
    } finally {
      client.release();
    }
  });
});
