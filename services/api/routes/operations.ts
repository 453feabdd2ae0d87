import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { ping } from '../../db/migrator.js';

/** Liveness, readiness and Prometheus metrics (no authentication: scrape from the private network). */
const operationsRoutes: FastifyPluginAsyncTypebox = async (app) => {
  app.get(
    '/healthz',
    {
      schema: {
        tags: ['operations'],
        summary: 'Liveness: the process answers',
        response: { 200: Type.Object({ status: Type.Literal('ok') }) },
      },
    },
    async () => ({ status: 'ok' as const }),
  );

  app.get(
    '/readyz',
    {
      schema: {
        tags: ['operations'],
        summary: 'Readiness: the database answers',
        response: {
          200: Type.Object({ status: Type.Literal('ready'), database: Type.String() }),
          503: Type.Object({ status: Type.Literal('unavailable'), database: Type.String() }),
        },
      },
    },
    async (_request, reply) => {
      if (await ping(app.database.db)) return { status: 'ready' as const, database: app.database.kind };
      return reply.status(503).send({ status: 'unavailable' as const, database: app.database.kind });
    },
  );

  app.get(
    '/metrics',
    {
      schema: {
        tags: ['operations'],
        summary: 'Prometheus metrics (text exposition format)',
        produces: ['text/plain'],
        response: { 200: Type.String() },
      },
    },
    async (_request, reply) => reply.type('text/plain; version=0.0.4').send(app.metrics.render()),
  );
};

export default operationsRoutes;
