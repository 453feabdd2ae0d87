import fp from 'fastify-plugin';
import type { FastifyReply, FastifyRequest } from 'fastify';
import { createApiKeysRepository, type Principal, type Scope } from '../../db/api-keys-repository.js';
import { createWebSessionsRepository, type WebSession } from '../../db/web-sessions-repository.js';
import { AuthFailureLimiter } from '../auth-failure-limiter.js';
import { ForbiddenError, RateLimitedError, UnauthorizedError } from '../errors.js';
import { authenticateSession, readCookie, SESSION_COOKIE, sessionPrincipal } from '../web/session-auth.js';

declare module 'fastify' {
  interface FastifyRequest {
    principal: Principal | undefined;
    /** The web-view session the request came with (none for bearer keys). */
    webSession: WebSession | undefined;
  }
  interface FastifyInstance {
    /**
     * An onRequest hook that admits only keys holding `scope` (admin keys hold every scope),
     * presented as a bearer key or through a web-view session (services/api/web/session-auth.ts).
     */
    requireScope(scope: Scope): (request: FastifyRequest, reply: FastifyReply) => Promise<void>;
    /** Verifies a key for the web view's sign-in, counting failures as the bearer check does. */
    verifySignInKey(request: FastifyRequest, key: string): Promise<Principal>;
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

/** Bearer-key (or web-view session) authentication with scopes; keys are verified against their stored hash. */
export default fp<{ authFailuresPerMinute: number; webSessionIdleMs: number }>(
  async (app, opts) => {
    const keys = createApiKeysRepository(app.database.db);
    const sessions = createWebSessionsRepository(app.database.db);
    const failures = new AuthFailureLimiter(opts.authFailuresPerMinute);
    app.decorateRequest('principal', undefined);
    app.decorateRequest('webSession', undefined);

    function refuseWhenLimited(request: FastifyRequest, nowMs: number): void {
      const retryAfterS = failures.retryAfterS(request.ip, nowMs);
      if (retryAfterS > 0)
        throw new RateLimitedError(
          `too many failed authentications from this address; retry after ${retryAfterS} s`,
          retryAfterS,
        );
    }

    function fail(request: FastifyRequest, nowMs: number, message: string): never {
      failures.recordFailure(request.ip, nowMs);
      throw new UnauthorizedError(message);
    }

    async function verifyKey(request: FastifyRequest, key: string, nowMs: number): Promise<Principal> {
      return (await keys.verify(key)) ?? fail(request, nowMs, 'unknown or revoked API key');
    }

    /** The principal of the request's bearer key or web-view session; 401 (counted as a failure) without one. */
    async function authenticate(request: FastifyRequest, nowMs: number): Promise<Principal> {
      refuseWhenLimited(request, nowMs);
      const header = request.headers.authorization;
      const match = header ? BEARER.exec(header) : null;
      if (match) return verifyKey(request, match[1]!, nowMs);
      if (!readCookie(request, SESSION_COOKIE))
        fail(request, nowMs, 'send the API key as "Authorization: Bearer <key>"');
      const session = await authenticateSession(sessions, request, opts.webSessionIdleMs, nowMs);
      if (!session) fail(request, nowMs, 'the web-view session has expired or was ended; sign in again at /app/');
      request.webSession = session;
      return sessionPrincipal(session);
    }

    app.decorate('verifySignInKey', async (request: FastifyRequest, key: string) => {
      const nowMs = Date.now();
      refuseWhenLimited(request, nowMs);
      return verifyKey(request, key.trim(), nowMs);
    });

    app.decorate('requireScope', (scope: Scope) => async (request: FastifyRequest) => {
      const principal = await authenticate(request, Date.now());
      if (!principal.scopes.has(scope) && !principal.scopes.has('admin')) {
        throw new ForbiddenError(`this API key lacks the '${scope}' scope`);
      }
      request.principal = principal;
    });
  },
  { name: 'auth', dependencies: ['db'] },
);
