import type { IncomingMessage } from 'node:http';

/**
 * Most bytes of an unread request body read and thrown away after an early error reply (no key,
 * wrong content type, a bad body found part-way), so the client finishes sending and reads the
 * reply instead of meeting a reset connection (seen: Node's fetch got EPIPE instead of the 401 in
 * 13 of 18 tries of a 50 MB body). A body still arriving beyond this, or after DRAIN_MAX_MS, has its
 * connection closed.
 */
export const DRAIN_MAX_BYTES = 64 * 1024 * 1024;
export const DRAIN_MAX_MS = 10_000;

/**
 * Reads and discards the rest of `raw` (a request whose reply is an error) up to `maxBytes` and
 * `maxMs`, then closes the connection if the body is still not over. Detaches whatever was
 * reading the body before (a pipe into gunzip, an abandoned async iterator).
 *
 * @example drainRequestBody(request.raw) // in the error handler, before the reply is sent
 */
export function drainRequestBody(raw: IncomingMessage, maxBytes = DRAIN_MAX_BYTES, maxMs = DRAIN_MAX_MS): void {
  if (raw.complete || raw.destroyed) return;
  raw.unpipe();
  // An async iterator left suspended keeps a 'readable' listener, and while one is attached
  // resume() does nothing.
  raw.removeAllListeners('readable');
  let bytes = 0;
  const giveUp = () => raw.socket?.destroy();
  const timer = setTimeout(giveUp, maxMs);
  timer.unref();
  const done = () => clearTimeout(timer);
  raw.on('data', (chunk: Buffer) => {
    bytes += chunk.length;
    if (bytes > maxBytes) {
      done();
      giveUp();
    }
  });
  raw.once('end', done);
  raw.once('close', done);
  raw.on('error', done);
  raw.resume();
}
