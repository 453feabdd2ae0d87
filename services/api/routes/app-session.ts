import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import type { FastifyRequest } from 'fastify';
import { Type } from 'typebox';
import type { WebSession } from '../../db/web-sessions-repository.js';
import { createWebSessionsRepository } from '../../db/web-sessions-repository.js';
import { createReportRepository } from '../../db/weekly-report-repository.js';
import { ForbiddenError, NotFoundError, UnauthorizedError } from '../errors.js';
import { errorResponses } from '../schemas/common.js';
import { isSecureRequest, sessionCookie } from '../web/session-auth.js';

export interface WebSessionOptions {
  idleMs: number;
  maxMs: number;
}

const SESSION_SECURITY = [{ sessionCookie: [] }];

const SessionView = Type.Object({
  keyId: Type.String({ description: 'id of the API key that signed in' }),
  fleetId: Type.Union([Type.String(), Type.Null()], {
    description: 'the fleet the session acts on; null: an admin that has not chosen one yet',
  }),
  fleetName: Type.Union([Type.String(), Type.Null()]),
  scopes: Type.Array(Type.String()),
  admin: Type.Boolean({ description: 'an admin key: may choose the fleet (PUT /app/session/fleet)' }),
  canEditProfiles: Type.Boolean({
    description: 'the key holds the ingest or admin scope, which vehicle profile changes need',
  }),
  csrfToken: Type.String({
    description: 'send it in the x-csrf-token header of every state-changing request of this session',
  }),
  expiresAt: Type.String({
    format: 'date-time',
    description: 'the session ends then unless used (idle expiry, up to the absolute limit)',
  }),
});

/**
 * Sign-in to the planner web view: an API key (read or admin scope) becomes a server-side
 * session held in an HttpOnly, SameSite=Strict cookie (Secure over TLS), with a CSRF token for
 * state-changing requests. `/v1` accepts the cookie as it accepts a bearer key
 * (plugins/auth.ts), so the page uses the API and its fleet isolation unchanged.
 */
const appSessionRoutes: FastifyPluginAsyncTypebox<WebSessionOptions> = async (app, opts) => {
  const sessions = createWebSessionsRepository(app.database.db);
  const reports = createReportRepository(app.database.db);

  async function view(session: WebSession) {
    const fleet = session.fleetId ? await reports.fleet(session.fleetId) : undefined;
    const scopes = new Set(session.scopes);
    return {
      keyId: session.keyId,
      fleetId: session.fleetId,
      fleetName: fleet?.name ?? null,
      scopes: session.scopes,
      admin: session.keyFleetId === null,
      canEditProfiles: scopes.has('ingest') || scopes.has('admin'),
      csrfToken: session.csrfToken,
      expiresAt: session.expiresAt.toISOString(),
    };
  }

  function sessionOf(request: FastifyRequest): WebSession {
    if (!request.webSession)
      throw new UnauthorizedError('this endpoint is for web-view sessions: sign in with POST /app/session');
    return request.webSession;
  }

  app.post(
    '/app/session',
    {
      schema: {
        tags: ['web view'],
        summary: 'Sign in to the web view with an API key (read or admin scope): opens a session cookie',
        description:
          'An ingest-only key cannot sign in (403). The key is verified and then forgotten: the browser keeps only the HttpOnly, ' +
          'SameSite=Strict session cookie (Secure over TLS). Cross-origin sign-ins are refused. Failed attempts count towards the ' +
          'per-address limit of failed authentications.',
        body: Type.Object(
          { key: Type.String({ minLength: 1, maxLength: 300, description: 'the API key' }) },
          { additionalProperties: false },
        ),
        response: { 201: SessionView, ...errorResponses(400, 401, 403) },
      },
    },
    async (request, reply) => {
      const origin = request.headers.origin;
      if (origin !== undefined && origin !== `${request.protocol}://${request.host}`)
        throw new ForbiddenError('sign-in from another origin is refused');
      const principal = await app.verifySignInKey(request, request.body.key);
      if (!principal.scopes.has('read') && !principal.scopes.has('admin'))
        throw new ForbiddenError('an ingest-only key cannot sign in to the web view: use a key with the read scope');
      const nowMs = Date.now();
      // Sign-ins are rare next to requests: each clears the expired and revoked sessions, so the table stays small.
      await sessions.purge(nowMs);
      const { token } = await sessions.create({
        keyId: principal.keyId,
        fleetId: principal.fleetId,
        idleMs: opts.idleMs,
        maxMs: opts.maxMs,
        nowMs,
      });
      const session = (await sessions.find(token, nowMs))!;
      reply.header('set-cookie', sessionCookie(token, isSecureRequest(request), opts.maxMs / 1000));
      reply.header('cache-control', 'no-store');
      return reply.status(201).send(await view(session));
    },
  );

  app.get(
    '/app/session',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['web view'],
        summary: 'The signed-in web-view session: fleet, scopes and its CSRF token',
        security: SESSION_SECURITY,
        response: { 200: SessionView, ...errorResponses(401, 403) },
      },
    },
    async (request, reply) => {
      reply.header('cache-control', 'no-store');
      return view(sessionOf(request));
    },
  );

  app.delete(
    '/app/session',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['web view'],
        summary: 'Sign out: ends the session and clears its cookie (needs the CSRF token)',
        security: SESSION_SECURITY,
        response: { 200: Type.Object({ signedOut: Type.Literal(true) }), ...errorResponses(401, 403) },
      },
    },
    async (request, reply) => {
      await sessions.remove(sessionOf(request).sessionHash);
      reply.header('set-cookie', sessionCookie(null, isSecureRequest(request), 0));
      return { signedOut: true as const };
    },
  );

  app.put(
    '/app/session/fleet',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['web view'],
        summary: "An admin's session chooses the fleet it acts on (needs the CSRF token)",
        description:
          'From then on the session sees exactly what a key of that fleet sees. Fleet keys cannot change fleet (403).',
        security: SESSION_SECURITY,
        body: Type.Object({ fleetId: Type.String({ minLength: 1, maxLength: 64 }) }, { additionalProperties: false }),
        response: { 200: SessionView, ...errorResponses(400, 401, 403, 404) },
      },
    },
    async (request) => {
      const session = sessionOf(request);
      if (session.keyFleetId !== null)
        throw new ForbiddenError('this API key belongs to one fleet; only an admin session chooses the fleet');
      const fleet = await reports.fleet(request.body.fleetId);
      if (!fleet) throw new NotFoundError(`unknown fleet '${request.body.fleetId}'`);
      await sessions.setFleet(session.sessionHash, fleet.fleetId);
      return view({ ...session, fleetId: fleet.fleetId });
    },
  );

  app.get(
    '/app/fleets',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['web view'],
        summary: 'The fleets the session may act on (every fleet for an admin, else its own)',
        security: SESSION_SECURITY,
        response: {
          200: Type.Object({
            fleets: Type.Array(Type.Object({ fleetId: Type.String(), name: Type.String(), timeZone: Type.String() })),
          }),
          ...errorResponses(401, 403),
        },
      },
    },
    async (request) => {
      const session = sessionOf(request);
      const all = await reports.fleets();
      return { fleets: session.keyFleetId === null ? all : all.filter((f) => f.fleetId === session.keyFleetId) };
    },
  );
};

export default appSessionRoutes;
