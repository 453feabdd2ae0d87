import fp from 'fastify-plugin';
import type { FastifyError } from 'fastify';
import { drainRequestBody } from '../body-drain.js';
import { isTransientConflict } from '../../db/transient-conflict.js';
import { AppError, isDatabaseUnavailable, RateLimitedError } from '../errors.js';

/** Retry-After on a 503 for an unreachable database, seconds: a restart takes a few. */
const DATABASE_RETRY_AFTER_S = 5;
/** Retry-After on a 503 for a conflict with concurrent requests, seconds: it is over at once. */
const CONFLICT_RETRY_AFTER_S = 1;

interface ErrorBody {
  error: { code: string; message: string };
}

/** Fastify's own error codes that are the client's fault, mapped to our codes. */
const FASTIFY_CLIENT_CODES: Record<string, string> = {
  FST_ERR_CTP_INVALID_MEDIA_TYPE: 'unsupported_media_type',
  FST_ERR_CTP_BODY_TOO_LARGE: 'payload_too_large',
  FST_ERR_CTP_EMPTY_JSON_BODY: 'bad_request',
  FST_ERR_CTP_INVALID_JSON_BODY: 'bad_request',
  FST_ERR_VALIDATION: 'validation_failed',
  FST_ERR_RATE_LIMIT: 'rate_limited',
};

/**
 * One error handler for the whole app: domain errors keep their status and message, client
 * errors from fastify keep theirs, database outages answer 503, and everything else is logged
 * with the request id and answered with a generic 500.
 */
export default fp(
  async (app) => {
    app.setErrorHandler<FastifyError>(async (err, request, reply) => {
      let status = 500;
      let body: ErrorBody;
      if (err instanceof AppError) {
        status = err.statusCode;
        if (err instanceof RateLimitedError) reply.header('retry-after', String(err.retryAfterS));
        body = { error: { code: err.code, message: err.message } };
      } else if (isTransientConflict(err)) {
        // A deadlock or serialisation failure that recurred after the repository's bounded retries.
        status = 503;
        reply.header('retry-after', String(CONFLICT_RETRY_AFTER_S));
        body = {
          error: {
            code: 'retry_later',
            message:
              'the request collided with concurrent requests on the same vehicles; nothing was stored, retry shortly',
          },
        };
      } else if (isDatabaseUnavailable(err)) {
        status = 503;
        reply.header('retry-after', String(DATABASE_RETRY_AFTER_S));
        body = {
          error: {
            code: 'database_unavailable',
            message: 'the database is unavailable; nothing was stored, retry later',
          },
        };
      } else if (err.validation) {
        status = 400;
        body = { error: { code: 'validation_failed', message: err.message } };
      } else if (typeof err.statusCode === 'number' && err.statusCode >= 400 && err.statusCode < 500) {
        status = err.statusCode;
        const code = (err.code && FASTIFY_CLIENT_CODES[err.code]) ?? 'bad_request';
        const message =
          err.code === 'FST_ERR_CTP_INVALID_MEDIA_TYPE'
            ? `Content-Type '${request.headers['content-type'] ?? '(none)'}' is not accepted here`
            : err.message;
        body = { error: { code: status === 429 ? 'rate_limited' : code, message } };
      } else {
        body = { error: { code: 'internal', message: `internal error (request ${request.id})` } };
      }
      // The body is still arriving (no key, a bad body found part-way): read and discard the rest,
      // within bounds, so the client gets to read this reply (see body-drain.ts).
      if (request.raw.complete === false) drainRequestBody(request.raw);
      if (status >= 500) request.log.error({ err }, 'request failed');
      else request.log.info({ code: body.error.code, status }, body.error.message);
      return reply.status(status).send(body);
    });

    app.setNotFoundHandler(async (request, reply) => {
      return reply
        .status(404)
        .send({ error: { code: 'not_found', message: `no route ${request.method} ${request.url.split('?')[0]}` } });
    });
  },
  { name: 'errors' },
);
