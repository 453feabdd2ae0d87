import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import type { FastifyReply, FastifyRequest } from 'fastify';
import { Type } from 'typebox';
import { createVehiclesRepository } from '../../db/vehicles-repository.js';
import { createWebSessionsRepository } from '../../db/web-sessions-repository.js';
import { NotFoundError } from '../errors.js';
import { VehicleIdParams } from '../schemas/common.js';
import { authenticateSession } from '../web/session-auth.js';
import { loadStaticAssets, SECURITY_HEADERS, type StaticAsset } from '../web/static-assets.js';

/** The page's shell: the same HTML for every page; the modules draw the page from the path. */
const SHELL = 'index.html';
const ASSET_NAME = /^(vendor\/)?[a-z0-9-]+(\.min)?\.(js|css|svg)$/;

/** Whether the client asks for HTML before JSON (a browser), by the order and weight of its Accept header. */
export function prefersHtml(accept: string | undefined): boolean {
  if (!accept) return false;
  let html = -1;
  let json = -1;
  for (const [i, part] of accept.split(',').entries()) {
    const [type, ...params] = part.trim().toLowerCase().split(';');
    const q = Number(
      params
        .find((p) => p.trim().startsWith('q='))
        ?.trim()
        .slice(2) ?? 1,
    );
    const score = q * 1000 - i;
    if (type === 'text/html' || type === 'application/xhtml+xml') html = Math.max(html, score);
    if (type === 'application/json') json = Math.max(json, score);
  }
  return html > 0 && html > json;
}

/**
 * The planner web view's pages and files, served by the service itself from the package: no
 * CDN, no external request. `/` sends browsers to `/app/`.
 */
const appPagesRoutes: FastifyPluginAsyncTypebox<{ idleMs: number }> = async (app, opts) => {
  const assets = loadStaticAssets();
  const sessions = createWebSessionsRepository(app.database.db);
  const vehicles = createVehiclesRepository(app.database.db);

  function send(request: FastifyRequest, reply: FastifyReply, file: StaticAsset, status = 200, cache = 'no-cache') {
    reply
      .headers(SECURITY_HEADERS)
      .header('cache-control', cache)
      .header('etag', file.etag)
      .header('vary', 'accept-encoding')
      .type(file.type);
    if (status === 200 && request.headers['if-none-match'] === file.etag) return reply.status(304).send();
    if (/\bgzip\b/.test(String(request.headers['accept-encoding'] ?? '')))
      return reply.status(status).header('content-encoding', 'gzip').send(file.gzip);
    return reply.status(status).send(file.body);
  }
  const shell = (request: FastifyRequest, reply: FastifyReply, status = 200) =>
    send(request, reply, assets.get(SHELL)!, status);
  const hidden = { schema: { hide: true } };

  app.get('/', hidden, async (request, reply) => {
    if (!prefersHtml(request.headers.accept))
      throw new NotFoundError('nothing here: the API is under /v1 (see /docs), the web view under /app/');
    return reply.redirect('/app/', 302);
  });
  app.get('/app', hidden, async (_request, reply) => reply.redirect('/app/', 302));
  for (const path of ['/app/', '/app/reports', '/app/sign-in'])
    app.get(path, hidden, async (request, reply) => shell(request, reply));

  // A vehicle of another fleet is not found, exactly as an unknown one: the page does not say it exists.
  // A malformed id is a page that does not exist either (the HTML 404, not the API's 400).
  const VEHICLE_ID = new RegExp((VehicleIdParams.properties.vehicleId as unknown as { pattern: string }).pattern);
  app.get(
    '/app/vehicles/:vehicleId',
    { schema: { hide: true, params: Type.Object({ vehicleId: Type.String() }) } },
    async (request, reply) => {
      if (!VEHICLE_ID.test(request.params.vehicleId)) return shell(request, reply, 404);
      const session = await authenticateSession(sessions, request, opts.idleMs, Date.now());
      if (session) {
        const vehicle = await vehicles.get(request.params.vehicleId);
        if (!vehicle || (session.fleetId !== null && vehicle.fleetId !== session.fleetId))
          return shell(request, reply, 404);
      }
      return shell(request, reply);
    },
  );

  app.get(
    '/app/assets/*',
    { schema: { hide: true, params: Type.Object({ '*': Type.String() }) } },
    async (request, reply) => {
      const name = request.params['*'];
      const file = ASSET_NAME.test(name) ? assets.get(name) : undefined;
      if (!file) throw new NotFoundError(`no file '${name}' in the web view`);
      return send(request, reply, file);
    },
  );
};

export default appPagesRoutes;
