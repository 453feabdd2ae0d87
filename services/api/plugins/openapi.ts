import swagger from '@fastify/swagger';
import swaggerUi from '@fastify/swagger-ui';
import fp from 'fastify-plugin';
import { ErrorBody } from '../schemas/common.js';

/** `/openapi.json` built from the route schemas, and the interactive docs at `/docs`. */
export default fp(
  async (app) => {
    app.addSchema(ErrorBody);
    await app.register(swagger, {
      openapi: {
        openapi: '3.1.0',
        info: {
          title: 'thermocline',
          version: '0.1.0',
          description:
            'Turns fleet coolant-temperature telemetry into cooling-system maintenance decisions. Authenticate with `Authorization: Bearer <key>`; ' +
            'keys have scopes ingest, read and admin and belong to one fleet (admin keys: every fleet). ' +
            "Lists are paged by cursor: `?limit=` (each list has a maximum) and `?cursor=` set to the previous reply's `nextCursor` (null on the last page). " +
            'Read endpoints that return temperatures take `?unit=C|F` and state it in `unit` and the x-temperature-unit header.',
        },
        components: {
          securitySchemes: {
            bearerAuth: { type: 'http', scheme: 'bearer' },
            sessionCookie: {
              type: 'apiKey',
              in: 'cookie',
              name: 'tc_session',
              description:
                'web-view session from POST /app/session; every /v1 route accepts it instead of a bearer key, state-changing requests with the x-csrf-token header',
            },
          },
        },
        tags: [
          { name: 'readings', description: 'telemetry from gateways' },
          { name: 'vehicles', description: 'vehicle profiles and per-vehicle data' },
          { name: 'service events', description: 'repair history: recording, correcting and listing service events' },
          {
            name: 'depots',
            description:
              "the sites vehicles work from; a depot's altitude or pressure sets the boiling point of its vehicles without a site of their own",
          },
          { name: 'fleet', description: 'fleet-wide views for maintenance planners' },
          { name: 'findings', description: 'analysis findings and their lifecycle' },
          { name: 'analysis', description: 'running the analysis' },
          { name: 'reports', description: 'weekly maintenance reports' },
          { name: 'operations', description: 'health, readiness and metrics' },
          { name: 'web view', description: 'the planner web view at /app/: sign-in, session, fleet choice' },
        ],
      },
      refResolver: {
        buildLocalReference: (json, _base, _fragment, i) => (typeof json.$id === 'string' ? json.$id : `def-${i}`),
      },
    });
    await app.register(swaggerUi, { routePrefix: '/docs' });
    app.get('/openapi.json', { schema: { hide: true } }, async () => app.swagger());
  },
  { name: 'openapi' },
);
