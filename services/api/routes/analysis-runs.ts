import type { FastifyPluginAsyncTypebox } from '@fastify/type-provider-typebox';
import { Type } from 'typebox';
import { AnalysisRuns } from '../../worker/analysis-runs.js';
import { NotFoundError } from '../errors.js';
import { assertFleetAccess, principalOf } from '../plugins/auth.js';
import { errorResponses, SECURITY } from '../schemas/common.js';
import { fleetScopeOf } from '../request-fleet.js';

const AnalysisRunSchema = Type.Object({
  runId: Type.String(),
  fleetId: Type.Union([Type.String(), Type.Null()]),
  status: Type.Union([Type.Literal('running'), Type.Literal('succeeded'), Type.Literal('failed')]),
  startedAt: Type.String({ format: 'date-time' }),
  finishedAt: Type.Union([Type.String({ format: 'date-time' }), Type.Null()]),
  vehiclesAnalysed: Type.Integer(),
  readingsAnalysed: Type.Integer(),
  vehiclesFailed: Type.Integer(),
  failures: Type.Array(Type.Object({ vehicleId: Type.String(), error: Type.String() })),
  openFindings: Type.Union([Type.Integer(), Type.Null()]),
  error: Type.Union([Type.String(), Type.Null()]),
  statusUrl: Type.String(),
});

export interface AnalysisRunsRouteOptions {
  leaseMs: number;
  batchSize: number;
}

/**
 * Explicit analysis runs: analyse every vehicle of the key's fleet that has new data, now.
 * A planner action: needs the `read` scope. Run status is kept by the process that runs it.
 */
const analysisRunsRoutes: FastifyPluginAsyncTypebox<AnalysisRunsRouteOptions> = async (app, opts) => {
  const runs = new AnalysisRuns(app.database, { leaseMs: opts.leaseMs, batchSize: opts.batchSize, logger: app.log });
  app.addHook('onClose', async () => runs.close());
  const view = (run: ReturnType<AnalysisRuns['start']>['run']) => ({
    ...run,
    statusUrl: `/v1/analysis/runs/${run.runId}`,
  });

  app.post(
    '/v1/analysis/runs',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['analysis'],
        summary: 'Analyse every vehicle with new data now',
        description:
          'With `wait=true` answers 200 when done, with the counts. Otherwise answers 202 at once with a status URL (Location header).',
        security: SECURITY,
        querystring: Type.Object({
          wait: Type.Boolean({ default: false }),
          fleet: Type.Optional(Type.String({ description: 'admin keys only: one fleet (default: every fleet)' })),
        }),
        response: { 200: AnalysisRunSchema, 202: AnalysisRunSchema, ...errorResponses(400, 401, 403) },
      },
    },
    async (request, reply) => {
      const principal = principalOf(request);
      const { run, done } = runs.start(fleetScopeOf(principal, request.query.fleet));
      if (request.query.wait) return view(await done);
      return reply.status(202).header('location', `/v1/analysis/runs/${run.runId}`).send(view(run));
    },
  );

  app.get(
    '/v1/analysis/runs/:runId',
    {
      onRequest: app.requireScope('read'),
      schema: {
        tags: ['analysis'],
        summary: 'Status of an analysis run',
        security: SECURITY,
        params: Type.Object({ runId: Type.String({ maxLength: 64 }) }),
        response: { 200: AnalysisRunSchema, ...errorResponses(401, 403, 404) },
      },
    },
    async (request) => {
      const run = runs.get(request.params.runId);
      if (!run) throw new NotFoundError(`no analysis run '${request.params.runId}' in this process`);
      const principal = principalOf(request);
      if (principal.fleetId !== null && run.fleetId !== principal.fleetId)
        assertFleetAccess(principal, run.fleetId ?? '(every fleet)');
      return view(run);
    },
  );
};

export default analysisRunsRoutes;
