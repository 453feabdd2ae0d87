import { EventEmitter } from 'node:events';
import fp from 'fastify-plugin';
import { ServiceMetrics } from '../metrics-registry.js';

declare module 'fastify' {
  interface FastifyInstance {
    metrics: ServiceMetrics;
    /** Emits 'readings' (fleetId) after an ingest commits new rows: wakes the in-process worker. */
    ingestNotifier: EventEmitter;
  }
}

/** Request latency histogram and the registry behind GET /metrics. */
export default fp(
  async (app) => {
    app.decorate('metrics', new ServiceMetrics());
    app.decorate('ingestNotifier', new EventEmitter());
    app.addHook('onResponse', async (request, reply) => {
      const route = request.routeOptions.url ?? 'unmatched';
      app.metrics.requestDuration.observe(
        { method: request.method, route, status: String(reply.statusCode) },
        reply.elapsedTime / 1000,
      );
      if (route === '/v1/readings' && reply.statusCode >= 400)
        app.metrics.ingestFailures.inc({ status: String(reply.statusCode) });
    });
  },
  { name: 'metrics' },
);
