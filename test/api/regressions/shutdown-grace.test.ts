import http from 'node:http';
import { describe, expect, it } from 'vitest';
import { ServeProcess } from '../../helpers/serve-process.js';

// Regression: once requests hung (a stuck pool), SIGTERM no longer stopped the process, because
// a graceful close waits for requests in flight. A body that never ends stands in for any request
// that does not finish: after SHUTDOWN_GRACE_MS the process exits anyway, with code 1.

describe('SIGTERM with a request that never finishes', () => {
  it('exits with 1 after the grace period', async () => {
    const serve = await ServeProcess.start({ SHUTDOWN_GRACE_MS: '1000' });
    const req = http.request(`${serve.url}/v1/readings?fleet=${serve.fleetId}`, {
      method: 'POST',
      headers: {
        authorization: `Bearer ${serve.adminKey}`,
        'content-type': 'application/x-ndjson',
        'content-length': '100000',
      },
    });
    req.on('error', () => undefined);
    req.write(`{"vehicleId":"SG-1","ts":${Date.now() - 60_000},"coolant":70}\n`);
    // Wait until the service holds the request (it logs nothing for it at info): a health check
    // answered after the write means the body's first bytes have been read by then.
    await fetch(`${serve.url}/healthz`);
    const started = Date.now();
    const code = await serve.stop();
    expect(code).toBe(1);
    expect(Date.now() - started).toBeLessThan(15_000);
    expect(serve.logs.some((l) => /did not finish within the grace period/.test(l))).toBe(true);
    req.destroy();
  });
});
