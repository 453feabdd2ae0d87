import fp from 'fastify-plugin';
import type { FastifyReply, FastifyRequest } from 'fastify';
import { createApiKeysRepository, type Principal, type Scope } from '../../db/api-keys-repository.js';
import { ForbiddenError, UnauthorizedError } from '../errors.js';

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
export default fp(
  async (app) => {
    const keys = createApiKeysRepository(app.database.db);
    app.decorateRequest('principal', undefined);
    app.decorate('requireScope', (scope: Scope) => async (request: FastifyRequest) => {
      const header = request.headers.authorization;
      const match = header ? BEARER.exec(header) : null;
      if (!match) throw new UnauthorizedError('send the API key as "Authorization: Bearer <key>"');
      const principal = await keys.verify(match[1]!);
      if (!principal) throw new UnauthorizedError('unknown or revoked API key');
      if (!principal.scopes.has(scope) && !principal.scopes.has('admin')) {
        throw new ForbiddenError(`this API key lacks the '${scope}' scope`);
      }
      request.principal = principal;
    });
  },
  { name: 'auth', dependencies: ['db'] },
);
