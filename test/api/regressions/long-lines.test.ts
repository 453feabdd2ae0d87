import { gzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { lineBatches, MAX_LINE_CHARS } from '../../../services/api/ingest/body-records.js';
import { MAX_VALUE_CHARS } from '../../../services/api/ingest/json-batch-scanner.js';
import { useServedTestApp } from '../../helpers/test-app.js';
import { postReadings } from '../../helpers/raw-http.js';

// Regression: a single NDJSON line of 5 / 10 / 20 / 40 MB took 1.2 / 3.4 / 11.6 / 46.6 s because
// the unfinished line was split again with every chunk (quadratic), and it stalled the service.
// Lines (and JSON values) now have a length limit, and splitting looks only at new text.

const served = useServedTestApp('fleet-ll');
const t = served.t;

const reading = (i: number) => `{"vehicleId":"LL-1","ts":${Date.now() - 3_600_000 + i * 1000},"coolant":70}`;

async function collect(chunks: string[]): Promise<string[]> {
  async function* source() {
    yield* chunks;
  }
  const out: string[] = [];
  for await (const batch of lineBatches(source(), 100)) out.push(...batch);
  return out;
}

describe('line splitting', () => {
  it('gives the same lines however the text is cut into chunks', async () => {
    const text = 'a\nbb\n\nccc\ndddd';
    const whole = await collect([text]);
    expect(whole).toEqual(['a', 'bb', '', 'ccc', 'dddd']);
    for (let cut = 1; cut < text.length; cut++)
      expect(await collect([text.slice(0, cut), text.slice(cut)])).toEqual(whole);
    expect(await collect([...text])).toEqual(whole);
  });

  it('refuses a line longer than the limit, naming its line number, also when it spans many chunks', async () => {
    await expect(collect(['ok\n', 'x'.repeat(60), 'x'.repeat(60)])).rejects.toMatchObject({
      statusCode: 413,
      code: 'line_too_long',
      message: expect.stringMatching(/^line 2 /),
    });
    await expect(collect(['ok\nok\n' + 'y'.repeat(101) + '\n'])).rejects.toMatchObject({
      code: 'line_too_long',
      message: expect.stringMatching(/^line 3 /),
    });
  });
});

describe('a body with an endless line', () => {
  it.each([
    ['application/x-ndjson', 'identity'],
    ['text/csv', 'identity'],
    ['application/x-ndjson', 'gzip'],
  ])('as %s (%s) is answered 413 naming the line, and nothing is stored', async (contentType, encoding) => {
    const head =
      contentType === 'text/csv' ? 'vehicleId,ts,coolant\nLL-1,2026-11-30T06:10:00Z,20\n' : `${reading(0)}\n`;
    const text = `${head}${'z'.repeat(10 * 1024 * 1024)}\n${reading(1)}\n`;
    const body = encoding === 'gzip' ? gzipSync(text) : Buffer.from(text);
    const res = await postReadings(
      served.base,
      served.key,
      contentType,
      body,
      encoding === 'gzip' ? { 'content-encoding': 'gzip' } : {},
    );
    expect(res.status, res.text).toBe(413);
    expect(res.json).toEqual({
      error: {
        code: 'line_too_long',
        message: expect.stringMatching(
          new RegExp(`^line ${contentType === 'text/csv' ? 3 : 2} is longer than ${MAX_LINE_CHARS}`),
        ),
      },
    });
    expect(await t.countReadings(['LL-1'])).toBe(0);
  });

  it('as one huge JSON value is answered 413 naming the reading', async () => {
    const text = `{"readings":[${reading(0)},{"vehicleId":"LL-1","label":"${'q'.repeat(MAX_VALUE_CHARS + 10)}"}]}`;
    const res = await postReadings(served.base, served.key, 'application/json', text);
    expect(res.status, res.text).toBe(413);
    expect(res.json).toEqual({
      error: { code: 'value_too_long', message: expect.stringMatching(/^reading 1 is longer than/) },
    });
    expect(await t.countReadings(['LL-1'])).toBe(0);
  });
});
