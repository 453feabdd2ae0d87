import http from 'node:http';
import type { AddressInfo } from 'node:net';
import type { FastifyInstance } from 'fastify';

/** Makes the app listen on a free loopback port; returns its base URL. */
export async function listenOnLoopback(app: FastifyInstance): Promise<string> {
  await app.listen({ port: 0, host: '127.0.0.1' });
  return `http://127.0.0.1:${(app.server.address() as AddressInfo).port}`;
}

export interface RawReply {
  status: number;
  headers: http.IncomingHttpHeaders;
  text: string;
  /** The reply parsed as JSON (undefined when it is not JSON). */
  json: unknown;
}

/**
 * Sends one request with node:http and reads the whole reply. A write error after the reply
 * began (the server closed early) is ignored; an error before any reply rejects.
 */
export function request(
  base: string,
  method: string,
  path: string,
  headers: Record<string, string>,
  body?: Buffer | string,
  agent?: http.Agent,
): Promise<RawReply> {
  return new Promise((resolve, reject) => {
    let answered = false;
    const req = http.request(`${base}${path}`, { method, headers, ...(agent ? { agent } : {}) }, (res) => {
      answered = true;
      const parts: Buffer[] = [];
      res.on('data', (c: Buffer) => parts.push(c));
      res.on('error', reject);
      res.on('end', () => {
        const text = Buffer.concat(parts).toString('utf8');
        let json: unknown;
        try {
          json = JSON.parse(text);
        } catch {
          json = undefined;
        }
        resolve({ status: res.statusCode ?? 0, headers: res.headers, text, json });
      });
    });
    req.on('error', (err) => {
      if (!answered) reject(err);
    });
    req.end(body);
  });
}

/** POST /v1/readings with a key and a content type. */
export function postReadings(
  base: string,
  key: string,
  contentType: string,
  body: Buffer | string,
  extra: Record<string, string> = {},
  agent?: http.Agent,
): Promise<RawReply> {
  return request(
    base,
    'POST',
    '/v1/readings',
    { authorization: `Bearer ${key}`, 'content-type': contentType, ...extra },
    body,
    agent,
  );
}
