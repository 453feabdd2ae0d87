import { setTimeout as sleep } from 'node:timers/promises';

/**
 * SQLSTATEs of failures that say "try again" rather than "this is wrong": 40P01 deadlock
 * detected, 40001 serialization failure. Concurrent ingest bodies overlapping in different orders
 * can deadlock on the `readings` primary key (measured before the retries: 1.4 % of requests in
 * one probe); PostgreSQL aborts one of them, which succeeds when run again.
 */
const TRANSIENT_SQLSTATES = new Set(['40P01', '40001']);

/** Attempts of a statement or chunk that fails with a transient conflict before giving up. */
export const TRANSIENT_ATTEMPTS = 4;

/** A conflict with a concurrent request that kept recurring: the caller should retry later (503). */
export class TransientConflictError extends Error {
  constructor(message: string, options?: ErrorOptions) {
    super(message, options);
    this.name = 'TransientConflictError';
  }
}

/** True for a deadlock or serialization failure (on `err` or its causes), or a TransientConflictError. */
export function isTransientConflict(err: unknown): boolean {
  let current: unknown = err;
  for (let depth = 0; current && depth < 5; depth++) {
    if (current instanceof TransientConflictError) return true;
    const code = (current as { code?: unknown }).code;
    if (typeof code === 'string' && TRANSIENT_SQLSTATES.has(code)) return true;
    current = (current as { cause?: unknown }).cause;
  }
  return false;
}

/**
 * Pause before retry `attempt` (1-based), ms: 10, 20, 40 … with jitter, so the two sides of a
 * deadlock do not meet again in step.
 */
export function retryPauseMs(attempt: number): number {
  return 10 * 2 ** (attempt - 1) * (0.5 + Math.random());
}

/**
 * Runs `fn`, again after a short pause when it fails with a transient conflict, at most
 * `attempts` times; then throws TransientConflictError with the last failure as its cause.
 *
 * @example await withTransientRetry(() => insertChunk(chunk))
 */
export async function withTransientRetry<T>(fn: () => Promise<T>, attempts = TRANSIENT_ATTEMPTS): Promise<T> {
  for (let attempt = 1; ; attempt++) {
    try {
      return await fn();
    } catch (err) {
      if (!isTransientConflict(err)) throw err;
      if (attempt >= attempts)
        throw new TransientConflictError(`a conflict with concurrent requests persisted after ${attempts} attempts`, {
          cause: err,
        });
      await sleep(retryPauseMs(attempt));
    }
  }
}
