/**
 * Typed domain errors. The error handler (plugins/errors.ts) maps each to its HTTP status and
 * the uniform body `{ error: { code, message } }`.
 */
export class AppError extends Error {
  constructor(
    readonly statusCode: number,
    readonly code: string,
    message: string,
    options?: ErrorOptions,
  ) {
    super(message, options);
    this.name = new.target.name;
  }
}

export class BadRequestError extends AppError {
  constructor(message: string, code = 'bad_request') {
    super(400, code, message);
  }
}

export class UnauthorizedError extends AppError {
  constructor(message = 'missing or invalid API key') {
    super(401, 'unauthorized', message);
  }
}

export class ForbiddenError extends AppError {
  constructor(message: string) {
    super(403, 'forbidden', message);
  }
}

export class NotFoundError extends AppError {
  constructor(message: string) {
    super(404, 'not_found', message);
  }
}

export class ConflictError extends AppError {
  constructor(message: string) {
    super(409, 'conflict', message);
  }
}

export class PayloadTooLargeError extends AppError {
  constructor(message: string, code = 'payload_too_large') {
    super(413, code, message);
  }
}

/**
 * The client went away before its body was complete: nothing is stored and nobody reads the
 * answer. A client's fault, logged as such, not a database outage (the socket's ECONNRESET).
 */
export class ClientClosedRequestError extends AppError {
  constructor() {
    super(
      400,
      'client_closed_request',
      'the client closed the connection before the body was complete; nothing was stored',
    );
  }
}

export class UnsupportedMediaTypeError extends AppError {
  constructor(message: string) {
    super(415, 'unsupported_media_type', message);
  }
}

/** 429: too many requests; `retryAfterS` goes out as the Retry-After header. */
export class RateLimitedError extends AppError {
  constructor(
    message: string,
    readonly retryAfterS: number,
  ) {
    super(429, 'rate_limited', message);
  }
}

// SQLSTATE classes and node socket codes meaning "the database cannot be reached right now".
const UNAVAILABLE_SQLSTATE = /^(08|53|57P0[1-3])/;
const UNAVAILABLE_NODE_CODES = new Set([
  'ECONNREFUSED',
  'ECONNRESET',
  'ETIMEDOUT',
  'EPIPE',
  'ENOTFOUND',
  'EHOSTUNREACH',
]);

// Driver messages without a code: pg's broken or closed connections, PGlite closed, and Kysely
// after its database was closed (a request still running during shutdown).
const UNAVAILABLE_MESSAGES =
  /Connection terminated|timeout exceeded when trying to connect|Client has encountered a connection error|Client was closed and is not queryable|Cannot use a pool after calling end|PGlite is closed|driver has already been destroyed/i;

/** True when the error says the database is down or unreachable (not a bad query). */
export function isDatabaseUnavailable(err: unknown): boolean {
  let current: unknown = err;
  for (let depth = 0; current && depth < 5; depth++) {
    const e = current as { code?: unknown; message?: unknown; cause?: unknown };
    if (typeof e.code === 'string' && (UNAVAILABLE_SQLSTATE.test(e.code) || UNAVAILABLE_NODE_CODES.has(e.code)))
      return true;
    if (typeof e.message === 'string' && UNAVAILABLE_MESSAGES.test(e.message)) return true;
    current = e.cause;
  }
  return false;
}
