import http from 'node:http';
import { sql } from 'kysely';
import { describe, expect, it } from 'vitest';
import { useServedTestApp } from '../../helpers/test-app.js';
import { testDatabaseKind } from '../../helpers/test-database.js';
import { postReadings } from '../../helpers/raw-http.js';

// Regression: concurrent bodies over the same readings in different orders deadlock on the
// `readings` primary key; PostgreSQL aborts one, and that request was answered 500. Now the
// aborted chunk is retried a few times, and if the conflict persists (it does here: each body
// holds what the other needs) the request fails with nothing stored and 503 + Retry-After, and
// the gateway's retry then stores it. Needs two connections: PostgreSQL.

const served = useServedTestApp('fleet-dl');
const t = served.t;

const T0_MS = Date.now() - 2 * 86_400_000;
const lines = (vehicleId: string, from: number, to: number) => {
  let out = '';
  for (let i = from; i < to; i++) out += `{"vehicleId":"${vehicleId}","ts":${T0_MS + i * 1000},"coolant":70}\n`;
  return out;
};

interface Reply {
  status: number;
  retryAfter: string | undefined;
  body: { error?: { code: string }; accepted?: number };
}

function streamingPost(): { req: http.ClientRequest; reply: Promise<Reply> } {
  const req = http.request(`${served.base}/v1/readings`, {
    method: 'POST',
    headers: { authorization: `Bearer ${served.key}`, 'content-type': 'application/x-ndjson' },
  });
  const reply = new Promise<Reply>((resolve, reject) => {
    req.on('error', reject);
    req.on('response', (res) => {
      const parts: Buffer[] = [];
      res.on('data', (c: Buffer) => parts.push(c));
      res.on('end', () =>
        resolve({
          status: res.statusCode ?? 0,
          retryAfter: res.headers['retry-after'],
          body: JSON.parse(Buffer.concat(parts).toString()) as Reply['body'],
        }),
      );
    });
  });
  return { req, reply };
}

/** Resolves once `n` ingest transactions sit idle in transaction (waiting for more body). */
async function transactionsWaitingForBody(n: number): Promise<void> {
  for (;;) {
    const r = await sql<{
      n: number;
    }>`select count(*)::int as n from pg_stat_activity where datname = current_database() and state = 'idle in transaction'`.execute(
      t.tdb.handle.db,
    );
    if (r.rows[0]!.n >= n) return;
    await new Promise((resolve) => setTimeout(resolve, 20));
  }
}

describe.skipIf(testDatabaseKind() === 'pglite')('two streamed bodies that need each other’s rows', () => {
  it('end with one stored, the other answered 503 with Retry-After and stored on its retry', async () => {
    const x = streamingPost();
    const y = streamingPost();
    // 10,000 rows each: two chunks, stored inside each body's transaction before the body ends.
    x.req.write(lines('DL-1', 0, 10_000));
    y.req.write(lines('DL-2', 0, 10_000));
    await transactionsWaitingForBody(2);
    // Now each sends the other's rows: each insert waits for the other transaction.
    x.req.end(lines('DL-2', 0, 5_000));
    y.req.end(lines('DL-1', 0, 5_000));
    const replies = await Promise.all([x.reply, y.reply]);
    expect(replies.map((r) => r.status).sort()).toEqual([200, 503]);
    const loser = replies.find((r) => r.status === 503)!;
    expect(loser.body).toEqual({ error: { code: 'retry_later', message: expect.any(String) } });
    expect(Number(loser.retryAfter)).toBeGreaterThan(0);
    expect(await t.countReadings(['DL-1', 'DL-2'])).toBe(15_000);

    // The gateway retries after Retry-After: everything is stored once.
    const loserIsX = replies[0]!.status === 503;
    const retry = await postReadings(
      served.base,
      served.key,
      'application/x-ndjson',
      loserIsX
        ? lines('DL-1', 0, 10_000) + lines('DL-2', 0, 5_000)
        : lines('DL-2', 0, 10_000) + lines('DL-1', 0, 5_000),
    );
    expect(retry.status).toBe(200);
    expect(retry.json).toMatchObject({ accepted: 5_000, duplicates: 10_000 });
    expect(await t.countReadings(['DL-1', 'DL-2'])).toBe(20_000);
  });

  it('retry one-chunk bodies whole: overlapping gateway batches in shuffled orders all get 200 and store each reading once', async () => {
    const ROWS = 2_000;
    const rows = lines('DL-3', 0, ROWS).trimEnd().split('\n');
    let seed = 7;
    const shuffled = () => {
      const out = [...rows];
      for (let i = out.length - 1; i > 0; i--) {
        seed = (seed * 1_103_515_245 + 12_345) % 2 ** 31;
        const j = seed % (i + 1);
        [out[i], out[j]] = [out[j]!, out[i]!];
      }
      return `${out.join('\n')}\n`;
    };
    let accepted = 0;
    for (let round = 0; round < 5; round++) {
      const replies = await Promise.all(
        Array.from({ length: 6 }, () => postReadings(served.base, served.key, 'application/x-ndjson', shuffled())),
      );
      for (const r of replies) expect(r.status, r.text).toBe(200);
      accepted += replies.reduce((sum, r) => sum + (r.json as { accepted: number }).accepted, 0);
    }
    expect(accepted).toBe(ROWS);
    expect(await t.countReadings(['DL-3'])).toBe(ROWS);
  });
});
