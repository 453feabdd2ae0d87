import { gzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { useServedTestApp } from '../../helpers/test-app.js';
import { postReadings, request } from '../../helpers/raw-http.js';

// Regression: a 24-byte gzip CSV body, truncated and with a wrong header, was answered 400 and
// then killed the process: the gunzip emitted Z_BUF_ERROR after the CSV parser had stopped
// reading it, with nobody listening. (Vitest fails the file on such an unhandled error.)

const served = useServedTestApp('fleet-gz');
const t = served.t;

const truncated = (text: string, bytes: number) => gzipSync(Buffer.from(text)).subarray(0, bytes);

describe('a truncated gzip body', () => {
  it.each([
    ['text/csv', 'a,b\n1,2\n'],
    ['text/csv', 'vehicleId,ts,coolant\nG-1,2026-11-30T06:10:00Z,20\n'],
    ['application/x-ndjson', '{"vehicleId":"G-1","ts":"2026-11-30T06:10:00Z","coolant":20}\nnot json\n'],
    ['application/json', '{"readings":[{"vehicleId":"G-1","ts":"2026-11-30T06:10:00Z","coolant":20}]}'],
  ])('as %s is answered 400 and the service keeps serving', async (contentType, text) => {
    for (const bytes of [10, 24, 30]) {
      const res = await postReadings(served.base, served.key, contentType, truncated(text, bytes), {
        'content-encoding': 'gzip',
      });
      expect(res.status, res.text).toBe(400);
      expect(res.json).toEqual({ error: { code: expect.any(String), message: expect.any(String) } });
    }
    // The gunzip's late error comes on the next turns of the event loop; the service must still answer.
    await new Promise((resolve) => setTimeout(resolve, 50));
    expect((await request(served.base, 'GET', '/healthz', {})).status).toBe(200);
    expect(await t.countReadings(['G-1'])).toBe(0);
  });
});
