import { setTimeout as delay } from 'node:timers/promises';

/** Attempts per request: network errors, 429 and 5xx are retried with backoff, as gateways do. */
const MAX_ATTEMPTS = 6;
const BACKOFF_BASE_MS = 200;

/** A network error with its cause chain, in one line. */
function describe(err: unknown): string {
  const parts: string[] = [];
  for (let e: unknown = err; e instanceof Error && parts.length < 4; e = e.cause)
    parts.push(`${e.message}${'code' in e ? ` (${String(e.code)})` : ''}`);
  return parts.join(' ← ') || String(err);
}

/** The HTTP calls the evaluation makes, with a key; throws on a refusal. */
export class ApiClient {
  constructor(
    readonly baseUrl: string,
    private readonly key: string,
  ) {}

  /** One request; retries what a gateway would retry; returns the parsed JSON reply. */
  async call<T>(method: string, path: string, body?: string | Buffer, contentType = 'application/json'): Promise<T> {
    for (let attempt = 1; ; attempt++) {
      let status = 0;
      let text = '';
      try {
        const res = await fetch(`${this.baseUrl}${path}`, {
          method,
          headers: {
            authorization: `Bearer ${this.key}`,
            ...(body !== undefined ? { 'content-type': contentType } : {}),
          },
          ...(body !== undefined ? { body } : {}),
        });
        status = res.status;
        text = await res.text();
        if (res.ok) return (text ? JSON.parse(text) : {}) as T;
      } catch (err) {
        if (attempt >= MAX_ATTEMPTS)
          throw new Error(`${method} ${path} failed after ${attempt} attempts: ${describe(err)}`, { cause: err });
      }
      if (status !== 0 && status !== 429 && status < 500)
        throw new Error(`${method} ${path} answered ${status}: ${text.slice(0, 500)}`);
      if (attempt >= MAX_ATTEMPTS)
        throw new Error(`${method} ${path} failed after ${attempt} attempts: ${status} ${text.slice(0, 500)}`);
      await delay(BACKOFF_BASE_MS * 2 ** attempt);
    }
  }
}

/** Ingest reply of POST /v1/readings. */
export interface IngestReply {
  accepted: number;
  duplicates: number;
  rejected: unknown[];
}

/**
 * Sends requests with at most `maxInFlight` outstanding, each sender's in order (a gateway
 * waits for its reply before it sends the next batch).
 */
export class Uplink {
  private readonly chains = new Map<string, Promise<void>>();
  private readonly inFlight = new Set<Promise<void>>();
  private failure: unknown;

  constructor(private readonly maxInFlight: number) {}

  /** Queues `send` behind the sender's earlier requests; waits while too many are outstanding. */
  async send(sender: string, send: () => Promise<void>): Promise<void> {
    if (this.failure !== undefined) throw this.failure;
    while (this.inFlight.size >= this.maxInFlight) await Promise.race(this.inFlight);
    const next = (this.chains.get(sender) ?? Promise.resolve()).then(send).catch((err: unknown) => {
      this.failure ??= err;
    });
    this.chains.set(sender, next);
    this.inFlight.add(next);
    void next.finally(() => {
      this.inFlight.delete(next);
      if (this.chains.get(sender) === next) this.chains.delete(sender);
    });
  }

  /** Waits for every outstanding request; throws the first failure. */
  async drain(): Promise<void> {
    await Promise.all([...this.inFlight]);
    if (this.failure !== undefined) throw this.failure;
  }
}
