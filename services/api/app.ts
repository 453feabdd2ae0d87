import rateLimit from '@fastify/rate-limit';
import type { TypeBoxTypeProvider } from '@fastify/type-provider-typebox';
import Fastify, { type FastifyBaseLogger, type FastifyInstance } from 'fastify';
import type { Config } from '../config.js';
import type { DatabaseHandle } from '../db/database.js';
import { splitKey } from '../db/api-keys-repository.js';
import { sessionHash } from '../db/web-sessions-repository.js';
import { AppError, BadRequestError } from './errors.js';
import authPlugin from './plugins/auth.js';
import dbPlugin from './plugins/db.js';
import errorsPlugin from './plugins/errors.js';
import metricsPlugin from './plugins/metrics.js';
import openapiPlugin from './plugins/openapi.js';
import analysisRunsRoutes from './routes/analysis-runs.js';
import findingsRoutes from './routes/findings.js';
import framesRoutes from './routes/frames.js';
import fleetRoutes from './routes/fleet.js';
import operationsRoutes from './routes/operations.js';
import readingsRoutes from './routes/readings.js';
import serviceEventsRoutes from './routes/service-events.js';
import depotsRoutes from './routes/depots.js';
import vehicleReadingsRoutes from './routes/vehicle-readings.js';
import vehicleRunsRoutes from './routes/vehicle-runs.js';
import vehiclesRoutes from './routes/vehicles.js';
import { readCookie, SESSION_COOKIE } from './web/session-auth.js';

export interface AppOptions {
  config: Config;
  database: DatabaseHandle;
  /** Close the database with the app (true for the service; tests own theirs). */
  closeDatabase?: boolean;
  /** A pino logger for the service; tests run without one. */
  logger?: FastifyBaseLogger;
}

/** Operations endpoints that probes and scrapers call often: never rate-limited, whatever the query. */
const UNLIMITED_PATHS = new Set(['/healthz', '/readyz', '/metrics']);

/** Rate-limit bucket: the API key's id (cheap, no database), else the web-view session, else the client address. */
function rateLimitKey(request: { headers: Record<string, string | string[] | undefined>; ip: string }): string {
  const header = request.headers.authorization;
  const match = typeof header === 'string' ? /^Bearer\s+(\S+)/i.exec(header) : null;
  if (match) return `key:${splitKey(match[1]!).keyId}`;
  // Planners behind one office address each get their own bucket.
  const session = readCookie(request, SESSION_COOKIE);
  return session ? `session:${sessionHash(session).slice(0, 24)}` : `ip:${request.ip}`;
}

/** Builds the whole HTTP API on an open database. The caller listens and closes. */
export async function buildApp(options: AppOptions): Promise<FastifyInstance> {
  const { config } = options;
  const app = Fastify({
    ...(options.logger ? { loggerInstance: options.logger } : { logger: false }),
    requestIdHeader: 'x-request-id',
    genReqId: () => crypto.randomUUID(),
    // Requests may stream a large body for minutes; drop only idle sockets.
    requestTimeout: 0,
    // Behind a reverse proxy its X-Forwarded-* headers give the client address and https (the web view's Secure cookie).
    trustProxy: config.trustProxy,
    ajv: { customOptions: { removeAdditional: false, coerceTypes: 'array', useDefaults: true, allErrors: false } },
  }).withTypeProvider<TypeBoxTypeProvider>();

  // Once shutdown begins, answers close their connection: a keep-alive client would otherwise
  // hold app.close() open until the idle timeout (measured: 5 s after the last reply).
  let closing = false;
  app.addHook('preClose', async () => {
    closing = true;
  });
  app.addHook('onSend', async (request, reply) => {
    reply.header('x-request-id', request.id);
    if (closing) reply.header('connection', 'close');
  });

  // Postgres text cannot hold U+0000: a NUL in the path or query (%00) is bad input, answered 400
  // before any route reaches the database (it answered 500 from a failed query: a depot, a finding id).
  app.addHook('preValidation', async (request) => {
    if (/%00/i.test(request.url))
      throw new BadRequestError('the URL may not contain a NUL character (%00)', 'validation_failed');
  });

  await app.register(errorsPlugin);
  await app.register(metricsPlugin);
  await app.register(dbPlugin, { database: options.database, closeOnShutdown: options.closeDatabase ?? false });
  await app.register(authPlugin, {
    authFailuresPerMinute: config.authFailuresPerMinute,
    webSessionIdleMs: config.webSessionIdleMinutes * 60_000,
  });
  await app.register(openapiPlugin);
  await app.register(rateLimit, {
    global: true,
    max: config.rateLimitPerMinute,
    timeWindow: 60_000,
    keyGenerator: rateLimitKey,
    allowList: (request) => UNLIMITED_PATHS.has(request.url.split('?', 1)[0]!),
    errorResponseBuilder: (_request, context) =>
      new AppError(
        429,
        'rate_limited',
        `rate limit of ${context.max} requests per minute exceeded; retry after ${context.after}`,
      ),
  });

  await app.register(operationsRoutes);
  await app.register(readingsRoutes, {
    maxBodyBytes: config.maxBodyBytes,
    maxReadingsPerRequest: config.maxReadingsPerRequest,
    ingestMaxAgeDays: config.ingestMaxAgeDays,
  });
  await app.register(framesRoutes, {
    maxBodyBytes: config.maxBodyBytes,
    maxReadingsPerRequest: config.maxReadingsPerRequest,
    ingestMaxAgeDays: config.ingestMaxAgeDays,
  });
  await app.register(vehiclesRoutes);
  await app.register(fleetRoutes);
  await app.register(findingsRoutes);
  await app.register(vehicleRunsRoutes);
  await app.register(vehicleReadingsRoutes);
  await app.register(serviceEventsRoutes);
  await app.register(depotsRoutes);
  await app.register(analysisRunsRoutes, { leaseMs: config.workerLeaseMs, batchSize: config.workerBatchSize });
  await app.register(import('./routes/reports.js'));
  // The planner web view (/app/) and the routes its pages need beyond the rest of /v1.
  const webSession = { idleMs: config.webSessionIdleMinutes * 60_000, maxMs: config.webSessionMaxHours * 3_600_000 };
  await app.register(import('./routes/fleet-board.js'));
  await app.register(import('./routes/vehicle-summary.js'));
  await app.register(import('./routes/app-session.js'), webSession);
  await app.register(import('./routes/app-pages.js'), webSession);
  return app;
}
