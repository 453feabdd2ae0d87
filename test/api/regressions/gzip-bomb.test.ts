import { gzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { MAX_BLANK_LINES, MAX_GZIP_RATIO } from '../../../services/api/ingest/body-records.js';
import { useServedTestApp } from '../../helpers/test-app.js';
import { postReadings } from '../../helpers/raw-http.js';

// Regression: a 0.6 MB gzip bomb (512 MiB of newlines) was refused only at the size limit, after
// 38–44 s of CPU spent splitting and skipping half a billion blank lines. A body that expands far
// more than telemetry does is refused early, and blank lines are bounded.

const served = useServedTestApp('fleet-gb');

describe('a gzip bomb', () => {
  it.each(['application/x-ndjson', 'text/csv', 'application/json'])(
    `as %s is refused early (more than ${MAX_BLANK_LINES} blank lines, or expanding more than ${MAX_GZIP_RATIO}-fold)`,
    async (contentType) => {
      const bomb = gzipSync(Buffer.alloc(64 * 1024 * 1024, contentType === 'application/json' ? ' ' : '\n'), {
        level: 9,
      });
      expect(bomb.length).toBeLessThan(100 * 1024);
      const res = await postReadings(served.base, served.key, contentType, bomb, { 'content-encoding': 'gzip' });
      expect(res.status, res.text).toBe(413);
      const { error } = res.json as { error: { code: string; message: string } };
      expect(error.code).toBe(contentType === 'application/json' ? 'compression_ratio' : 'payload_too_large');
      expect(error.message).toMatch(contentType === 'application/json' ? /expands more than/ : /blank lines/);
    },
  );

  it('of a few long lines repeated is refused as expanding too much', async () => {
    const line = `{"vehicleId":"GB-2","ts":${Date.now()},"coolant":70,"pad":"${'p'.repeat(60_000)}"}\n`;
    const res = await postReadings(
      served.base,
      served.key,
      'application/x-ndjson',
      gzipSync(line.repeat(300), { level: 9 }),
      { 'content-encoding': 'gzip' },
    );
    expect(res.status, res.text).toBe(413);
    expect(res.json).toEqual({
      error: { code: 'compression_ratio', message: expect.stringMatching(/expands more than 100-fold/) },
    });
  });

  it('does not catch real telemetry, which compresses some 5 to 20 fold', async () => {
    let body = '';
    for (let i = 0; i < 200_000; i++)
      body += `{"vehicleId":"GB-1","ts":${Date.now() - 3 * 86_400_000 + i * 1000},"coolant":70}\n`;
    const res = await postReadings(served.base, served.key, 'application/x-ndjson', gzipSync(body, { level: 9 }), {
      'content-encoding': 'gzip',
    });
    expect(res.status, res.text).toBe(200);
    expect(res.json).toMatchObject({ accepted: 200_000 });
  });
});

describe('a body of blank lines', () => {
  it(`is refused past ${MAX_BLANK_LINES} blank lines`, async () => {
    const res = await postReadings(served.base, served.key, 'application/x-ndjson', '\n'.repeat(MAX_BLANK_LINES + 1));
    expect(res.status, res.text).toBe(413);
    expect(res.json).toEqual({ error: { code: 'payload_too_large', message: expect.stringMatching(/blank lines/) } });
  });
});
