import fp from 'fastify-plugin';
import type { FastifyReply, FastifyRequest } from 'fastify';
import { createApiKeysRepository, type Principal, type Scope } from '../../db/api-keys-repository.js';
import { AuthFailureLimiter } from '../auth-failure-limiter.js';
import { ForbiddenError, RateLimitedError, UnauthorizedError } from '../errors.js';

declare module 'fastify' {
  interface FastifyRequest {
    principal: Principal | undefined;
  }
  interface FastifyInstance {
    /** An onRequest hook that admits only keys holding `scope` (admin keys hold every scope). */
    requireScope(scope: Scope): (request: FastifyRequest, reply: FastifyReply) => Promise<void>;
  }
}

const BEARER = /^Bearer\s+(\S+)\s*$/i;

/** The fleet a request may act on; throws 403 when the key belongs to another fleet. */
export function assertFleetAccess(principal: Principal | undefined, fleetId: string): void {
  if (!principal) throw new UnauthorizedError();
  if (principal.fleetId !== null && principal.fleetId !== fleetId) {
    throw new ForbiddenError('this API key belongs to another fleet');
  }
}

/** The authenticated principal, for handlers behind `requireScope`. */
export function principalOf(request: FastifyRequest): Principal {
  if (!request.principal) throw new UnauthorizedError();
  return request.principal;
}

/** Bearer-key authentication with scopes; keys are verified against their stored hash. */
export default fp<{ authFailuresPerMinute: number }>(
  async (app, opts) => {
    const keys = createApiKeysRepository(app.database.db);
    const failures = new AuthFailureLimiter(opts.authFailuresPerMinute);
    app.decorateRequest('principal', undefined);
    app.decorate('requireScope', (scope: Scope) => async (request: FastifyRequest) => {
      const nowMs = Date.now();
      const retryAfterS = failures.retryAfterS(request.ip, nowMs);
      if (retryAfterS > 0) throw new RateLimitedError(`too many failed authentications from this address; retry after ${retryAfterS} s`, retryAfterS);
      const header = request.headers.authorization;
      const match = header ? BEARER.exec(header) : null;
      if (!match) {
        failures.recordFailure(request.ip, nowMs);
        throw new UnauthorizedError('send the API key as "Authorization: Bearer <key>"');
      }
      const principal = await keys.verify(match[1]!);
      if (!principal) {
        failures.recordFailure(request.ip, nowMs);
        throw new UnauthorizedError('unknown or revoked API key');
      }
      if (!principal.scopes.has(scope) && !principal.scopes.has('admin')) {
        throw new ForbiddenError(`this API key lacks the '${scope}' scope`);
      }
      request.principal = principal;
    });
  },
  { name: 'auth', dependencies: ['db'] },
);
